"""The pooled remaining life (engine/trend/pool.py): the linear opinion pool against scipy, its prior
file section, and the trend's second answer on a short run-to-failure history and on a monthly route."""

from __future__ import annotations

import json
from datetime import datetime, timedelta

import numpy as np
import pytest

from engine.trend.pool import (
    LABEL,
    LEVELS,
    PoolSettings,
    pool_of,
    read_pool_prior,
    shipped_pool_prior,
    spacing_off,
)

# ------------------------------------------------------------------ the pool against scipy


def test_the_pools_distribution_is_the_weighted_sum_of_the_methods():
    # two normal answers, N(10, 1) and N(20, 2) hours, pooled 0.3 / 0.7: the pool's distribution function
    # is 0.3 F1 + 0.7 F2 (Stone 1961's linear opinion pool), scipy.stats as reference, within the 1/512
    # a method's quantiles stand for; its percentiles are the roots of F = q (scipy's brentq)
    from scipy.optimize import brentq
    from scipy.stats import norm

    u = (np.arange(20000) + 0.5) / 20000
    p = pool_of([norm.ppf(u, 10.0, 1.0), norm.ppf(u, 20.0, 2.0)])
    assert p is not None

    def mix(x):
        return 0.3 * norm.cdf(x, 10.0, 1.0) + 0.7 * norm.cdf(x, 20.0, 2.0)

    np.testing.assert_allclose(p.weights((0.3, 0.7)) @ p.cdf, mix(p.points), atol=1.5 / len(LEVELS))
    for q in (0.1, 0.5, 0.9):
        assert p.quantile((0.3, 0.7), q) == pytest.approx(brentq(lambda x, q=q: mix(x) - q, 5.0, 30.0), rel=0.01)
    # equal weights: the mixture's own percentiles; its median falls in the gap between the two normals,
    # where the distribution function is flat, so there the check is that F at the pool's median is 0.5
    def equal(x):
        return 0.5 * norm.cdf(x, 10.0, 1.0) + 0.5 * norm.cdf(x, 20.0, 2.0)

    for q in (0.1, 0.9):
        assert p.quantile((0.5, 0.5), q) == pytest.approx(brentq(lambda x, q=q: equal(x) - q, 5.0, 30.0), rel=0.01)
    for q in (0.1, 0.25, 0.5, 0.75, 0.9):
        assert equal(p.quantile((0.5, 0.5), q)) == pytest.approx(q, abs=2.0 / len(LEVELS))
    # weights on one method alone: that method's own quantiles
    assert p.quantile((1.0, 0.0), 0.9) == pytest.approx(norm.ppf(0.9, 10.0, 1.0), rel=0.005)


def test_a_method_without_an_answer_leaves_the_pool_and_the_others_keep_their_shares():
    # three normals of which the second has no answer: the equal pool is the 50/50 mixture of the other two
    # (scipy.stats as reference for its median)
    from scipy.optimize import brentq
    from scipy.stats import norm

    u = (np.arange(20000) + 0.5) / 20000
    p = pool_of([norm.ppf(u, 10.0, 1.0), None, norm.ppf(u, 14.0, 1.0)])
    assert p is not None and p.answered == (True, False, True)
    np.testing.assert_allclose(p.weights((0.2, 0.6, 0.2)), [0.5, 0.0, 0.5])
    np.testing.assert_allclose(p.weights((1 / 3, 1 / 3, 1 / 3)), [0.5, 0.0, 0.5])
    # the weights name only the method that did not answer: those that did, equal
    np.testing.assert_allclose(p.weights((0.0, 1.0, 0.0)), [0.5, 0.0, 0.5])
    median = brentq(lambda x: 0.5 * norm.cdf(x, 10.0, 1.0) + 0.5 * norm.cdf(x, 14.0, 1.0) - 0.5, 5.0, 20.0)
    assert p.quantile((1 / 3, 1 / 3, 1 / 3), 0.5) == pytest.approx(median, rel=0.01)
    assert pool_of([None, None, None]) is None


