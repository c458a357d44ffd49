"""The vocabulary of evidence: every fact kind, its fields, their types and units.

Rulebooks are checked against this table when they load, so a rule that
names a field no extractor produces is an error, not a rule that never fires.
Besides these fields a fact may carry ``signs`` (``engine.evidence.signs``):
the observations it is made of, which the reasoning shares among the
hypotheses that explain them; rules never compare them.
Types are JSON Schema type names; the unit is the one the value is stated in
('' for counts, ratios, labels and flags). ``tellwave rulebook vocabulary``
prints the table.
"""

from __future__ import annotations

from typing import NamedTuple

from ..common.units import LEVEL_UNITS
from ..machine.kinematics import BEARING_DEFECTS, RATE_FAMILIES, RATE_NAMES
from ..machine.model import COUPLING_TYPES, DIRECTIONS
from ..machine.phase import RELATIONS as PHASE_RELATIONS
from ..readings.quality import CORRUPTING_ISSUES, ISSUE_NAMES


class F(NamedTuple):
    """One field of a fact kind."""

    type: str      # string, number, integer or boolean
    about: str
    unit: str = ""

CHANNEL_FIELDS = {
    "channel": F("string", "channel name in the reading", ""),
    "point": F("string", "measurement point id", ""),
    "direction": F("string", "horizontal, vertical or axial", ""),
    "location": F("string", "bearing or shaft the point sits at", ""),
    "location_shaft": F("string", "shaft the point's bearing carries", ""),
}

# velocity fields that are broadband levels, not one spectral line: a report that shows peak keeps
# them RMS (sqrt(2) x RMS is the peak of a sine only)
BROADBAND_VELOCITY_FIELDS = frozenset({"velocity_rms_mm_s", "baseline_mm_s", "latest_mm_s"})

