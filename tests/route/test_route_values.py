"""A route's times and paths are judged when the route file is read, before any reading is diagnosed.

Each reproducer was once an "internal error, please report it" from a worker
(``time: "25:61"`` a ValueError, ``time: ""`` an AttributeError, ``time: 1e18``
an OverflowError, a reading path with a NUL a ValueError); each is now a
``RouteError`` naming the route file, the line and the field. The parsers
are fuzzed: any text or YAML scalar as a time, any string as a path, either
load cleanly or stop with a ``RouteError``; a time that loads is one a
worker can use.
"""

from __future__ import annotations

import json
import math
import re
from datetime import datetime
from types import SimpleNamespace

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from routes import PUMP

from engine.cli import main
from engine.common.errors import RouteError, TellwaveError, UsageError
from engine.history.times import Clock, resolve_time
from engine.readings import load_reading
from engine.route import load_folder, load_route
from engine.route.work import taken_at

CLOCK = {"start": "2026-03-04T22:00:00", "interval_s": 10}
FUZZ = settings(max_examples=300, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.function_scoped_fixture])


def _yaml_json(data) -> str:
    """JSON text (which is YAML) with every character escaped, an astral one as YAML's ``\\U`` escape
    (libyaml refuses JSON's surrogate pairs)."""
    def astral(m):
        hi, lo = int(m.group(1), 16), int(m.group(2), 16)
        return f"\\U{0x10000 + ((hi - 0xD800) << 10) + (lo - 0xDC00):08x}"
    return re.sub(r"\\u(d[89ab][0-9a-f]{2})\\u(d[c-f][0-9a-f]{2})", astral, json.dumps(data, indent=1))


def _route(folder, reading: dict, clock=None, raw_time: str | None = None):
    """A route of one reading of the demo pump (a field given as None is left out); ``raw_time``
    is written into the YAML as it is."""
    data = {"route": "values", "machines": {"rw2": str(PUMP)},
            "readings": [{k: v for k, v in {"file": "r0.wav", "machine": "rw2", **reading}.items() if v is not None}]}
    if clock is not None:
        data["clock"] = clock
    text = _yaml_json(data)
    if raw_time is not None:
        text = text.replace('"machine": "rw2"', f'"machine": "rw2",\n "time": {raw_time}', 1)
    path = folder / "route.yaml"
    path.write_text(text, encoding="utf-8")
    return path


def _route_error(path) -> RouteError:
    with pytest.raises(RouteError) as err:
        load_route(path)
    assert str(err.value).startswith(f"{path}:"), str(err.value)      # the route file and its line
    assert err.value.line is not None and err.value.exit_code == 2
    return err.value


@pytest.mark.parametrize("time, clock, words", [
    ('"25:61"', CLOCK, "not a time of day"),
    ('""', None, "is empty"),
    ('"   "', CLOCK, "is empty"),
    ("1e18", CLOCK, "is not a time"),
    ("-3", CLOCK, "counts intervals from 0"),
    ('"2026-02-30T08:00:00"', None, "ISO 8601"),
    ("true", CLOCK, "ISO 8601"),
    ("[1, 2]", CLOCK, "ISO 8601"),
    ('"23:59"', {"start": "9999-12-31T23:59:30"}, "after the year 9999"),
], ids=["hour-25", "empty", "blank", "index-1e18", "negative-index", "no-such-day", "bool", "list",
        "time-of-day-past-9999"])
def test_a_bad_route_time_stops_the_route_when_it_is_read(tmp_path, time, clock, words):
    err = _route_error(_route(tmp_path, {}, clock, raw_time=time))
    assert "readings.0.time" in err.problem and words in err.problem, err.problem