def test_the_pools_act_by_time_is_the_best_expected_score_of_the_lognormal_mixture():
    # scipy as reference: the expected PHM 2012 challenge score over a 50/50 mixture of two lognormals
    # (medians 8 and 14 h, sigma 0.2 and 0.4) at each estimate, integrated by scipy.integrate.quad and
    # maximised by scipy.optimize.minimize_scalar; the pool's act-by time agrees within 1 %
    from scipy import integrate, optimize
    from scipy.stats import lognorm

    from engine.trend.degradation import challenge_score

    a, b = lognorm(0.2, scale=8.0), lognorm(0.4, scale=14.0)

    def expected(c: float, w: float) -> float:
        return integrate.quad(lambda x: float(challenge_score(100 * (x - c) / x)) * (w * a.pdf(x) + (1 - w) * b.pdf(x)),
                              0.0, 80.0, points=[c], limit=400)[0]

    u = (np.arange(16384) + 0.5) / 16384
    p = pool_of([a.ppf(u), b.ppf(u)])
    assert p is not None
    for w in (0.5, 0.8):
        best = optimize.minimize_scalar(lambda c, w=w: -expected(c, w), bounds=(2.0, 20.0), method="bounded").x
        assert p.act_by((w, 1 - w)) == pytest.approx(best, rel=0.01)
    # the act-by time lies before the median: a late estimate costs four times as fast as an early one
    assert p.act_by((0.5, 0.5)) < p.quantile((0.5, 0.5), 0.5)


# ------------------------------------------------------------------ the prior file section

def test_the_shipped_pool_prior_reads_and_says_where_it_came_from():
    prior = shipped_pool_prior()
    assert prior is not None
    assert "accelerated laboratory run-to-failure tests" in prior.name and "prior.yaml" in prior.name
    assert prior.indicator == "accel_peak_g" and prior.end_level == 20.0
    assert len(prior.runs) == 6 and len(prior.end_levels) == 12 and len(prior.growths_per_h) == 12
    assert len(prior.calibration) > 10 and np.all((prior.calibration >= 0) & (prior.calibration <= 1))


@pytest.mark.parametrize("change, problem", [
    (lambda p: p["pool"]["hazards"].update(beta="two"), "pool.hazards.beta"),
    (lambda p: p["pool"]["gp"].pop("calibration"), "calibration"),
    (lambda p: p["pool"]["gp"].update(calibration=[0.2, 1.7]), "pool.gp.calibration.1"),
    (lambda p: p["pool"].update(end_level=-20), "pool.end_level"),
    (lambda p: p["pool"]["hazards"].update(clock="wall"), "pool.hazards.clock"),
    (lambda p: p["pool"]["gp"].update(end_levels=[1.0, 1.0, 1.0]), "pool.gp.end_levels: every value is the same"),
    (lambda p: p["pool"].update(spare=1), "pool.spare: unknown field"),
], ids=["not-a-number", "missing", "pit-above-1", "negative-level", "unknown-clock", "no-spread", "unknown-field"])
def test_a_corrupt_pool_section_is_a_rulebook_error_naming_the_file_and_field(tmp_path, change, problem):
    import yaml

    from engine.common.errors import RulebookError
    from engine.common.paths import RULEBOOKS

    doc = yaml.safe_load((RULEBOOKS / "trend" / "prior.yaml").read_text())
    change(doc)
    bad = tmp_path / "prior.yaml"
    bad.write_text(yaml.safe_dump(doc, sort_keys=False))
    with pytest.raises(RulebookError, match=problem) as err:
        read_pool_prior(bad)
    assert str(bad) in str(err.value) and "\n" not in str(err.value)


def test_a_corrupt_pool_section_stops_the_trend_with_one_line_and_exit_5(tmp_path, capsys, monkeypatch):
    import yaml

    import engine.trend.pool as pool
    from engine.common.paths import RULEBOOKS

    from support import one_error_line

    doc = yaml.safe_load((RULEBOOKS / "trend" / "prior.yaml").read_text())
    doc["pool"]["gp"]["growths_per_h"] = "fast"
    bad = tmp_path / "prior.yaml"
    bad.write_text(yaml.safe_dump(doc, sort_keys=False))
    monkeypatch.setattr(pool, "shipped_pool_prior", lambda: pool.read_pool_prior(bad))
    store = _store(tmp_path, _run_to_failure(60))
    err = one_error_line(capsys, 5, ["trend", RIG, "--store", store])
    assert str(bad) in err and "pool.gp.growths_per_h" in err, err