FACTS: dict[str, dict[str, F]] = {
    "overall": CHANNEL_FIELDS | {
        "velocity_rms_mm_s": F("number", "velocity RMS in the ISO 20816-3 band, mm/s", "mm/s RMS"),
        "velocity_band_lo_hz": F("number", "lower edge of that band, Hz (2 or 10 by the shaft's speed)", "Hz"),
        "velocity_band_hi_hz": F("number", "upper edge of that band, Hz (1000, or Fmax below that)", "Hz"),
        "accel_rms_g": F("number", "acceleration RMS, g", "g RMS"),
        "accel_peak_g": F("number", "acceleration peak, g", "g peak"),
        "crest_factor": F("number", "peak / RMS of acceleration", ""),
        "kurtosis": F("number", "kurtosis of acceleration (3 for Gaussian)", ""),
        "skewness": F("number", "skewness of acceleration", ""),
        "band_truncated": F("boolean", "Fmax below 1000 Hz: the ISO value reads low", ""),
        "rms_frequency_hz": F("number", "acceleration RMS over 2 pi x the ISO band's velocity RMS: the frequency "
                              "of one tone with both levels (tens of Hz when running-speed lines carry the "
                              "vibration, kHz when a broadband floor where bearings ring does)", "Hz"),
        "ring_band_lo_hz": F("number", "lower edge of the kurtogram's band (Antoni 2007: where the impacts ring, "
                             "chosen on the prewhitened residual), Hz; 0 when there is none", "Hz"),
        "ring_band_hi_hz": F("number", "upper edge of that band, Hz; 0 when there is none", "Hz"),
        "ring_band_g": F("number", "acceleration RMS in that band, from the acceleration spectrum (not whitened), "
                         "g; 0 when there is no band", "g RMS"),
        "ring_band_kurtosis": F("number", "spectral kurtosis of that band (Antoni 2006: 0 for Gaussian noise, "
                                "large for impacts); 0 when there is no band", ""),
    },
    "tone": CHANNEL_FIELDS | {
        "name": F("string", "forcing frequency name: 1X, BPFO, GMF, 2xLF, ...", ""),
        "rate": F("string", "the rate the line was looked for at: the name, but 2xBSF for BSF (a ball defect "
                  "strikes both races once per spin)", ""),
        "component": F("string", "shaft, bearing, mesh, belt, rotor or motor id", ""),
        "family": F("string", "shaft, bearing, gear, belt, rotor or electrical", ""),
        "shaft": F("string", "shaft whose speed the frequency follows", ""),
        "expected_hz": F("number", "forcing frequency at the refined speed, Hz (for BSF: 2 x BSF)", "Hz"),
        "freq_hz": F("number", "measured peak frequency, Hz", "Hz"),
        "amplitude_mm_s": F("number", "velocity amplitude, mm/s RMS", "mm/s RMS"),
        "amplitude_g": F("number", "acceleration amplitude, g peak", "g peak"),
        "snr_db": F("number", "peak over the local noise floor, dB", "dB"),
        "ratio_to_1x": F("number", "velocity amplitude over 1X of its shaft on this channel", ""),
        "ratio_to_bearing_1x": F("number", "velocity amplitude over the largest 1X of its shaft among the channels "
                                 "at this channel's bearing (an axial channel's own 1X is often small)", ""),
        "shaft_order_within_tolerance": F("boolean", "an electrical rate with a shaft harmonic (1X to 10X) within "
                                          "a shaft line's precision (1.5 lines or 0.5 %) of it: the two cannot "
                                          "be told apart", ""),
    },
    "harmonic_series": CHANNEL_FIELDS | {
        "source": F("string", "1X, GMF, BPFO, vane pass, ...", ""),
        "component": F("string", "component id", ""),
        "shaft": F("string", "shaft id", ""),
        "fundamental_hz": F("number", "fundamental frequency, Hz (for BSF: 2 x BSF, the ball's impact rate)", "Hz"),
        "count": F("integer", "harmonics found, the fundamental included", ""),
        "checked": F("integer", "harmonics looked for below Fmax", ""),
        "highest_order": F("integer", "highest harmonic found", ""),
        "first_mm_s": F("number", "fundamental velocity, mm/s RMS (0 when absent)", "mm/s RMS"),
        "first_g": F("number", "fundamental acceleration, g peak (0 when absent)", "g peak"),
        "second_to_first": F("number", "2nd harmonic over the fundamental (velocity)", ""),
        "sustained_count": F("integer", "harmonics of order 3 and up at least 10 % of the fundamental", ""),
    },
    "subharmonics": CHANNEL_FIELDS | {
        "shaft": F("string", "shaft id", ""),
        "count": F("integer", "half orders (0.5X, 1.5X, ...) found", ""),
        "max_ratio_to_1x": F("number", "largest half order over 1X (velocity)", ""),
    },
    "nonsynchronous": CHANNEL_FIELDS | {
        "count": F("integer", "clear peaks that match no forcing frequency", ""),
        "largest_hz": F("number", "frequency of the largest of them, Hz", "Hz"),
        "largest_mm_s": F("number", "its velocity, mm/s RMS", "mm/s RMS"),
        "largest_to_1x": F("number", "its velocity over the driver's 1X", ""),
    },
    "sideband_family": CHANNEL_FIELDS | {
        "carrier": F("string", "GMF, 2xGMF, BPFI or 1X", ""),
        "component": F("string", "component of the carrier (the motor for pole-pass families)", ""),
        "carrier_hz": F("number", "carrier frequency, Hz", "Hz"),
        "carrier_found": F("boolean", "a peak stands at the carrier", ""),
        "spacing": F("string", "what the spacing matches: 1X, pole pass, or FTF (1X of a bearing's shaft)", ""),
        "spacing_shaft": F("string", "the shaft whose speed the spacing matches", ""),
        "spacing_hz": F("number", "sideband spacing, Hz", "Hz"),
        "count": F("integer", "sidebands found", ""),
        "pairs": F("integer", "orders found on both sides", ""),
        "max_order": F("integer", "highest sideband order found", ""),
        "sideband_to_carrier_db": F("number", "mean sideband over carrier, dB", "dB"),
        "sideband_to_carrier": F("number", "mean sideband over carrier, amplitude ratio (0 when no carrier)", ""),
    },
    "envelope_tone": CHANNEL_FIELDS | {
        "defect": F("string", "BPFO, BPFI, BSF or FTF", ""),
        "component": F("string", "bearing id", ""),
        "shaft": F("string", "shaft id", ""),
        "expected_hz": F("number", "defect rate at the refined speed, Hz (for BSF: 2 x BSF)", "Hz"),
        "freq_hz": F("number", "measured fundamental, Hz (0 when only harmonics)", "Hz"),
        "deviation_pct": F("number", "measured over expected, less 1, percent", "%"),
        "harmonics_found": F("integer", "harmonics found in the squared envelope spectrum", ""),
        "harmonics_checked": F("integer", "harmonics looked for", ""),
        "first_snr_db": F("number", "fundamental over the local floor, dB", "dB"),
        "max_snr_db": F("number", "best harmonic over its local floor, dB", "dB"),
        "harmonics_owned": F("integer", "harmonics no other defect family explains better", ""),
        "fundamental_owned": F("boolean", "the fundamental was found and no other family explains it better", ""),
        "ball_rate_on_shaft_order": F("boolean", "the bearing's ball defect rate (2 x BSF) lies within slip of a whole "
                                      "order of its shaft, where no ball family can be judged", ""),
        "shaft_seen": F("boolean", "the channel's point hears the bearings of the bearing's shaft "
                        "(Machine.shafts_heard_from: its own shaft, a shaft coupled to it, the other shaft of a "
                        "mesh on it; across a belt only while no channel of the reading sits on that shaft); "
                        "true without a point", ""),
        "chance_pct": F("number", "chance that unrelated lines of this envelope spectrum, at their density near the "
                        "family, would give it its fundamental and as many harmonics (100 without a fundamental)", "%"),
        "match_error_pct": F("number", "mean distance of the harmonics found from their expected frequencies, %", "%"),
        "strongest_channel": F("string", "channel where this family (same view) stands out most", ""),
        "strongest_location": F("string", "the bearing or shaft that channel's point sits at", ""),
        "below_strongest_db": F("number", "how far this channel's best harmonic is below that channel's, dB", "dB"),
        "rate_group": F("string", "the bearings whose rates of this defect chain within 1 % of each other with this "
                        "one's, ids sorted and joined by ', ' (three alike bearings are one group); empty if none", ""),
        "twin": F("string", "another bearing whose rate of the same defect lies within 1 % of this one's (one "
                  "model twice on a shaft): only where the family stands out can tell them apart; empty if none", ""),
        "band_method": F("string", "kurtogram (band of highest spectral kurtosis) or wide "
                                   "(prewhitened signal above the defect harmonics)", ""),
        "band_lo_hz": F("number", "demodulation band, lower edge, Hz", "Hz"),
        "band_hi_hz": F("number", "demodulation band, upper edge, Hz", "Hz"),
        "band_kurtosis": F("number", "spectral kurtosis of the band", ""),
        "alike_defect": F("string", "another defect of the same bearing (BPFO, BPFI or BSF) whose rate lies within "
                          "1 % of this one's (a ball's 2 x BSF beside BPFO): the lines alone cannot tell the two "
                          "apart; empty if none", ""),
    },
    "load_zone_modulation": CHANNEL_FIELDS | {
        "defect": F("string", "BPFO, BPFI or BSF", ""),
        "component": F("string", "bearing id", ""),
        "band_method": F("string", "kurtogram or wide: which envelope view", ""),
        "modulation": F("string", "1X or FTF", ""),
        "modulation_hz": F("number", "modulation frequency, Hz", "Hz"),
        "sideband_count": F("integer", "envelope sidebands found at defect harmonics +- modulation", ""),
        "depth": F("number", "sum of sideband pairs over their carrier (0 to 2)", ""),
        "line_snr_db": F("number", "the modulation frequency itself in the envelope, dB over floor", "dB"),
    },
    "impact_train": CHANNEL_FIELDS | {
        "read_from": F("string", "the signal the train was read from: residual (the record less its synchronous parts, "
                       "as the bearing envelope) or waveform (the prewhitened waveform with them, on a geared machine)",
                       ""),
        "rate_hz": F("number", "impact repetition rate, Hz", "Hz"),
        "spacing_ms": F("number", "impact spacing, ms", "ms"),
        "periodicity": F("number", "normalised autocorrelation of the squared envelope at the spacing, 0 to 1", ""),
        "count": F("integer", "impacts detected", ""),
        "regularity_cv": F("number", "coefficient of variation of the impact intervals", ""),
        "impacts_per_rev": F("number", "impacts per revolution of the point's shaft", ""),
        "matched_name": F("string", "forcing frequency the rate matches, or none", ""),
        "matched_component": F("string", "its component, or none", ""),
        "match_error_pct": F("number", "rate over the matched frequency, less 1, percent", "%"),
        "slower_than_name": F("string", "for a train matching nothing: the bearing defect rate (BPFO, BPFI, BSF) it "
                              "repeats at 1/2, 1/3 or 1/4 of, within 3 %, or none", ""),
        "slower_than_component": F("string", "that rate's bearing, or none", ""),
        "slower_by": F("integer", "how many times slower (2 to 4), 0 when none", ""),
        "slower_lines_between": F("number", "share of the train's harmonics j x rate, j 1 to 2k and not a multiple "
                                  "of k, with a clear envelope line (the best view): the train's own comb between "
                                  "the faster family's lines, 0 to 1; 0 when none", ""),
        "multiple_of_name": F("string", "for a train matching nothing: the bearing defect rate (BPFO, BPFI, BSF) it "
                              "repeats at 2 or 3 times, within 3 %, or none", ""),
        "multiple_of_component": F("string", "that rate's bearing, or none", ""),
        "multiple_by": F("integer", "how many times faster (2 or 3), 0 when none", ""),
    },
    "envelope_family": CHANNEL_FIELDS | {
        "rate_hz": F("number", "the family's fundamental: a clear line of the squared envelope spectrum, Hz (only on a "
                     "machine file that lists no rolling bearing; between 2 x the slowest and 13 x the fastest shaft, "
                     "on no forcing frequency, shaft harmonic or half order of the file)", "Hz"),
        "per_rev": F("number", "that rate over the speed of the point's shaft", ""),
        "harmonics_found": F("integer", "harmonics 1 to 5 of the rate with a clear line within 2 %, the fundamental "
                             "among them", ""),
        "harmonics_checked": F("integer", "harmonics 1 to 5 below the envelope spectrum's Fmax", ""),
        "first_snr_db": F("number", "the fundamental over the envelope spectrum's local floor, dB", "dB"),
        "band_method": F("string", "the envelope view: kurtogram or wide", ""),
        "band_lo_hz": F("number", "lower edge of the band demodulated, Hz", "Hz"),
        "band_hi_hz": F("number", "upper edge of the band demodulated, Hz", "Hz"),
    },
    "once_per_rev_event": CHANNEL_FIELDS | {
        "shaft": F("string", "shaft id", ""),
        "revolutions": F("integer", "revolutions averaged", ""),
        "fm4": F("number", "kurtosis of the TSA difference signal (about 3 when healthy)", ""),
        "peak_to_rms": F("number", "peak over RMS of the TSA difference signal", ""),
        "peak_angle_deg": F("number", "shaft angle of the largest event, degrees from the record start", "deg"),
        "repeat_fraction": F("number", "share of revolutions whose largest spike is within 36 degrees of it", ""),
        "order_tracked": F("boolean", "the turns were cut at the angle a mesh line's phase gives, the speed "
                           "having wandered during the record (order tracking), not at one constant speed", ""),
    },
    "direction_ratio": {
        "location": F("string", "bearing or shaft", ""),
        "location_shaft": F("string", "shaft the location carries", ""),
        "axial_to_radial": F("number", "axial over the larger radial overall velocity", ""),
        "axial_1x_to_radial": F("number", "axial 1X over the larger radial 1X", ""),
        "axial_2x_to_radial": F("number", "axial 2X over the larger radial 2X", ""),
        "horizontal_to_vertical": F("number", "horizontal over vertical overall velocity", ""),
        "channels": F("integer", "channels at the location", ""),
    },
    "acquisition": {
        "sample_rate_hz": F("number", "sample rate, Hz", "Hz"),
        "fmax_hz": F("number", "usable Fmax, sample rate / 2.56, Hz", "Hz"),
        "lines": F("integer", "spectral lines, samples / 2.56", ""),
        "resolution_hz": F("number", "spectral line spacing, Hz", "Hz"),
        "duration_s": F("number", "record length, s", "s"),
        "slowest_shaft": F("string", "the slowest shaft of the machine", ""),
        "revolutions": F("number", "revolutions of the slowest shaft in the record", ""),
        "fastest_shaft_hz": F("number", "1X of the fastest shaft, Hz", "Hz"),
        "highest_gmf_hz": F("number", "highest gear mesh frequency, Hz (0 without gears)", "Hz"),
        "highest_pass_hz": F("number", "highest vane or blade pass frequency, Hz (0 without rotors)", "Hz"),
        "highest_belt_pass_hz": F("number", "highest belt pass frequency, Hz (0 without belts)", "Hz"),
        "highest_race_hz": F("number", "highest BPFI or BPFO, Hz (0 without bearings)", "Hz"),
        "highest_rotor_bar_hz": F("number", "highest rotor bar pass frequency, Hz (0 when not known)", "Hz"),
        "twice_line_hz": F("number", "twice line frequency, Hz (0 without motors)", "Hz"),
        "closest_gap_hz": F("number", "gap between the two closest discrete lines below Fmax, Hz (0 if none)", "Hz"),
        "closest_pair": F("string", "the two closest lines", ""),
        "sideband_spacing_hz": F("number", "tightest sideband spacing to resolve, Hz (0 if none)", "Hz"),
        "sideband_for": F("string", "what that spacing belongs to", ""),
        "envelope_centre_hz": F("number", "centre of the highest demodulation band chosen, Hz (0 if none)", "Hz"),
        "samples_per_cycle": F("number", "samples per cycle at that centre (0 if none)", ""),
        "speed_refined": F("boolean", "the running speed was found from 1X harmonics", ""),
        "speed_rpm": F("number", "running speed used, of the shaft named in speed_shaft", "rpm"),
        "speed_shaft": F("string", "shaft the running speed refers to", ""),
        "unplaced_channels": F("integer", "analysed channels that name no measurement point", ""),
        "unplaced_names": F("string", "those channels' names, comma separated ('' when every channel names one)", ""),
    },
    "speed_check": {
        "shaft": F("string", "shaft the speeds refer to", ""),
        "stated_rpm": F("number", "speed the reading states, carried from the driving shaft to this shaft by the "
                                  "machine's ratios (0 when it states none)", "rpm"),
        "stated_driver_rpm": F("number", "speed the reading states, of the driving shaft (0 when it states none)",
                               "rpm"),
        "driver": F("string", "the driving shaft: the machine file's shaft whose speed is stated", ""),
        "nominal_rpm": F("number", "speed of that shaft in the machine file", "rpm"),
        "measured_rpm": F("number", "speed used by the analysis", "rpm"),
        "source": F("string", "where the speed used came from: 1X harmonics, bearing tones or stated", ""),
        "harmonics": F("integer", "shaft harmonic (or tone) lines that agreed on the speed", ""),
        "shared_with": F("string", "bearing rates whose comb explained the shaft's lines as well as its 1X did, "
                         "so they did not measure the speed ('' when none)", ""),
        "deviation_pct": F("number", "speed used against the stated (else nominal) speed, %", "%"),
        "abs_deviation_pct": F("number", "size of that deviation, %", "%"),
        "one_x_found": F("boolean", "a line stands at 1X in the loudest channel on this shaft (at its speed), "
                                    "where the fields below are measured", ""),
        "one_x_elsewhere_db": F("number", "the tallest 1X line (at the speed used) over its floor among the "
                                          "shaft's other channels (0 when none stands three times its floor)", "dB"),
        "odd_order_lines": F("integer", "lines at 1X, 3X, 5X, 7X, 9X in the loudest channel", ""),
        "half_order_lines": F("integer", "lines at 0.5X, 1.5X, 2.5X, 3.5X, 4.5X in the loudest channel that no "
                                         "other line of the machine explains", ""),
        "half_to_one_x": F("number", "0.5X line over the 1X line (100 when 0.5X stands and 1X does not)", ""),
        "double_speed_lines": F("integer", "harmonics of twice the speed (2X, 4X .. 10X) that stand out and "
                                           "no other line of the machine explains", ""),
        "half_x_snr_db": F("number", "the 0.5X line over its local floor, dB (0 when none stands clear)", "dB"),
        "half_x_window_pct": F("number", "how far from 0.5X a line is still taken for it (1.5 lines or 0.5 %), "
                               "% of 0.5X", "%"),
        "two_x_snr_db": F("number", "the 2X line over its local floor, dB (0 when none stands clear)", "dB"),
        "odd_to_two_x": F("number", "largest line at 1X, 3X, 5X, 7X or 9X over the 2X line (0 when none stands; "
                                    "100 when they do and 2X does not)", ""),
        "near_family_lines": F("integer", "harmonics (1X to 10X) of the strongest shaft family within 5 % of the "
                                          "stated speed that stand out, each within one line of its order", ""),
        "far_family_lines": F("integer", "the same for the strongest shaft family 5 to 30 % away from the stated "
                                         "speed (another shaft's family left out)", ""),
        "near_family_chance_pct": F("number", "chance that unrelated lines at their density give the near family as "
                                              "many harmonics anywhere in its search, % (100 when none)", "%"),
        "far_family_chance_pct": F("number", "the same for the far family, %", "%"),
        "near_one_x_db": F("number", "tallest line within 5 % of the stated 1X over its local floor, dB (0 when "
                                     "none stands clear)", "dB"),
        "far_one_x_db": F("number", "the far family's 1X line over its local floor, dB (0 when its 1X does not "
                                    "stand clear)", "dB"),
        "far_over_near_db": F("number", "far_one_x_db less near_one_x_db, dB", "dB"),
        "family_rpm": F("number", "the 1X of that far family (0 when none stands)", "rpm"),
        "family_deviation_pct": F("number", "that 1X against the stated (else nominal) speed, % (0 when none)", "%"),
        "abs_family_deviation_pct": F("number", "size of that deviation, %", "%"),
        "allowed_low_rpm": F("number", "lowest speed the machine's drive allows this shaft (0 when the "
                                       "machine file fixes none)", "rpm"),
        "allowed_high_rpm": F("number", "highest speed the machine's drive allows this shaft (0 when the "
                                        "machine file fixes none)", "rpm"),
        "allowed_by": F("string", "what sets that range: the machine file's speed range or its line-fed "
                                  "motors ('' when nothing does)", ""),
    },
    "data_quality": {
        "channel": F("string", "channel name", ""),
        "issue": F("string", "clipping, dc_offset, drift, dropout, nonfinite, dead, out_of_range, "
                             "implausible_level, implausible_spectrum, implausible_slope, too_short", ""),
        "value": F("number", "size of the problem (its unit depends on the issue)", ""),
        "blocking": F("boolean", "the channel could not be analysed", ""),
        "corrupting": F("boolean", "the issue makes the channel's samples false, not just its scale ("
                                   f"{', '.join(CORRUPTING_ISSUES)}): the channel is left out while another "
                                   "channel is free of them", ""),
        "left_out": F("boolean", "the channel was left out of the analysis and the reading's other channels "
                                 "diagnosed without it (a corrupting issue while another channel is free of them)", ""),
        "point": F("string", "the channel's measurement point ('' when it names none)", ""),
        "location": F("string", "the bearing or part the channel's point sits at ('' when it names none)", ""),
        "location_channels": F("integer", "channels analysed at that bearing or part (0: no channel of this "
                                          "reading is left there)", ""),
    },
    "machine": {
        "name": F("string", "machine name from its file", ""),
        "iso_group": F("integer", "ISO 20816-3 group (1 or 2; 0 when not stated)", ""),
        "support": F("string", "rigid or flexible ('' when not stated)", ""),
        "driver_rpm": F("number", "running speed of the driving shaft, rpm", "rpm"),
        "gears": F("integer", "gear meshes in the train", ""),
        "belts": F("integer", "belt drives in the train", ""),
        "motors": F("integer", "induction motors in the train", ""),
    },
    "drive_link": {
        "component": F("string", "the coupling's or belt drive's id", ""),
        "link": F("string", "coupling or belt", ""),
        "type": F("string", "the coupling's type (flexible, jaw, tyre, pin, grid, gear, disc, rigid, fluid, "
                            "unknown), or belt", ""),
        "shaft": F("string", "the shaft on this side of the link", ""),
        "other_shaft": F("string", "the shaft across the link", ""),
    },
    "overhung_rotor": {
        "component": F("string", "the rotor's id", ""),
        "shaft": F("string", "the shaft that carries it outboard of its bearings", ""),
        "type": F("string", "impeller or fan", ""),
    },
}