def test_the_command_names_the_route_file_and_line_of_a_bad_time_and_diagnoses_nothing(tmp_path, capsys):
    path = _route(tmp_path, {}, CLOCK, raw_time='"25:61"')
    store = tmp_path / "h.sqlite"
    assert main(["route", str(path), "--store", str(store), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and f"{path}:" in err and "readings.0.time" in err and "internal error" not in err
    assert not store.exists()       # found before the store is opened or any reading is diagnosed


@pytest.mark.parametrize("reading, field", [
    ({"file": "r0\u0000.wav"}, "readings.0.file"),
    ({"file": None, "files": ["r0.wav", "r1\u0000.wav"]}, "readings.0.files.1"),
    ({"file": "r\ud800.wav"}, None),       # refused by the YAML reader itself, with the line
    ({"file": ""}, "readings.0.file"),
], ids=["nul", "nul-in-files", "lone-surrogate", "empty"])
def test_a_path_no_system_can_open_is_a_route_error(tmp_path, reading, field):
    err = _route_error(_route(tmp_path, reading))
    assert field is None or err.problem.startswith(field + ":"), err.problem


def test_a_machine_path_with_nul_is_a_route_error(tmp_path):
    path = tmp_path / "route.yaml"
    path.write_text(json.dumps({"machines": {"rw2": "m\u0000.yaml"},
                                "readings": [{"file": "a.wav", "machine": "rw2"}]}))
    assert _route_error(path).problem.startswith("machines.rw2: the path contains a NUL")
    plant = tmp_path / "plant.yaml"
    plant.write_text(json.dumps({"machines": [{"file": "m\u0000.yaml", "readings": ["*.wav"]}]}))
    with pytest.raises(RouteError, match=r"plant.yaml:\d+: machines.0.file: the path contains a NUL"):
        load_folder(tmp_path, plant)


def test_a_good_route_time_is_resolved_when_the_route_is_read(tmp_path):
    route = load_route(_route(tmp_path, {}, CLOCK, raw_time='"01:10"'))
    assert route.tasks[0].time == "2026-03-05T01:10:00"       # after midnight: the next day
    route = load_route(_route(tmp_path, {}, CLOCK, raw_time="6"))
    assert route.tasks[0].time == "2026-03-04T22:01:00"       # 6 intervals of 10 s


# ---------------------------------------------------------------- fuzzing the parsers

_NO_READING_TIME = SimpleNamespace(timestamp=None)

yaml_scalars = st.one_of(
    st.text().map(_yaml_json),                                            # any text, quoted
    st.text(alphabet="0123456789:.-+eE TZ", max_size=30),                 # plain scalars that look like times
    st.integers().map(str),
    st.integers(min_value=0, max_value=10 ** 500).map(str),
    st.floats(allow_nan=False, allow_infinity=False).map(repr),
    st.sampled_from(["true", "null", "~", ".inf", ".nan", "[]", "{}", "'25:61'", "1e18", "1e400", "''", "0x1F"]),
)


@FUZZ
@given(raw=yaml_scalars, clock=st.sampled_from([None, CLOCK, {"start": "2026-03-04T22:00:00+02:00"},
                                                 {"start": "9999-12-31T23:00:00", "interval_s": 1e300}]))
def test_any_yaml_scalar_as_a_time_loads_or_is_a_route_error(tmp_path, raw, clock):
    path = _route(tmp_path, {}, clock, raw_time=raw if raw.strip() else '""')
    try:
        route = load_route(path)
    except RouteError as exc:
        assert str(exc).startswith(f"{path}:")
        return
    task = route.tasks[0]
    if task.time is not None:
        datetime.fromisoformat(task.time)
        when, origin = taken_at(task, _NO_READING_TIME, route.clock)     # what the worker does with it
        assert when == task.time and origin == "route"


@FUZZ
@given(stated=st.one_of(st.text(), st.integers(), st.integers(min_value=10 ** 300, max_value=10 ** 5000),
                        st.floats(), st.booleans(), st.none(), st.datetimes()),
       clock=st.sampled_from([None, Clock(datetime(2026, 3, 4, 22)), Clock(datetime(2026, 3, 4, 22), 10.0),
                              Clock(datetime(9999, 12, 31, 23, 59), 1e300), Clock(datetime(1, 1, 1), 1e-300)]))
def test_resolve_time_gives_a_time_none_or_a_usage_error(stated, clock):
    try:
        t = resolve_time(stated, clock, what="t")
    except UsageError as exc:
        assert exc.problem.startswith("t") and len(exc.problem) < 400
        return
    assert (t is None) == (stated is None)
    if isinstance(stated, float):
        assert math.isfinite(stated)


@FUZZ
@given(name=st.text(st.characters(exclude_categories=()), max_size=300))
def test_any_path_string_loads_or_is_a_route_error_and_a_loaded_one_reads_cleanly(tmp_path, name):
    path = _route(tmp_path, {"file": name})
    try:
        route = load_route(path)
    except RouteError as exc:
        assert str(exc).startswith(f"{path}:")
        assert exc.problem.startswith(("readings.0.file:", "not valid YAML")), exc.problem
        return
    for f in route.tasks[0].files:
        try:
            load_reading(f)             # what the worker does first: a clean error at worst
        except TellwaveError:
            pass


def test_a_reading_whose_sidecar_name_is_too_long_for_the_system_is_read_without_one(tmp_path, capsys):
    """Found by bench.fuzz: a reading named with 250 characters exists, but its sidecar's name
    (the same plus ``.yaml``) is past the system's 255; hashing the route's files for the resume
    key raised ``OSError: File name too long``. No such sidecar can exist, so it is none."""
    import numpy as np

    from engine.history.record import content_hash

    reading = tmp_path / ("a" * 247 + ".npy")
    np.save(reading, np.zeros(16))
    assert len(content_hash([reading])) == 64
