"""The trend command's own checks: limits, unknown machines, an empty store."""

from __future__ import annotations

import pytest

from engine.cli import main
from engine.cli.trend import parse_limits
from engine.common.errors import UsageError


def test_limits_parse():
    assert parse_limits(["accel_peak_g=20", "velocity_rms_mm_s = 7.1"]) == {"accel_peak_g": 20.0,
                                                                          "velocity_rms_mm_s": 7.1}


@pytest.mark.parametrize("item, problem", [
    ("accel_peak=20", "expected INDICATOR=VALUE"),
    ("accel_peak_g", "expected INDICATOR=VALUE"),
    ("accel_peak_g=lots", "not a number"),
    ("accel_peak_g=-1", "positive"),
    ("accel_peak_g=inf", "finite"),
    ("accel_peak_g=nan", "finite"),
], ids=["unknown-indicator", "no-value", "not-a-number", "negative", "infinite", "nan"])
def test_bad_limits_are_usage_errors(item, problem):
    with pytest.raises(UsageError, match=problem):
        parse_limits([item])


def test_an_unknown_machine_is_one_line_with_exit_2(tmp_path, capsys):
    from engine.history.store import Store

    Store(tmp_path / "h.sqlite").close()               # an empty store (a missing one is exit 8)
    assert main(["trend", "Nobody's pump", "--store", str(tmp_path / "h.sqlite")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "machines stored: none" in err


def test_an_unknown_point_lists_the_points_with_readings(tmp_path, capsys):
    from test_waterfall import PUMP, _record

    from engine.history.store import Store

    from support import one_error_line

    with Store(tmp_path / "h.sqlite") as s:
        s.add(_record(1, 1, 0.0, point="P1H", spectrum=False))
        s.add(_record(2, 2, 0.0, point="P2V", spectrum=False))
    err = one_error_line(capsys, 2, ["trend", PUMP, "--point", "P9X", "--store", tmp_path / "h.sqlite"])
    assert "no stored reading at point 'P9X'; points with readings: P1H, P2V" in err, err


def test_a_trend_at_one_point_reads_the_history_once(tmp_path, capsys, monkeypatch):
    # closing-stop29: `trend --point` read the whole history once more only to list the points
    from test_waterfall import PUMP, _record

    from engine.history.store import Store

    with Store(tmp_path / "h.sqlite") as s:
        for n, point in enumerate(("P1H", "P2V", "P1H", "P2V")):
            s.add(_record(n + 1, 1 + n // 2, 0.0, point=point, spectrum=False))
    reads = []
    real = Store.history
    monkeypatch.setattr(Store, "history", lambda self, machine, point=None: reads.append(point) or
                        real(self, machine, point))
    assert main(["trend", PUMP, "--point", "P2V", "--format", "json", "--store", str(tmp_path / "h.sqlite")]) == 0
    assert '"point": "P2V"' in capsys.readouterr().out
    assert reads == ["P2V"]
