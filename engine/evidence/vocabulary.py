"""The vocabulary of evidence: every fact kind, its fields, their types and units.

Rulebooks are checked against this table when they load, so a rule that
names a field no extractor produces is an error, not a rule that never fires.
Types are JSON Schema type names.
"""

from __future__ import annotations

CHANNEL_FIELDS = {
    "channel": ("string", "channel name in the reading"),
    "point": ("string", "measurement point id"),
    "direction": ("string", "horizontal, vertical or axial"),
    "location": ("string", "bearing or shaft the point sits at"),
    "location_shaft": ("string", "shaft the point's bearing carries"),
}

FACTS: dict[str, dict[str, tuple[str, str]]] = {
    "overall": CHANNEL_FIELDS | {
        "velocity_rms_mm_s": ("number", "velocity RMS in the ISO 20816-3 band, mm/s"),
        "accel_rms_g": ("number", "acceleration RMS, g"),
        "accel_peak_g": ("number", "acceleration peak, g"),
        "crest_factor": ("number", "peak / RMS of acceleration"),
        "kurtosis": ("number", "kurtosis of acceleration (3 for Gaussian)"),
        "skewness": ("number", "skewness of acceleration"),
        "band_truncated": ("boolean", "Fmax below 1000 Hz: the ISO value reads low"),
    },
    "tone": CHANNEL_FIELDS | {
        "name": ("string", "forcing frequency name: 1X, BPFO, GMF, 2xLF, ..."),
        "component": ("string", "shaft, bearing, mesh, belt, rotor or motor id"),
        "family": ("string", "shaft, bearing, gear, belt, rotor or electrical"),
        "shaft": ("string", "shaft whose speed the frequency follows"),
        "expected_hz": ("number", "forcing frequency at the refined speed, Hz"),
        "freq_hz": ("number", "measured peak frequency, Hz"),
        "amplitude_mm_s": ("number", "velocity amplitude, mm/s RMS"),
        "amplitude_g": ("number", "acceleration amplitude, g peak"),
        "snr_db": ("number", "peak over the local noise floor, dB"),
        "ratio_to_1x": ("number", "velocity amplitude over 1X of its shaft on this channel"),
    },
    "harmonic_series": CHANNEL_FIELDS | {
        "source": ("string", "1X, GMF, BPFO, vane pass, ..."),
        "component": ("string", "component id"),
        "shaft": ("string", "shaft id"),
        "fundamental_hz": ("number", "fundamental frequency, Hz"),
        "count": ("integer", "harmonics found, the fundamental included"),
        "checked": ("integer", "harmonics looked for below Fmax"),
        "highest_order": ("integer", "highest harmonic found"),
        "first_mm_s": ("number", "fundamental velocity, mm/s RMS (0 when absent)"),
        "first_g": ("number", "fundamental acceleration, g peak (0 when absent)"),
        "second_to_first": ("number", "2nd harmonic over the fundamental (velocity)"),
        "sustained_count": ("integer", "harmonics of order 3 and up at least 10 % of the fundamental"),
    },
    "subharmonics": CHANNEL_FIELDS | {
        "shaft": ("string", "shaft id"),
        "count": ("integer", "half orders (0.5X, 1.5X, ...) found"),
        "max_ratio_to_1x": ("number", "largest half order over 1X (velocity)"),
    },
    "nonsynchronous": CHANNEL_FIELDS | {
        "count": ("integer", "clear peaks that match no forcing frequency"),
        "largest_hz": ("number", "frequency of the largest of them, Hz"),
        "largest_mm_s": ("number", "its velocity, mm/s RMS"),
        "largest_to_1x": ("number", "its velocity over the driver's 1X"),
    },
    "sideband_family": CHANNEL_FIELDS | {
        "carrier": ("string", "GMF, 2xGMF, BPFI or 1X"),
        "component": ("string", "component of the carrier (the motor for pole-pass families)"),
        "carrier_hz": ("number", "carrier frequency, Hz"),
        "carrier_found": ("boolean", "a peak stands at the carrier"),
        "spacing": ("string", "what the spacing matches: 1X, pole pass"),
        "spacing_shaft": ("string", "the shaft whose speed the spacing matches"),
        "spacing_hz": ("number", "sideband spacing, Hz"),
        "count": ("integer", "sidebands found"),
        "pairs": ("integer", "orders found on both sides"),
        "max_order": ("integer", "highest sideband order found"),
        "sideband_to_carrier_db": ("number", "mean sideband over carrier, dB"),
    },
    "envelope_tone": CHANNEL_FIELDS | {
        "defect": ("string", "BPFO, BPFI, BSF or FTF"),
        "component": ("string", "bearing id"),
        "shaft": ("string", "shaft id"),
        "expected_hz": ("number", "defect rate at the refined speed, Hz (for BSF: 2 x BSF)"),
        "freq_hz": ("number", "measured fundamental, Hz (0 when only harmonics)"),
        "deviation_pct": ("number", "measured over expected, less 1, percent"),
        "harmonics_found": ("integer", "harmonics found in the squared envelope spectrum"),
        "harmonics_checked": ("integer", "harmonics looked for"),
        "first_snr_db": ("number", "fundamental over the local floor, dB"),
        "max_snr_db": ("number", "best harmonic over its local floor, dB"),
        "band_method": ("string", "kurtogram (band of highest spectral kurtosis) or wide (prewhitened signal above the defect harmonics)"),
        "band_lo_hz": ("number", "demodulation band, lower edge, Hz"),
        "band_hi_hz": ("number", "demodulation band, upper edge, Hz"),
        "band_kurtosis": ("number", "spectral kurtosis of the band"),
    },
    "load_zone_modulation": CHANNEL_FIELDS | {
        "defect": ("string", "BPFO, BPFI or BSF"),
        "component": ("string", "bearing id"),
        "band_method": ("string", "kurtogram or wide: which envelope view"),
        "modulation": ("string", "1X or FTF"),
        "modulation_hz": ("number", "modulation frequency, Hz"),
        "sideband_count": ("integer", "envelope sidebands found at defect harmonics +- modulation"),
        "depth": ("number", "sum of sideband pairs over their carrier (0 to 2)"),
        "line_snr_db": ("number", "the modulation frequency itself in the envelope, dB over floor"),
    },
    "impact_train": CHANNEL_FIELDS | {
        "rate_hz": ("number", "impact repetition rate, Hz"),
        "spacing_ms": ("number", "impact spacing, ms"),
        "periodicity": ("number", "normalised autocorrelation of the squared envelope at the spacing, 0 to 1"),
        "count": ("integer", "impacts detected"),
        "regularity_cv": ("number", "coefficient of variation of the impact intervals"),
        "impacts_per_rev": ("number", "impacts per revolution of the point's shaft"),
        "matched_name": ("string", "forcing frequency the rate matches, or none"),
        "matched_component": ("string", "its component, or none"),
        "match_error_pct": ("number", "rate over the matched frequency, less 1, percent"),
    },
    "once_per_rev_event": CHANNEL_FIELDS | {
        "shaft": ("string", "shaft id"),
        "revolutions": ("integer", "revolutions averaged"),
        "fm4": ("number", "kurtosis of the TSA difference signal (about 3 when healthy)"),
        "peak_to_rms": ("number", "peak over RMS of the TSA difference signal"),
        "peak_angle_deg": ("number", "shaft angle of the largest event, degrees from the record start"),
        "repeat_fraction": ("number", "share of revolutions whose largest spike is within 36 degrees of it"),
    },
    "direction_ratio": {
        "location": ("string", "bearing or shaft"),
        "location_shaft": ("string", "shaft the location carries"),
        "axial_to_radial": ("number", "axial over the larger radial overall velocity"),
        "axial_1x_to_radial": ("number", "axial 1X over the larger radial 1X"),
        "axial_2x_to_radial": ("number", "axial 2X over the larger radial 2X"),
        "horizontal_to_vertical": ("number", "horizontal over vertical overall velocity"),
        "channels": ("integer", "channels at the location"),
    },
    "acquisition": {
        "fmax_hz": ("number", "usable Fmax, sample rate / 2.56, Hz"),
        "highest_needed_hz": ("number", "highest forcing frequency that matters, Hz"),
        "fmax_ok": ("boolean", "Fmax covers it"),
        "resolution_hz": ("number", "spectral line spacing, Hz"),
        "needed_resolution_hz": ("number", "line spacing that separates the closest lines, Hz"),
        "resolution_for": ("string", "what sets it: the closest pair of lines or a sideband spacing"),
        "resolution_ok": ("boolean", "resolution separates them and the sidebands"),
        "revolutions": ("number", "revolutions of the slowest shaft in the record"),
        "revolutions_ok": ("boolean", "at least 10 revolutions of the slowest shaft"),
        "samples_per_cycle": ("number", "samples per cycle at the centre of the demodulation band"),
        "samples_per_cycle_ok": ("boolean", "at least 10 samples per cycle"),
        "suggested_fmax_hz": ("number", "Fmax that would cover every needed frequency, Hz"),
        "suggested_lines": ("integer", "lines that would give the needed resolution at that Fmax"),
        "speed_refined": ("boolean", "the running speed was found from 1X harmonics"),
        "speed_rpm": ("number", "running speed used, of the shaft named in speed_shaft"),
        "speed_shaft": ("string", "shaft the running speed refers to"),
    },
    "data_quality": {
        "channel": ("string", "channel name"),
        "issue": ("string", "clipping, dc_offset, drift, dropout, nonfinite, dead, too_short"),
        "value": ("number", "size of the problem (its unit depends on the issue)"),
        "blocking": ("boolean", "the channel could not be analysed"),
    },
    "machine": {
        "name": ("string", "machine name from its file"),
        "iso_group": ("integer", "ISO 20816-3 group (1 or 2; 0 when not stated)"),
        "support": ("string", "rigid or flexible ('' when not stated)"),
        "driver_rpm": ("number", "running speed of the driving shaft, rpm"),
        "gears": ("integer", "gear meshes in the train"),
        "belts": ("integer", "belt drives in the train"),
        "motors": ("integer", "induction motors in the train"),
    },
}

