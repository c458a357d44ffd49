"""Each piece of knowledge has one home (DESIGN.md, "Layout"): the rule engine in
engine/reasoning/engine.py, every SQL statement in engine/history/store.py, JSON text in
engine/common/jsonout.py, every rate formula in engine/machine/kinematics.py.

The checks read the source with ``ast``, so a word in a comment, a docstring or a
message never counts; each finding is named by file and line.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

from support import ROOT

ENGINE = ROOT / "engine"
BENCH = ROOT / "bench"


def _files(*folders: Path) -> list[Path]:
    return sorted(p for folder in folders for p in folder.rglob("*.py"))


def _rel(path: Path) -> str:
    return path.relative_to(ROOT).as_posix()


def _tree(path: Path) -> ast.Module:
    return ast.parse(path.read_text(encoding="utf-8"), filename=str(path))


def _imported_modules(tree: ast.Module):
    """(line, top-level module name) of every absolute import, and of importlib.import_module("x")."""
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield node.lineno, alias.name.split(".")[0]
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            yield node.lineno, node.module.split(".")[0]
        elif (isinstance(node, ast.Call) and isinstance(node.func, (ast.Attribute, ast.Name))
              and getattr(node.func, "attr", getattr(node.func, "id", None)) in ("import_module", "__import__")
              and node.args and isinstance(node.args[0], ast.Constant) and isinstance(node.args[0].value, str)):
            yield node.lineno, node.args[0].value.split(".")[0]


# ---------------------------------------------------------------- the rule engine


DURABLE = {"durable", "durable_rules_engine"}
ENGINE_HOME = ENGINE / "reasoning" / "engine.py"


def test_durable_rules_is_imported_only_by_the_reasoning_engine():
    """durable-rules has hazards its one adapter handles (engine/reasoning/engine.py's docstring);
    a second caller would meet them unguarded."""
    found = [f"{_rel(p)}:{line}: imports {name}" for p in _files(ENGINE, BENCH) if p != ENGINE_HOME
             for line, name in _imported_modules(_tree(p)) if name in DURABLE]
    assert not found, f"durable-rules outside engine/reasoning/engine.py: {found}"


def test_the_durable_rules_check_sees_an_import():
    tree = ast.parse("import json\nfrom durable.engine import Host\nx = __import__('durable_rules_engine')\n")
    assert [(line, name) for line, name in _imported_modules(tree) if name in DURABLE] == \
        [(2, "durable"), (3, "durable_rules_engine")]


# ---------------------------------------------------------------- SQL


STORE = ENGINE / "history" / "store.py"
SQL_CALLS = {"execute", "executemany", "executescript", "connect"}


def _sql(tree: ast.Module):
    """(line, what) of every sqlite3 import and every call of execute/executemany/executescript, or
    of sqlite3.connect."""
    for line, name in _imported_modules(tree):
        if name == "sqlite3":
            yield line, "imports sqlite3"
    for node in ast.walk(tree):
        if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute) and node.func.attr in SQL_CALLS:
            on_sqlite3 = isinstance(node.func.value, ast.Name) and node.func.value.id == "sqlite3"
            if node.func.attr != "connect" or on_sqlite3:
                yield node.lineno, f".{node.func.attr}("


def test_queries_of_the_history_store_live_in_the_store():
    """Every SQL statement against a history store is a method of ``history.store.Store``: a
    schema change then touches one file, and a damaged value is judged in one place."""
    found = [f"{_rel(p)}:{line}: {what}" for p in _files(ENGINE) if p != STORE for line, what in _sql(_tree(p))]
    assert not found, f"SQL outside engine/history/store.py: {found}"


def test_the_sql_check_sees_a_query_and_spares_other_connects():
    tree = ast.parse("import sqlite3\ndb = sqlite3.connect(p)\ndb.execute('select 1')\nsignal.connect(f)\n")
    assert sorted(_sql(tree)) == [(1, "imports sqlite3"), (2, ".connect("), (3, ".execute(")]


# ---------------------------------------------------------------- JSON text


JSONOUT = ENGINE / "common" / "jsonout.py"
# a file may make JSON text for another purpose than output only with a reason here
JSON_NOT_OUTPUT: dict[str, str] = {}    # file -> why it may make JSON text itself (none today)


def _json_text(tree: ast.Module):
    """(line, call) of every json.dumps / json.dump call, however json or dumps was imported."""
    modules = {a.asname or a.name for n in ast.walk(tree) if isinstance(n, ast.Import)
               for a in n.names if a.name == "json"}
    functions = {a.asname or a.name for n in ast.walk(tree) if isinstance(n, ast.ImportFrom) and n.module == "json"
                 for a in n.names if a.name in ("dumps", "dump")}
    for node in ast.walk(tree):
        if not isinstance(node, ast.Call):
            continue
        f = node.func
        if isinstance(f, ast.Attribute) and f.attr in ("dumps", "dump") and isinstance(f.value, ast.Name) \
                and f.value.id in modules:
            yield node.lineno, f"{f.value.id}.{f.attr}"
        elif isinstance(f, ast.Name) and f.id in functions:
            yield node.lineno, f.id


def test_json_text_is_made_only_by_jsonout():
    """Strict RFC 8259 JSON (no NaN or Infinity, numpy values as numbers) is one function's
    promise, engine.common.jsonout.dumps; a second json.dumps would break it the day a value is
    not finite."""
    found = [f"{_rel(p)}:{line}: {call}" for p in _files(ENGINE) if p != JSONOUT
             and _rel(p) not in JSON_NOT_OUTPUT for line, call in _json_text(_tree(p))]
    assert not found, f"JSON text outside engine/common/jsonout.py: {found}"


def test_every_json_exemption_still_makes_json_text():
    stale = [f for f in JSON_NOT_OUTPUT if not list(_json_text(_tree(ROOT / f)))]
    assert not stale, f"no json.dumps left: remove {stale} from JSON_NOT_OUTPUT"


def test_the_json_check_sees_every_spelling():
    tree = ast.parse("import json as j\nfrom json import dumps as d\nj.dumps(x)\nd(x)\ntext.dumps(x)\n")
    assert list(_json_text(tree)) == [(3, "j.dumps"), (4, "d")]


# ---------------------------------------------------------------- rate formulas


KINEMATICS = ENGINE / "machine" / "kinematics.py"
# a count of the machine's geometry, or a bearing's defect multiple: times a speed it is a rate
COUNTS = {"vanes", "blades", "teeth", "driving_teeth", "driven_teeth", "rotor_bars", "bars", "rolling_elements",
          "n_balls", "n_elements", "poles", "bpfo", "bpfi", "bsf", "ftf"}
BEARING_GEOMETRY = {"element_diameter", "pitch_diameter"}


def _name(node: ast.AST) -> str | None:
    if isinstance(node, ast.Name):
        return node.id
    if isinstance(node, ast.Attribute):
        return node.attr
    if isinstance(node, ast.Subscript) and isinstance(node.slice, ast.Constant) and isinstance(node.slice.value, str):
        return node.slice.value
    return None


def _rate_formulas(tree: ast.Module):
    """(line, expression) of every product with a count or defect multiple as a factor (``r.vanes * fr``,
    ``mult["bpfo"] * fr``, ``3 * r.vanes``), every quotient of a bearing's element and pitch
    diameters, and every division by a belt's length. A ratio of tooth counts (a speed through a
    gear: engine/machine/model.py) and a bound on one diameter are not rates."""
    for node in ast.walk(tree):
        if not isinstance(node, ast.BinOp):
            continue
        if isinstance(node.op, ast.Mult) and (_name(node.left) in COUNTS or _name(node.right) in COUNTS):
            yield node.lineno, ast.unparse(node)
        elif isinstance(node.op, ast.Div):
            names = {_name(n) for n in ast.walk(node)}
            if BEARING_GEOMETRY <= names or _name(node.right) == "belt_length_mm":
                yield node.lineno, ast.unparse(node)


def _stages() -> list[str]:
    return sorted({p.relative_to(ENGINE).parts[0].removesuffix(".py") for p in _files(ENGINE)})




@pytest.mark.parametrize("stage", _stages())
def test_rate_formulas_live_in_kinematics(stage):
    """A forcing frequency computed twice drifts apart the day one copy is corrected; every rate
    comes from engine/machine/kinematics.py (DEVELOPERS.md)."""
    files = [p for p in _files(ENGINE) if p.relative_to(ENGINE).parts[0].removesuffix(".py") == stage]
    found = [f"{_rel(p)}:{line}: {expr}" for p in files if p != KINEMATICS for line, expr in _rate_formulas(_tree(p))]
    assert not found, f"rate formulas outside engine/machine/kinematics.py: {found}"


def test_the_rate_check_sees_rates_and_spares_ratios_and_bounds():
    tree = ast.parse("a = r.vanes * speeds[r.shaft]\nb = 3 * r.vanes\nc = mult['bpfo'] * fr\n"
                     "d = b.element_diameter / b.pitch_diameter\ne = pi * d_mm * fr / belt.belt_length_mm\n"
                     "f = g.driving_teeth / g.driven_teeth\ng = MIN_RATIO * b['pitch_diameter']\nh = n_lines * df\n")
    assert sorted(line for line, _ in _rate_formulas(tree)) == [1, 2, 3, 4, 5]


def test_kinematics_itself_holds_the_rates_the_check_looks_for():
    assert len(list(_rate_formulas(_tree(KINEMATICS)))) >= 5, "the check no longer matches how rates are written"