# Not measured on the samples: 1X phase readings the sidecar or route states (engine.evidence.phase).
FACTS["phase_1x"] = {
    "point": F("string", "the point (or bearing) the phase reading names", ""),
    "location": F("string", "bearing or shaft the reading sits at", ""),
    "location_shaft": F("string", "shaft the reading's bearing carries", ""),
    "direction": F("string", "horizontal, vertical or axial", ""),
    "phase_deg": F("number", "1X phase against the once-per-revolution mark, 0-360 deg (mean of repeats)", "deg"),
    "amplitude_mm_s": F("number", "1X velocity read with the phase, mm/s RMS (as stated)", "mm/s RMS"),
    "readings": F("integer", "phase readings given for this point and direction", ""),
    "spread_deg": F("number", "largest difference between those readings, 0-180 deg (0 for one)", "deg"),
    "measured_channel": F("string", "the reading's channel at that point and direction ('' when none)", ""),
    "measured_1x_mm_s": F("number", "1X of the point's shaft that channel measures, mm/s RMS (0 when no 1X line "
                          "stands; left out without a channel there or when its scale is doubted)", "mm/s RMS"),
    "amplitude_factor": F("number", "the stated 1X amplitude and the measured one, the larger over the smaller "
                          "(1 when they agree; left out unless both are there)", ""),
}
FACTS["phase_difference"] = {
    "relation": F("string", "which pair: horizontal-vertical, across coupling, end to end", ""),
    "direction": F("string", "the pair's direction (radial for horizontal-vertical)", ""),
    "location": F("string", "bearing of the first reading", ""),
    "location_shaft": F("string", "shaft of the first reading", ""),
    "first_direction": F("string", "direction of the first reading", ""),
    "other_location": F("string", "bearing of the second reading", ""),
    "other_shaft": F("string", "shaft of the second reading", ""),
    "other_direction": F("string", "direction of the second reading", ""),
    "difference_deg": F("number", "1X phase difference folded to 0-180 deg", "deg"),
    "from_quadrature_deg": F("number", "how far that difference is from 90 deg, 0-90 deg", "deg"),
    "mirrored": F("boolean", "the same pair seen from the other side of a coupling", ""),
    "coupling": F("string", "the coupling between the two, across a coupling (else empty)", ""),
}

