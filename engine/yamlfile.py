"""YAML files checked against a JSON Schema, with errors that name the line.

Machine descriptions, reading sidecars and rulebooks are all YAML written by
people. This module loads one, remembers the line of every mapping key and list
item, validates it with jsonschema, and turns the first problem into one
readable sentence: ``file:line: field.path: problem``.
"""

from __future__ import annotations

import difflib
import json
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

import jsonschema
import yaml

from .errors import TellwaveError


# libyaml when the install has it: rulebooks are parsed on every run
_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)


@dataclass(frozen=True)
class YamlDocument:
    """Parsed YAML data plus the source line (1-based) of each node by path."""

    path: str
    data: Any
    lines: dict[tuple, int]

    def line_of(self, field_path) -> int | None:
        """Line of the deepest node along ``field_path`` that has one."""
        key = tuple(field_path)
        while key:
            if key in self.lines:
                return self.lines[key]
            key = key[:-1]
        return self.lines.get((), None)


def _line_map(node, prefix=(), out=None) -> dict[tuple, int]:
    out = {} if out is None else out
    out.setdefault(prefix, node.start_mark.line + 1)
    if isinstance(node, yaml.MappingNode):
        for key_node, value_node in node.value:
            child = prefix + (key_node.value,)
            out[child] = key_node.start_mark.line + 1
            _line_map(value_node, child, out)
    elif isinstance(node, yaml.SequenceNode):
        for i, item in enumerate(node.value):
            out[prefix + (i,)] = item.start_mark.line + 1
            _line_map(item, prefix + (i,), out)
    return out


def read_yaml(path, error: type[TellwaveError]) -> YamlDocument:
    """Read a YAML file, raising ``error`` with file and line for any problem."""
    path = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise error("no such file", path=path) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise error(f"cannot read as UTF-8 text ({exc.__class__.__name__})", path=path) from None
    try:
        loader = _LOADER(text)
        try:
            node = loader.get_single_node()
            data = loader.construct_document(node) if node is not None else None
        finally:
            loader.dispose()
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark
        line = mark.line + 1 if mark is not None else None
        raise error(f"not valid YAML: {exc.problem}", path=path, line=line) from None
    except yaml.YAMLError as exc:
        raise error(f"not valid YAML: {exc}", path=path) from None
    lines = _line_map(node) if node is not None else {}
    return YamlDocument(path, data, lines)


@lru_cache(maxsize=None)
def load_schema(name: str) -> dict:
    """A JSON Schema shipped in engine/schemas."""
    text = resources.files("engine.schemas").joinpath(name).read_text(encoding="utf-8")
    return json.loads(text)


def _describe(err: jsonschema.ValidationError) -> str:
    if err.validator == "required":
        return err.message.replace("is a required property", "is required")
    if err.validator == "additionalProperties":
        return err.message.replace("Additional properties are not allowed", "unknown field")
    if err.validator == "type":
        return f"expected {err.validator_value}, got {err.instance!r}"
    if err.validator == "enum":
        allowed = ", ".join(map(str, err.validator_value))
        return f"expected one of {allowed}, got {err.instance!r}"
    return err.message


def _one_of_required(err: jsonschema.ValidationError) -> list[list[str]] | None:
    """The alternative key sets of a ``oneOf`` made of ``required`` lists, if that is what failed."""
    if err.validator != "oneOf":
        return None
    options = []
    for sub in err.validator_value:
        if set(sub) - {"required", "not"}:
            return None
        options.append(sub["required"])
    return options


def first_problem(doc: YamlDocument, schema_name: str) -> tuple[list, str] | None:
    """The most specific schema violation in ``doc`` as (field path, problem), or None.

    The problem reported is the one deepest in the document, so a typo in one
    field is named as that field, not as "does not match any alternative" of
    its parent.
    """
    validator = jsonschema.Draft202012Validator(load_schema(schema_name))
    errors = list(validator.iter_errors(doc.data))
    if not errors:
        return None
    best = max(errors, key=lambda e: len(e.absolute_path))
    path = list(best.absolute_path)
    alternatives = _one_of_required(best)
    if alternatives is not None:
        given = set(best.instance) if isinstance(best.instance, dict) else set()
        complete = [keys for keys in alternatives if given.issuperset(keys)]
        if len(complete) > 1:
            problem = "give only one of " + ", ".join(" + ".join(k) for k in complete)
        else:
            problem = "needs " + " or ".join(" + ".join(k) for k in alternatives)
        return path, problem
    if best.context:
        # an alternative of the wrong type says less than one of the right type
        telling = [e for e in best.context if e.validator != "type"] or best.context
        best = jsonschema.exceptions.best_match(telling)
        path = list(best.absolute_path)
    problem = _describe(best)
    if best.validator == "additionalProperties" and isinstance(best.instance, dict):
        allowed = set(best.schema.get("properties", {}))
        extra = [k for k in best.instance if k not in allowed]
        if extra:
            path = path + [extra[0]]
            near = difflib.get_close_matches(str(extra[0]), sorted(allowed), n=1)
            problem = "unknown field" + (f"; did you mean {near[0]!r}?" if near else "")
    return path, problem


def validate(doc: YamlDocument, schema_name: str, error: type[TellwaveError]) -> None:
    """Validate ``doc`` against a shipped schema; raise ``error`` on the first problem."""
    found = first_problem(doc, schema_name)
    if found is None:
        return
    path, problem = found
    field = ".".join(str(p) for p in path) or "(top level)"
    raise error(f"{field}: {problem}", path=doc.path, line=doc.line_of(path))