# ------------------------------------------------------------------ the trend's second answer

RIG = "Tallow Ridge test rig"
STEP_S = 100.0          # the library's spacing


def _run_to_failure(n: int, step_s: float = STEP_S, seed: int = 7) -> list[tuple[float, float, float]]:
    """(seconds, acceleration peak g, acceleration RMS g) of an invented bearing: healthy for the first
    60 % of its readings, then growing exponentially toward 20 g peak (a demo history, seeded)."""
    rng = np.random.default_rng(seed)
    out = []
    start = int(0.6 * n)
    for i in range(n):
        grow = 0.0 if i < start else (i - start) / (n - start)
        rms = 0.45 * np.exp(2.0 * grow) * np.exp(0.05 * rng.standard_normal())
        out.append((i * step_s, float(rms * 4.0 * np.exp(0.08 * rng.standard_normal())), float(rms)))
    return out


def _store(tmp_path, history, points=("H", "V")) -> str:
    from engine.history.store import Store

    path = tmp_path / "h.sqlite"
    t0 = datetime(2026, 3, 2, 6, 0, 0)
    with Store(path) as s:
        for k, (sec, peak, rms) in enumerate(history):
            for j, pt in enumerate(points):
                f = 1.0 if j == 0 else 0.9
                s.add({"content_hash": f"h{k}-{pt}", "machine": RIG, "machine_file": None, "source": f"r{k}{pt}.csv",
                       "taken_at": (t0 + timedelta(seconds=sec)).isoformat(), "time_from": "route",
                       "speed_rpm": 1800.0, "elapsed_s": 0.1, "fs_hz": 25600.0, "duration_s": 0.1,
                       "verdict": {"urgency": "watch", "urgency_label": "watch", "worst_zone": "A",
                                   "withheld": False, "summary": "s"},
                       "top": None, "hypotheses": [],
                       "channels": [{"channel": "ch1", "point": pt, "direction": "horizontal",
                                     "location": "test_bearing", "zone": "A"}],
                       "indicators": [{"channel": "ch1", "name": "accel_peak_g", "value": peak * f},
                                      {"channel": "ch1", "name": "accel_rms_g", "value": rms * f}]})
    return str(path)


def test_the_trend_gives_both_answers_on_a_short_run_to_failure_history(tmp_path, capsys):
    from engine.cli import main

    store = _store(tmp_path, _run_to_failure(80))
    assert main(["trend", RIG, "--limit", "accel_peak_g=10", "--format", "json", "--store", store]) == 0
    doc = json.loads(capsys.readouterr().out)
    for p in doc["points"]:
        exp = next(x for x in p["projections"] if x["indicator"] == "accel_peak_g")
        assert exp["limit"] == 10.0                          # the exponential honours --limit
        pool = p["pool"]
        assert pool["label"] == LABEL and pool["on"] and pool["projected"], pool["reason"]
        assert pool["end_level"] == 20.0 and "accelerated" in pool["prior"]
        assert pool["answered"] and set(pool["answered"]) <= {"exponential", "gaussian process", "hazards"}
        # unrounded seconds and days, quantiles in order, the act-by time before the median
        assert pool["seconds"] == pytest.approx(pool["days"] * 86400.0, rel=1e-12)
        q = [x["days"] for x in pool["quantiles"]]
        assert all(x is not None for x in q[:4]) and q[:4] == sorted(q[:4])
        assert pool["low_days"] <= pool["days"] and pool["act_by_days"] <= pool["days"]
        assert p["pool"]["hazard_points"] == [p["point"]]       # no machine file: each point its own bearing
    assert main(["trend", RIG, "--limit", "accel_peak_g=10", "--store", store]) == 0
    text = capsys.readouterr().out
    assert LABEL in text and "learned on accelerated laboratory tests lasting hours" in text, text
    assert "tests lasting 1 to 8 hours" in text