# Not measured on the reading itself: made from the stored history by engine.trend.facts.
FACTS["trend"] = {
    "point": F("string", "measurement point id", ""),
    "direction": F("string", "horizontal, vertical or axial", ""),
    "indicator": F("string", "what is trended: velocity_rms_mm_s, accel_peak_g, kurtosis, env_BPFO_db, ...", ""),
    "readings": F("integer", "readings in the history, this one included", ""),
    "baseline": F("number", "median of the first readings, in the indicator's unit", ""),
    "latest": F("number", "this reading's value, in the indicator's unit", ""),
    "change_pct": F("number", "latest over baseline, less 1, percent", "%"),
    "rate_per_month": F("number", "least-squares slope of the latest 4 readings, indicator unit per month", ""),
    "iso_change_significant": F("boolean", "velocity changed by more than 25 % of the B/C boundary (ISO 20816-3)", ""),
    "projected_days": F("number", "projected days to the next zone boundary or limit (-1: no projection)", ""),
    "projection_to": F("string", "the boundary or limit projected to", ""),
    "projected_low_days": F("number", "early end of the projection's 80 % interval, days (-1: no projection)", ""),
    "projected_high_days": F("number", "late end of the projection's 80 % interval, days (-1: none or open)", ""),
    "degradation_began": F("boolean", "the projection starts where the trend found degradation began", ""),
    "readings_since_onset": F("integer", "readings the projection rests on since degradation began", ""),
    "projected_act_by_days": F("number", "the projection's time to act on: the best expected score over its draws, "
                                         "days (-1: none; remaining-life model only)", ""),
    "degradation_under_way": F("boolean", "the trend says degradation is under way: the latest readings stand the "
                                          "rise ratio of rulebooks/trend/onset.yaml times their healthy level or more",
                               ""),
    "risen_fold": F("number", "how many times its healthy level the latest reading stands when degradation is under "
                              "way (0 otherwise)", ""),
    "change_db": F("number", "latest less baseline for an indicator in dB (0 for others)", "dB"),
    "indicator_name": F("string", "the indicator as reports name it: band 2000-6000 Hz, g RMS", ""),
    "projection_boundary": F("string", "what the projection runs to: A/B, B/C, C/D (ISO 20816-3) or limit", ""),
    "baseline_mm_s": F("number", "the baseline of a broadband velocity (overall, a site's velocity band); 0 for others",
                       "mm/s RMS"),
    "latest_mm_s": F("number", "this reading's broadband velocity (overall, a site's velocity band); 0 for others",
                     "mm/s RMS"),
    "indicator_words": F("string", "the indicator named for a sentence: a velocity without its unit (velocity)",
                         ""),
    "projection_words": F("string", "what the projection runs to, for a sentence: a velocity's target without its "
                                    "level (zone boundary C/D, alarm danger level overall)", ""),
}

