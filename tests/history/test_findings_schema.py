"""The findings CSV's schema (engine/common/schemas/findings.schema.json) and the row checks agree: a row
the schema takes is a finding, a row it refuses is a FindingError, and the demo's repair logs fit it."""

from __future__ import annotations

import jsonschema
import pytest

from engine.common.yamlfile import load_schema
from engine.demo.plant import FINDINGS_COLUMNS, REPAIRS
from engine.history.findings import CSV_COLUMNS, FindingError, from_row

SCHEMA = load_schema("findings.schema.json")
GOOD = {"machine": "RW-2 raw water pump", "date": "2026-04-21", "component": "pump_de", "fault": "inner-race",
        "stage": "3", "work_order": "TR-WO-2730", "notes": "spall on the inner race"}


def test_the_schema_is_valid_and_names_every_column():
    jsonschema.Draft202012Validator.check_schema(SCHEMA)
    assert tuple(SCHEMA["properties"]) == CSV_COLUMNS


@pytest.mark.parametrize("row", [GOOD, {**GOOD, "stage": ""}, {**GOOD, "stage": "none"},
                                 {k: v for k, v in GOOD.items() if k not in ("stage", "notes", "work_order")},
                                 {**{k: v for k, v in GOOD.items() if k != "machine"}, "reading": "12"},
                                 {**GOOD, "fault": "nothing-found", "stage": ""},
                                 *[dict(zip(FINDINGS_COLUMNS, row)) for _, row in REPAIRS]])
def test_rows_the_schema_takes_are_findings(row):
    jsonschema.validate(row, SCHEMA)
    from_row(row)


@pytest.mark.parametrize("change", [{"stage": "5"}, {"stage": "two"}, {"date": "21/04/2026"}, {"date": ""},
                                   {"component": ""}, {"fault": ""}, {"notes": "x" * 2001},
                                   {"work_order": "y" * 2001}, {"machine": "", "reading": "abc"},
                                   {"machine": "", "reading": "0"}])
def test_rows_the_schema_refuses_are_refused_with_one_line(change):
    row = {**GOOD, **change}
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(row, SCHEMA)
    with pytest.raises(FindingError) as err:
        from_row(row)
    assert "\n" not in str(err.value)