def test_the_pool_is_off_on_a_monthly_history_and_says_so_in_one_line(tmp_path, capsys):
    from engine.cli import main

    store = _store(tmp_path, _run_to_failure(14, step_s=30 * 86400.0))
    assert main(["trend", RIG, "--format", "json", "--store", store]) == 0
    doc = json.loads(capsys.readouterr().out)
    for p in doc["points"]:
        assert not p["pool"]["on"] and p["pool"]["days"] is None
        assert "30 days apart" in p["pool"]["reason"] and "accelerated tests lasting hours" in p["pool"]["reason"]
    assert main(["trend", RIG, "--store", store]) == 0
    lines = [x for x in capsys.readouterr().out.splitlines() if LABEL in x]
    assert len(lines) == 2 and all("off: these readings are 30 days apart" in x for x in lines), lines


def test_the_spacing_threshold_is_symmetric_and_read_from_the_settings():
    prior = shipped_pool_prior()
    assert prior is not None
    s = PoolSettings(10.0, "test")
    assert spacing_off(100.0, prior, s) is None
    assert spacing_off(999.0, prior, s) is None and spacing_off(1000.0, prior, s) is not None
    assert spacing_off(10.01, prior, s) is None and spacing_off(10.0, prior, s) is not None
    assert spacing_off(1000.0, prior, PoolSettings(20.0, "test")) is None


def test_the_hazards_judge_a_bearing_by_all_of_its_points():
    # the machine file puts H and V at one bearing: the hazards' condition is the larger of the two points'
    # degradation ratios, so V, whose level rises half as far in log units, is judged by H's rise when the
    # two are grouped and fails sooner than when judged alone (the exponential and GP answers are V's own
    # either way)
    from engine.trend.pool import pool_section
    from engine.trend.series import series_by_point

    rows = []
    t0 = datetime(2026, 3, 2, 6, 0, 0)
    for sec, peak, rms in _run_to_failure(80):
        for pt, (p, r) in (("H", (peak, rms)), ("V", (np.sqrt(peak * 1.8), np.sqrt(rms * 0.45)))):
            rows.append({"id": len(rows) + 1, "point": pt, "channel": "ch1",
                         "taken_at": (t0 + timedelta(seconds=sec)).isoformat(),
                         "indicators": {"accel_peak_g": p, "accel_rms_g": r}})
    by = series_by_point(rows, RIG)
    sources = {p: by[p]["accel_rms_g"] for p in by}
    together = pool_section("V", by, sources, {"H": "b1", "V": "b1"})
    alone = pool_section("V", by, sources, {})
    assert together is not None and alone is not None
    assert together["hazard_points"] == ["H", "V"] and alone["hazard_points"] == ["V"]
    assert together["bearing"] == "b1" and alone["bearing"] is None
    assert "hazards" in together["answered"] and "hazards" in alone["answered"]
    assert together["days"] < alone["days"], (together["days"], alone["days"])


def test_the_trend_diagnose_store_reads_its_facts_from_leaves_the_pool_out():
    # the pooled answer costs about a CPU second a point (the GP) and no diagnosis report shows it
    from engine.trend.report import trend_from_rows, zone_scale_for

    rows = []
    t0 = datetime(2026, 3, 2, 6, 0, 0)
    for sec, peak, rms in _run_to_failure(60):
        rows.append({"id": len(rows) + 1, "point": "H", "channel": "ch1", "direction": "horizontal",
                     "taken_at": (t0 + timedelta(seconds=sec)).isoformat(),
                     "indicators": {"accel_peak_g": peak, "accel_rms_g": rms}})
    scale = zone_scale_for(None)
    assert trend_from_rows(RIG, rows, scale, pool=False)["points"][0]["pool"] is None
    assert trend_from_rows(RIG, rows, scale)["points"][0]["pool"]["label"] == LABEL