COMMON_FIELDS = {"kind": F("string", "fact kind", ""), "id": F("string", "fact identity", "")}

# Units of an absolute level (``engine.common.units.LEVEL_UNITS``): a value in one of them is the samples'
# size times a calibration (unit, sensor sensitivity, recorder gain, scale), so a wrong calibration
# makes it wrong by the same factor. Every other unit is scale-free: frequencies, times, angles and
# speeds do not move when every sample is multiplied by one factor, and dB over a floor,
# percentages, ratios, counts, kurtosis and crest factor do not change. A channel whose scale the
# quality gates doubt (``engine.readings.SCALE_ISSUES``) has its level fields left out of its
# facts (None). tests/evidence checks that every unit here is one or the other.
SCALE_FREE_UNITS = frozenset({"", "Hz", "dB", "%", "ms", "s", "deg", "rpm"})

# The fields whose values come from a known set, each set taken from where the names are made, so a
# rulebook that compares one with a misspelled value ('vanepass') is refused when it loads instead of
# never firing. Keyed by field for every kind that has it, or by "kind.field" where the same field
# name means something else elsewhere. Fault ids come from the loaded rulebook itself
# (engine.reasoning.rulebook checks a fault map's keys against its ``from`` field here).
SIDEBAND_CARRIERS = ("GMF", "2xGMF", "BPFI", "1X")          # as engine/evidence/sidebands.py names them
SIDEBAND_SPACINGS = ("1X", "pole pass", "FTF")              # the same
QUALITY_ISSUES = tuple(ISSUE_NAMES)                          # every issue the quality gates name
KNOWN_VALUES: dict[str, tuple[str, ...]] = {
    "direction": DIRECTIONS,
    "tone.name": RATE_NAMES,
    "tone.rate": RATE_NAMES + ("2xBSF",),
    "tone.family": RATE_FAMILIES,
    "harmonic_series.source": RATE_NAMES,
    "impact_train.matched_name": RATE_NAMES + ("none",),
    "impact_train.slower_than_name": ("BPFO", "BPFI", "BSF", "none"),
    "impact_train.multiple_of_name": ("BPFO", "BPFI", "BSF", "none"),
    "impact_train.read_from": ("residual", "waveform"),
    "envelope_tone.defect": BEARING_DEFECTS,
    "envelope_tone.alike_defect": ("BPFO", "BPFI", "BSF", ""),
    "load_zone_modulation.defect": BEARING_DEFECTS,
    "load_zone_modulation.modulation": ("1X", "FTF"),
    "sideband_family.carrier": SIDEBAND_CARRIERS,
    "sideband_family.spacing": SIDEBAND_SPACINGS,
    "data_quality.issue": QUALITY_ISSUES,
    "phase_difference.relation": PHASE_RELATIONS,
    "phase_difference.direction": DIRECTIONS + ("radial",),
    "phase_difference.first_direction": DIRECTIONS,
    "phase_difference.other_direction": DIRECTIONS,

    "drive_link.link": ("coupling", "belt"),
    "drive_link.type": COUPLING_TYPES + ("belt",),
}

