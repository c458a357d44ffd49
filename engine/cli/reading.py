"""``tellwave reading``: what a reading file holds, its quality, levels and largest peaks."""

from __future__ import annotations

import math

from ._common import (
    add_reading_options,
    add_readings_argument,
    add_site_option,
    add_units_options,
    reading_options,
    say,
    whole,
)


def register(sub) -> None:
    """Add ``tellwave reading`` and its options."""
    p = sub.add_parser("reading", help="summarise a reading file: channels, quality, levels, peaks")
    add_readings_argument(p)
    add_reading_options(p)
    p.add_argument("--peaks", type=whole("--peaks", 0, 1000), default=10,
                   help="how many spectral peaks to list (default 10)")
    add_units_options(p)
    add_site_option(p)
    p.set_defaults(run=run)


def run(args) -> int:
    """Print a reading's channels, quality gates, levels and peaks; the exit code."""
    from .. import analysis
    from ..common.errors import UsageError
    from ..common.units import PEAK_PER_RMS_SINE, STANDARD_GRAVITY_M_S2
    from ..readings import describe_issue, load_reading
    from ._common import rulebook, shown_units

    units = shown_units(args, rulebook(args).units if args.site else None)
    reading = load_reading(args.reading, **reading_options(args))
    shaft_hz = reading.speed_rpm / 60 if reading.speed_rpm else None
    if units.frequency == "orders" and shaft_hz is None:
        raise UsageError(f"{reading.source}: orders need a shaft speed: give --rpm or the sidecar's speed_rpm "
                         "(or --frequency-unit hz or cpm)")

    def freq(hz: float) -> str:
        """A peak's frequency in the chosen unit (orders of the stated speed), to a thousandth of a Hz's worth."""
        if units.frequency == "hz":
            return f"{hz:10.3f} Hz"
        value = units.frequency_value(hz, shaft_hz)
        return f"{value:.1f} CPM" if units.frequency == "cpm" else f"{value:.3f}X"
    say(f"{reading.source}: {len(reading.channels)} channel(s), {reading.fs_hz:g} Hz, "
          f"{reading.n_samples} samples ({reading.duration_s:.3f} s)"
          + (f", speed {reading.speed_rpm:g} rpm" if reading.speed_rpm else ""))
    for ch in reading.channels:
        where = " ".join(filter(None, [ch.point, ch.direction]))
        say(f"\n  {ch.name} ({ch.quantity}, recorded in {ch.unit}){'  at ' + where if where else ''}")
        issues = reading.issues_for(ch.name)
        for q in issues:
            say(f"    quality: {describe_issue(q)}")
        if any(q.blocking for q in issues):
            continue
        lv = analysis.overall_levels(ch.samples, reading.fs_hz, ch.quantity, reading.speed_rpm)
        lo, hi = lv.velocity_band_hz
        overall = (f"{lv.velocity_rms_mm_s:.3f} mm/s RMS" if units.velocity == "mm/s-rms" else
                   units.velocity_text(lv.velocity_rms_mm_s, line=False))      # broadband: stays RMS
        band = (f"{lo:g}-{hi:g} Hz" if units.frequency == "hz" else
                f"{units.frequency_text(lo, shaft_hz)} to {units.frequency_text(hi, shaft_hz)}")
        say(f"    velocity {overall} ({band}" + (", band cut by Fmax" if lv.band_truncated else "") + ")")
        if lv.acceleration_rms_g is not None:
            say(f"    acceleration {lv.acceleration_rms_g:.4f} g RMS, {lv.acceleration_peak_g:.4f} g peak")
        say(f"    crest factor {lv.crest_factor:.2f}, kurtosis {lv.kurtosis:.2f}, skewness {lv.skewness:.2f}")
        spec = analysis.amplitude_spectrum(ch.samples, reading.fs_hz, scaling="peak")
        peaks = analysis.find_peaks(spec, f_lo_hz=2 * spec.resolution_hz, min_snr=6.0, max_peaks=args.peaks)
        scale = STANDARD_GRAVITY_M_S2 if ch.quantity == "acceleration" else 1.0
        unit = "g" if ch.quantity == "acceleration" else ("m/s" if ch.quantity == "velocity" else "m")
        resolution = (f"{spec.resolution_hz:.3g} Hz" if units.frequency == "hz" else
                      units.frequency_text(spec.resolution_hz, shaft_hz))
        say(f"    largest spectral peaks (Hann window, resolution {resolution}):")
        for p in sorted(peaks, key=lambda p: p.freq_hz):
            where = freq(p.freq_hz)
            if ch.quantity == "velocity" and units.velocity != "mm/s-rms":    # one line: sqrt(2) x RMS is its peak
                size = units.velocity_text(p.amplitude * 1e3 / PEAK_PER_RMS_SINE, line=True)
            else:
                size = f"{p.amplitude / scale:.4g} {unit} peak"
            say(f"      {where:>13}  {size}  (SNR {20 * math.log10(p.snr):.0f} dB)")
    return 0
