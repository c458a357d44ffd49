"""The remaining-life prior learned from the store's own histories, on a store of simulated exponential
degradation histories (Tallow Ridge Water Works demo pumps, invented) whose parameters are known: each
history rises as y = phi + exp(theta + beta tau + e) (the model of Gebraeel et al. 2005) and ends in a
finding with a fault found."""

from __future__ import annotations

import json
from datetime import datetime, timedelta

import numpy as np
import pytest

from engine.cli import main
from engine.history.store import Store
from engine.trend.report import growth_of
from engine.trend.store_prior import learned_from_store, min_histories

PHI = 0.2                     # healthy acceleration RMS, g (invented demo level)
THETA, BETA, NOISE_SD = np.log(0.1), 0.08, 0.1      # per day, log units: the simulation's own parameters
HEALTHY, RISING = 30, 30
START = datetime(2026, 1, 1, 8, 0)
LIMIT = 1.5


def _record(n: int, machine: str, when: datetime, value: float) -> dict:
    return {"content_hash": f"hash-{n}", "machine": machine, "machine_file": None, "source": f"r{n}.wav",
            "taken_at": when.isoformat(), "time_from": "route", "speed_rpm": 1486.0, "elapsed_s": 0.1,
            "fs_hz": 25600.0, "duration_s": 2.0,
            "verdict": {"urgency": "watch", "urgency_label": "watch", "worst_zone": "B", "withheld": False,
                        "summary": "s"},
            "top": None,
            "channels": [{"channel": "P1H", "point": "P1H", "direction": "horizontal", "location": "pump_de",
                          "zone": "B"}],
            "indicators": [{"channel": "P1H", "name": "accel_rms_g", "value": value}],
            "hypotheses": [{"rank": 1, "fault": "outer-race", "fault_name": "outer-race", "component": "pump_de",
                            "certainty": 0.6, "urgency": "plan"}]}


def _history(rng, betas_theta, rising=RISING) -> np.ndarray:
    theta, beta = betas_theta
    healthy = PHI * np.exp(rng.normal(0.0, 0.02, HEALTHY))
    tau = np.arange(rising, dtype=float)
    return np.concatenate([healthy, PHI + np.exp(theta + beta * tau + rng.normal(0.0, NOISE_SD, rising))])


def _store(path, ended: int, seed: int = 7) -> tuple[str, list[tuple[float, float]]]:
    """``ended`` pumps whose history ran to a finding (bearing replaced), and one pump still rising; daily readings."""
    rng = np.random.default_rng(seed)
    truth = [(THETA + rng.normal(0.0, 0.2), BETA * (1 + rng.normal(0.0, 0.1))) for _ in range(ended)]
    n = 0
    with Store(path) as s:
        for k, params in enumerate(truth):
            machine = f"Tallow Ridge pump {k + 1}"
            last = None
            for i, v in enumerate(_history(rng, params)):
                n += 1
                last = s.add(_record(n, machine, START + timedelta(days=i), float(v)))
            s.add_finding({"reading_id": last, "component": "pump_de", "fault": "outer-race", "stage": 4,
                           "found_on": (START + timedelta(days=HEALTHY + RISING - 1)).date().isoformat()})
        for i, v in enumerate(_history(rng, (THETA, BETA), rising=12)):
            n += 1
            s.add(_record(n, "Tallow Ridge pump rising", START + timedelta(days=i), float(v)))
    return str(path), truth


def _projection(path, capsys) -> dict:
    capsys.readouterr()
    assert main(["trend", "Tallow Ridge pump rising", "--store", path, "--format", "json",
                 "--limit", f"accel_rms_g={LIMIT}"]) == 0
    doc = json.loads(capsys.readouterr().out)
    (p,) = [p for p in doc["points"][0]["projections"] if p["indicator"] == "accel_rms_g"]
    return p


def test_the_prior_is_learned_from_the_histories_that_ended_in_a_finding(tmp_path, capsys):
    path, truth = _store(tmp_path / "h.sqlite", ended=6)
    with Store(path, read_only=True) as s:
        learned = learned_from_store(s, {"accel_rms_g": LIMIT}, growth_of, lambda m: _repairs(s, m))
    sp = learned["accel_rms_g"]
    assert sp.histories == 6 and sp.prior is not None
    # the growth rate does not depend on where the first predicting time falls: the learned mean must be
    # the simulation's mean rate (the model of Gebraeel et al. 2005, fitted by least squares per history)
    assert sp.prior.mean[1] == pytest.approx(np.mean([b for _, b in truth]), rel=0.1)
    # the pooled scatter of the lines is the simulated log noise (variance within a factor 2)
    assert NOISE_SD ** 2 / 2 < sp.prior.noise_var < NOISE_SD ** 2 * 2
    assert sp.prior.reading_interval_days == pytest.approx(1.0)
    p = _projection(path, capsys)
    assert p["prior"] == "prior learned from 6 histories of this store"
    # the rising pump follows the simulation's mean line (no noise): it reaches the limit at
    # tau = (log(limit - phi) - theta) / beta; its last reading is at tau = 11
    truth_days = (np.log(LIMIT - PHI) - THETA) / BETA - 11
    assert p["projected"] and p["low_days"] <= truth_days <= p["high_days"]


def test_too_few_ended_histories_fall_back_and_say_so(tmp_path, capsys):
    path, _ = _store(tmp_path / "h.sqlite", ended=min_histories() - 1)
    p = _projection(path, capsys)
    # the prior it falls back on (shipped or vague) is named first, then how many histories the store holds
    assert not p["prior"].startswith("prior learned from")
    assert (f"({min_histories() - 1} histories of this store ended in a recorded failure or past the limit "
            f"with a start of degradation; {min_histories()} are needed for a prior of its own)") in p["prior"]
    assert "histories of this store" in p["reason"]


def test_a_history_that_ran_past_the_limit_counts_without_a_finding(tmp_path):
    from engine.trend.series import Series
    from engine.trend.store_prior import ended_histories

    values = np.array([0.2, 0.2, 0.5, 1.0, 1.6, 2.0])
    s = Series("M", "P1H", "accel_rms_g", tuple(START + timedelta(days=i) for i in range(6)), values,
               tuple(range(6)))
    (h,) = ended_histories(s, [], LIMIT)
    assert list(h.values) == [0.2, 0.2, 0.5, 1.0, 1.6]          # up to the first reading at or past the limit
    assert ended_histories(s, [], 5.0) == []                    # never reached: still running, not ended


def _repairs(store, machine):
    from engine.trend.repairs import repairs_of

    return repairs_of(store.findings(machine), {}, {})


@pytest.mark.parametrize("value", ["1", "three", "true", ""])
def test_a_bad_least_number_of_histories_names_the_file_and_field(tmp_path, value):
    from engine.common.errors import RulebookError
    from engine.trend.store_prior import read_min_histories

    f = tmp_path / "onset.yaml"
    f.write_text(f"health: {{}}\nonset: {{}}\nstore_prior:\n  min_histories: {value}\n")
    with pytest.raises(RulebookError, match="store_prior.min_histories: expected a whole number") as e:
        read_min_histories(f)
    assert "onset.yaml" in str(e.value)