# Fields a rule's pattern on the kind must constrain, with why: facts of one kind read from different
# signals, where a pattern that leaves the field open sees both and counts one impact train twice
# (a geared machine's bearing impacts appear in the residual and again in the waveform).
MUST_CHOOSE: dict[str, tuple[str, str]] = {
    "impact_train": ("read_from", "impact trains are read from two signals: say read_from: residual (the record "
                                  "less its synchronous parts, where a bearing's impacts are) or waveform (with "
                                  "them, where a tooth struck once per turn is)"),
}


def known_values(kind: str, name: str) -> tuple[str, ...] | None:
    """The values field ``name`` of a ``kind`` fact can take, or None when any string can occur
    (ids of points, channels and components, which each machine file names)."""
    if kind not in FACTS or name not in FACTS[kind]:
        return None
    return KNOWN_VALUES.get(f"{kind}.{name}", KNOWN_VALUES.get(name))

def fields_of(kind: str) -> dict[str, F]:
    """Fields a fact of ``kind`` carries, with type and meaning (KeyError if unknown)."""
    return COMMON_FIELDS | FACTS[kind]

def level_fields(kind: str) -> tuple[str, ...]:
    """Fields of ``kind`` that hold an absolute level (a unit of ``LEVEL_UNITS``)."""
    return tuple(name for name, f in FACTS.get(kind, {}).items() if f.unit in LEVEL_UNITS)
