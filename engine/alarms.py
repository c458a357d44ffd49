"""Site alarms per point, judged on one analysed reading (advice: a site's limit, never a fault).

For each alarm of the machine (its file's and the site alarm files') and each
channel at the alarm's point, the measured value is the overall level of the
analysis, or the RMS of the analysed Hann spectrum in the band's ranges with
the window's noise-bandwidth correction (``analysis.bands``). An alarm is
``danger`` at or above its danger level, ``alert`` at or above its alert
level, else ``within``. A band that reaches past the analysed spectrum's last line
(half the sample rate, above the acquisition's Fmax of sample rate / 2.56) is measured
up to that line only, and says so (``measured_to_hz``); one wholly past it has no
value. Alarms never touch the reasoning or its certainty.
"""

from __future__ import annotations

from .analysis.bands import spectrum_band_rms
from .analysis.levels import STANDARD_GRAVITY_M_S2
from .analysis.result import Analysis, ChannelAnalysis
from .machine.alarms import Alarm, band_ranges_hz
from .readings.quality import left_out_words

STATES = ("within", "alert", "danger")


def state_of(value: float | None, alert: float, danger: float) -> str | None:
    """``danger``, ``alert`` or ``within`` for a measured value; None when there is no value."""
    if value is None:
        return None
    return "danger" if value >= danger else "alert" if value >= alert else "within"


def _value(alarm: Alarm, ch: ChannelAnalysis, ranges) -> float | None:
    lv = ch.levels
    if alarm.band == "overall":
        return {"velocity_mm_s_rms": lv.velocity_rms_mm_s, "acceleration_g_rms": lv.acceleration_rms_g,
                "acceleration_g_peak": lv.acceleration_peak_g}[alarm.quantity]
    if alarm.quantity == "velocity_mm_s_rms":
        return spectrum_band_rms(ch.velocity, ranges)
    rms = spectrum_band_rms(ch.spectrum, ranges)          # m/s^2
    return None if rms is None else rms / STANDARD_GRAVITY_M_S2


def judge_alarms(analysis: Analysis, untrusted=()) -> tuple[dict, ...]:
    """Every alarm of ``analysis.machine`` on every channel at its point: the measured value, the
    ranges it was measured in, the levels and the state. A channel in ``untrusted`` (its scale is not
    trusted: no level means anything) gets no value and no state; so does a channel the analysis left out
    for a corrupting issue (``why_no_value``: not judged, and why)."""
    out = []
    for alarm in analysis.machine.alarms:
        for ch in analysis.channels:
            if ch.point is None or ch.point.id != alarm.point:
                continue
            ranges = band_ranges_hz(alarm, analysis.machine, analysis.speeds_hz, ch.spectrum.resolution_hz)
            value = None if ch.name in untrusted else _value(alarm, ch, ranges)
            fmax = ch.spectrum.fmax_hz
            # a band past the spectrum's last line is measured up to it only: its value says nothing of the rest
            short = value is not None and any(hi > fmax for _, hi in ranges)
            out.append({
                "point": alarm.point, "channel": ch.name, "band": alarm.band, "quantity": alarm.quantity,
                "unit": alarm.unit, "indicator": alarm.indicator,
                "ranges_hz": [[round(lo, 3), round(hi, 3)] for lo, hi in ranges],
                "value": value, "alert": alarm.alert, "danger": alarm.danger,
                "state": state_of(value, alarm.alert, alarm.danger),
                "why_no_value": None if value is not None else (
                    "scale not trusted" if ch.name in untrusted else "band above the analysed spectrum"
                    if ranges else "no level of this quantity"),
                "source": alarm.source, "set_at": alarm.where,
                "measured_to_hz": round(fmax, 3) if short else None,
            })
        # a channel left out for a corrupting issue at the alarm's point: shown, not judged on false samples
        for lo in analysis.left_out_channels:
            if lo.point is None or lo.point.id != alarm.point:
                continue
            why = left_out_words(lo.issues)
            out.append({
                "point": alarm.point, "channel": lo.name, "band": alarm.band, "quantity": alarm.quantity,
                "unit": alarm.unit, "indicator": alarm.indicator,
                "ranges_hz": [[round(lo_hz, 3), round(hi_hz, 3)] for lo_hz, hi_hz in band_ranges_hz(
                    alarm, analysis.machine, analysis.speeds_hz,
                    lo.velocity.resolution_hz if lo.velocity is not None else analysis.fs_hz / analysis.n_samples)],
                "value": None, "alert": alarm.alert, "danger": alarm.danger, "state": None,
                "why_no_value": f"not judged: channel left out ({why})",
                "source": alarm.source, "set_at": alarm.where, "measured_to_hz": None,
            })
    return tuple(out)


def crossed(results) -> list[dict]:
    """The alarms of ``results`` in alert or danger, danger first."""
    return sorted((r for r in results if r["state"] in ("alert", "danger")),
                  key=lambda r: (r["state"] != "danger", r["point"], r["band"]))