# Not measured on the reading itself: made from the stored history by engine.trend.facts.
FACTS["trend"] = {
    "point": ("string", "measurement point id"),
    "direction": ("string", "horizontal, vertical or axial"),
    "indicator": ("string", "what is trended: velocity_rms_mm_s, accel_peak_g, kurtosis, env_BPFO_db, ..."),
    "readings": ("integer", "readings in the history, this one included"),
    "baseline": ("number", "median of the first readings, in the indicator's unit"),
    "latest": ("number", "this reading's value, in the indicator's unit"),
    "change_pct": ("number", "latest over baseline, less 1, percent"),
    "rate_per_month": ("number", "least-squares slope over the history, indicator unit per month"),
    "iso_change_significant": ("boolean", "velocity changed by more than 25 % of the B/C boundary (ISO 20816-3)"),
    "projected_days": ("number", "projected days to the next zone boundary or limit (-1: no projection)"),
    "projection_to": ("string", "the boundary or limit projected to"),
}

COMMON_FIELDS = {"kind": ("string", "fact kind"), "id": ("string", "fact identity")}


def fields_of(kind: str) -> dict[str, tuple[str, str]]:
    """Fields a fact of ``kind`` carries, with type and meaning (KeyError if unknown)."""
    return COMMON_FIELDS | FACTS[kind]
