"""What each extractor should see when a simulated fault is there: one feature per extractor.

These are the measuring sticks of the detection and false-alarm rates, not
diagnostic rules (those live in rulebooks/). Thresholds are common practice.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass


@dataclass(frozen=True)
class Feature:
    name: str
    machine: str       # key of bench/evidence_rates.MACHINES
    fault: str
    component: str
    test: Callable[[dict], bool]

    def present(self, facts: list[dict]) -> bool:
        return any(self.test(f) for f in facts)


def _envelope(defect, bearing):
    return lambda f: (f["kind"] == "envelope_tone" and f["defect"] == defect and f["component"] == bearing
                      and f["location"] == bearing and f["first_snr_db"] >= 15 and f["harmonics_found"] >= 3)


FEATURES = (
    Feature("envelope_tone BPFO", "rw2", "outer-race", "pump_nde", _envelope("BPFO", "pump_nde")),
    Feature("envelope_tone BPFI", "rw2", "inner-race", "pump_nde", _envelope("BPFI", "pump_nde")),
    Feature("envelope_tone BSF", "rw2", "rolling-element", "pump_nde", _envelope("BSF", "pump_nde")),
    Feature("load_zone_modulation BPFI at 1X", "rw2", "inner-race", "pump_nde",
            lambda f: f["kind"] == "load_zone_modulation" and f["defect"] == "BPFI" and f["component"] == "pump_nde"
            and f["modulation"] == "1X" and f["sideband_count"] >= 2),
    Feature("impact_train at BPFO", "rw2", "outer-race", "pump_nde",
            lambda f: f["kind"] == "impact_train" and f["matched_name"] == "BPFO" and f["periodicity"] >= 0.3),
    Feature("harmonic_series 1X (looseness)", "rw2", "looseness-rotating", "pump",
            lambda f: f["kind"] == "harmonic_series" and f["source"] == "1X" and f["count"] >= 7
            and f["sustained_count"] >= 4),
    Feature("subharmonics", "rw2", "looseness-rotating", "pump",
            lambda f: f["kind"] == "subharmonics" and f["count"] >= 2 and f["max_ratio_to_1x"] >= 0.1),
    Feature("tone 1X (unbalance)", "rw2", "unbalance", "pump",
            lambda f: f["kind"] == "tone" and f["name"] == "1X" and f["amplitude_mm_s"] >= 2.5),
    Feature("direction_ratio axial (misalignment)", "rw2", "misalignment-angular", "pump",
            lambda f: f["kind"] == "direction_ratio" and f["axial_to_radial"] >= 1.0),
    Feature("harmonic_series 2X>1X (misalignment)", "rw2", "misalignment-angular", "pump",
            lambda f: f["kind"] == "harmonic_series" and f["source"] == "1X" and f["second_to_first"] >= 1.0
            and f["first_mm_s"] >= 1.0),
    Feature("sideband_family GMF at pinion 1X", "ct1", "gear-eccentricity", "bevel_stage",
            lambda f: f["kind"] == "sideband_family" and f["carrier"] == "GMF" and f["spacing_shaft"] == "gear_input"
            and f["pairs"] >= 2),
    Feature("once_per_rev_event (tooth)", "ct1", "gear-tooth", "bevel_stage",
            lambda f: f["kind"] == "once_per_rev_event" and f["shaft"] == "gear_input" and f["fm4"] >= 6
            and f["repeat_fraction"] >= 0.8),
    Feature("harmonic_series GMF (wear)", "ct1", "gear-wear", "bevel_stage",
            lambda f: f["kind"] == "harmonic_series" and f["source"] == "GMF" and f["second_to_first"] >= 0.7),
    Feature("tone belt pass", "bw1", "belt", "vbelt",
            lambda f: f["kind"] == "harmonic_series" and f["source"] == "belt pass" and f["count"] >= 3),
    Feature("tone vane pass", "rw2", "vane-pass", "impeller",
            lambda f: f["kind"] == "tone" and f["name"] == "vane pass" and f["ratio_to_1x"] >= 1.5),
    Feature("tone 2xLF (stator)", "rw2", "stator", "M-RW2",
            lambda f: f["kind"] == "tone" and f["name"] == "2xLF" and f["amplitude_mm_s"] >= 1.0),
    Feature("sideband_family 1X at pole pass", "rw2", "rotor-bar", "M-RW2",
            lambda f: f["kind"] == "sideband_family" and f["spacing"] == "pole pass" and f["pairs"] >= 1),
)
