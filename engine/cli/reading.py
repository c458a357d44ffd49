"""``tellwave reading``: what a reading file holds, its quality, levels and largest peaks."""

from __future__ import annotations

import math

from ._common import add_reading_options, add_readings_argument, reading_options, say, whole


def register(sub) -> None:
    """Add ``tellwave reading`` and its options."""
    p = sub.add_parser("reading", help="summarise a reading file: channels, quality, levels, peaks")
    add_readings_argument(p)
    add_reading_options(p)
    p.add_argument("--peaks", type=whole("--peaks", 0, 1000), default=10,
                   help="how many spectral peaks to list (default 10)")
    p.set_defaults(run=run)


def run(args) -> int:
    """Print a reading's channels, quality gates, levels and peaks; the exit code."""
    from .. import analysis
    from ..common.units import STANDARD_GRAVITY_M_S2
    from ..readings import describe_issue, load_reading

    reading = load_reading(args.reading, **reading_options(args))
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
        say(f"    velocity {lv.velocity_rms_mm_s:.3f} mm/s RMS ({lo:g}-{hi:g} Hz"
              + (", band cut by Fmax" if lv.band_truncated else "") + ")")
        if lv.acceleration_rms_g is not None:
            say(f"    acceleration {lv.acceleration_rms_g:.4f} g RMS, {lv.acceleration_peak_g:.4f} g peak")
        say(f"    crest factor {lv.crest_factor:.2f}, kurtosis {lv.kurtosis:.2f}, skewness {lv.skewness:.2f}")
        spec = analysis.amplitude_spectrum(ch.samples, reading.fs_hz, scaling="peak")
        peaks = analysis.find_peaks(spec, f_lo_hz=2 * spec.resolution_hz, min_snr=6.0, max_peaks=args.peaks)
        scale = STANDARD_GRAVITY_M_S2 if ch.quantity == "acceleration" else 1.0
        unit = "g" if ch.quantity == "acceleration" else ("m/s" if ch.quantity == "velocity" else "m")
        say(f"    largest spectral peaks (Hann window, resolution {spec.resolution_hz:.3g} Hz):")
        for p in sorted(peaks, key=lambda p: p.freq_hz):
            say(f"      {p.freq_hz:10.3f} Hz  {p.amplitude / scale:.4g} {unit} peak  "
                f"(SNR {20 * math.log10(p.snr):.0f} dB)")
    return 0
