"""YAML files checked against a JSON Schema, with errors that name the line.

Machine descriptions, reading sidecars, site overlays and rulebooks are all
YAML written by people. This module loads one, remembers the line of every
mapping key and list item, validates it with jsonschema, and turns the first
problem into one readable sentence: ``file:line: field.path: problem``.

Reading is guarded, because a YAML file can be hostile as well as careless:

- scalars follow the YAML 1.2 core schema, so ``1e-3`` is the number it
  looks like (YAML 1.1 reads it as text) and ``1:30``, ``017``, ``yes`` and
  dates are no longer quietly turned into 90, 15, True and a date object;
- only the JSON data model is built: mappings, lists, text, numbers, true,
  false and null; other tags (``!!set``, ``!!binary``, ``!foo``) are refused,
  and a tag that cannot read its value (``!!float abc``) is a plain error;
- numbers must be finite (``.nan`` and ``.inf`` are refused, and so is a
  number too large for a float, such as ``1e400``) and integers no larger
  than ``MAX_INTEGER``, however many digits they are written with (an integer
  of hundreds of digits is refused by its size, never converted);
- a file larger than ``MAX_BYTES``, nested deeper than ``MAX_DEPTH`` or whose
  aliases expand to more than ``MAX_NODES`` nodes is refused before anything
  walks it, and an alias that contains itself is refused outright.
"""

from __future__ import annotations

import difflib
import json
import math
import re
from dataclasses import dataclass, field
from functools import cache
from importlib import resources
from typing import TYPE_CHECKING, Any

import yaml
from yaml.constructor import ConstructorError, SafeConstructor

from . import passed
from .errors import TellwaveError
from .infile import regular_file

if TYPE_CHECKING:
    import jsonschema  # imported where a document is checked: a remembered pass needs none of it

MAX_BYTES = 1 << 20       # 1 MiB; the largest shipped rulebook is about 15 kB
MAX_NODES = 100_000       # nodes once every alias is expanded (a shipped rulebook has a few thousand)
MAX_DEPTH = 64            # nesting of mappings and lists
MAX_INTEGER = 10 ** 15    # larger integers lose precision as floats and mean nothing physical
_MAX_DIGITS = 64          # an integer written longer is refused by its size, never parsed whole

# libyaml when the install has it: rulebooks are parsed on every run
_BASE: type[yaml.SafeLoader] = getattr(yaml, "CSafeLoader", yaml.SafeLoader)

_INT = "tag:yaml.org,2002:int"
_FLOAT = "tag:yaml.org,2002:float"
_BOOL = "tag:yaml.org,2002:bool"
_NULL = "tag:yaml.org,2002:null"
_STR = "tag:yaml.org,2002:str"
_SEQ = "tag:yaml.org,2002:seq"
_MAP = "tag:yaml.org,2002:map"
_TIMESTAMP = "tag:yaml.org,2002:timestamp"
_MERGE = "tag:yaml.org,2002:merge"

# YAML 1.2.2, section 10.3.2 (core schema tag resolution)
_INT_RE = re.compile(r"^(?:[-+]?[0-9]+|0o[0-7]+|0x[0-9a-fA-F]+)$")
_FLOAT_RE = re.compile(r"^(?:[-+]?(?:\.[0-9]+|[0-9]+(?:\.[0-9]*)?)(?:[eE][-+]?[0-9]+)?"
                       r"|[-+]?\.(?:inf|Inf|INF)|\.(?:nan|NaN|NAN))$")
_BOOL_RE = re.compile(r"^(?:true|True|TRUE|false|False|FALSE)$")
_NULL_RE = re.compile(r"^(?:~|null|Null|NULL|)$")


def _fail(node, problem: str):
    raise ConstructorError(None, None, problem, node.start_mark)


class _TooLarge(float):
    """A number written larger than a float holds (``1e400``): infinite, remembering how it was written."""

    text = ""


def _int_of(text: str) -> int:
    """The integer ``text`` states (YAML 1.2 core: decimal, 0o octal, 0x hex). One written with more
    than ``_MAX_DIGITS`` significant digits becomes a number of the same size, as the check that
    refuses it needs nothing more (Python refuses to parse very long ones at all)."""
    sign = -1 if text.startswith("-") else 1
    body = text.lstrip("+-")
    base = {"0o": 8, "0x": 16}.get(body[:2], 10)
    digits = (body[2:] if base != 10 else body).lstrip("0") or "0"
    if len(digits) > _MAX_DIGITS:
        return sign * base ** (len(digits) - 1)
    return sign * int(digits, base)


def _construct_int(loader, node) -> int:
    text = loader.construct_scalar(node)
    if not isinstance(text, str) or not _INT_RE.match(text.strip()):
        _fail(node, f"cannot read {str(text)[:40]!r} as an integer")
    return _int_of(text.strip())


def _construct_float(loader, node) -> float:
    text = loader.construct_scalar(node)
    if not isinstance(text, str):
        _fail(node, f"cannot read {text!r} as a number")
    text = text.strip()
    if not _INT_RE.match(text) and not _FLOAT_RE.match(text):
        _fail(node, f"cannot read {text[:40]!r} as a number")
    if _INT_RE.match(text):
        try:
            return float(_int_of(text))
        except OverflowError:
            return _too_large(text, -math.inf if text.startswith("-") else math.inf)
    lowered = text.lower()
    if lowered.endswith(".inf"):
        return -math.inf if lowered.startswith("-") else math.inf
    if lowered == ".nan":
        return math.nan
    value = float(text)
    return _too_large(text, value) if math.isinf(value) else value


def _too_large(text: str, value: float) -> _TooLarge:
    out = _TooLarge(value)
    out.text = text if len(text) <= 40 else text[:37] + "..."
    return out


def _construct_bool(loader, node) -> bool:
    text = loader.construct_scalar(node)
    if not isinstance(text, str) or not _BOOL_RE.match(text):
        _fail(node, f"cannot read {text!r} as true or false")
    return text.lower() == "true"


def _construct_text(loader, node) -> str:
    """Dates and times stay the text they were written as (the JSON data model has no dates)."""
    return str(loader.construct_scalar(node))


def _refuse_tag(loader, node):
    tag = node.tag.replace("tag:yaml.org,2002:", "!!")
    _fail(node, f"the YAML tag {tag} is not supported here; write plain mappings, lists, text and numbers")


class _Loader(_BASE):  # type: ignore[valid-type,misc]  # a base chosen at import: mypy cannot follow it
    """Safe loader with YAML 1.2 core-schema scalars and only JSON-model constructors."""

    yaml_implicit_resolvers: dict = {}
    yaml_constructors = {
        _NULL: SafeConstructor.construct_yaml_null,
        _BOOL: _construct_bool,
        _INT: _construct_int,
        _FLOAT: _construct_float,
        _STR: SafeConstructor.construct_yaml_str,
        _SEQ: SafeConstructor.construct_yaml_seq,
        _MAP: SafeConstructor.construct_yaml_map,
        _TIMESTAMP: _construct_text,
        None: _refuse_tag,
    }


_Loader.add_implicit_resolver(_BOOL, _BOOL_RE, list("tTfF"))
_Loader.add_implicit_resolver(_INT, _INT_RE, list("-+0123456789"))
_Loader.add_implicit_resolver(_FLOAT, _FLOAT_RE, list("-+.0123456789"))
_Loader.add_implicit_resolver(_NULL, _NULL_RE, ["~", "n", "N", ""])
_Loader.add_implicit_resolver(_MERGE, re.compile(r"^(?:<<)$"), ["<"])


@dataclass(frozen=True)
class YamlDocument:
    """Parsed YAML data plus the source line (1-based) of each node by path."""

    path: str
    data: Any
    lines: dict[tuple, int]
    numbers_written: dict[tuple, str] = field(default_factory=dict)   # a number's text as written, by path

    def line_of(self, field_path) -> int | None:
        """Line of the deepest node along ``field_path`` that has one."""
        key = tuple(field_path)
        while key:
            if key in self.lines:
                return self.lines[key]
            key = key[:-1]
        return self.lines.get((), None)


class _Refused(Exception):
    """A guard tripped while walking the node graph: (problem, line)."""

    def __init__(self, problem: str, line: int):
        super().__init__(problem)
        self.problem, self.line = problem, line


def _key_of(node):
    """The path component of a mapping key node: its text, or the integer it states."""
    if not isinstance(node, yaml.ScalarNode):
        return None
    if node.tag == _INT and _INT_RE.match(node.value.strip()):
        return _int_of(node.value.strip())
    return node.value


def _walk(root, numbers: dict[tuple, str] | None = None) -> dict[tuple, int]:
    """Line of every node by path, walking aliases as the data will (iteratively, bounded); the text
    of every number as written goes into ``numbers`` by path, when given.

    Refuses an alias inside its own anchor (the data would contain itself),
    nesting deeper than ``MAX_DEPTH``, more than ``MAX_NODES`` nodes after
    expansion, and a key given twice in one mapping.
    """
    lines: dict[tuple, int] = {}
    count = 0
    # each entry: (node, path, depth); on_path holds the nodes open above the current one
    stack: list = [(root, (), 0, False)]
    on_path: set[int] = set()
    while stack:
        node, path, depth, leaving = stack.pop()
        if leaving:
            on_path.discard(id(node))
            continue
        line = node.start_mark.line + 1
        lines.setdefault(path, line)
        count += 1
        if count > MAX_NODES:
            raise _Refused(f"the file expands to more than {MAX_NODES} values (aliases repeat too much)", line)
        if isinstance(node, yaml.ScalarNode):
            if numbers is not None and node.tag in (_INT, _FLOAT) and len(node.value) <= _MAX_DIGITS:
                numbers[path] = node.value.strip()
            continue
        if id(node) in on_path:
            raise _Refused("an alias refers to a mapping or list that contains it (the data would never end)",
                           line)
        if depth >= MAX_DEPTH:
            raise _Refused(f"nested more than {MAX_DEPTH} levels deep", line)
        on_path.add(id(node))
        stack.append((node, path, depth, True))
        children = []
        if isinstance(node, yaml.MappingNode):
            seen: dict = {}
            for key_node, value_node in node.value:
                key = _key_of(key_node)
                key_line = key_node.start_mark.line + 1
                if key is not None and key != "<<":
                    if key in seen:
                        raise _Refused(f"key {key!r} is given twice (first on line {seen[key]})", key_line)
                    seen[key] = key_line
                    lines[path + (key,)] = key_line
                    children.append((value_node, path + (key,)))
                else:
                    children.append((key_node, path + ("?",)))
                    children.append((value_node, path + ("?",)))
        else:
            for i, item in enumerate(node.value):
                lines[path + (i,)] = item.start_mark.line + 1
                children.append((item, path + (i,)))
        for child, child_path in reversed(children):
            stack.append((child, child_path, depth + 1, False))
    return lines


def _size(value: int) -> str:
    """A large integer as a short number: ``1e+18``, or ``about 1e400`` beyond what a float holds."""
    try:
        return f"{value:.3g}"
    except OverflowError:
        return f"about {'-' if value < 0 else ''}1e{int(math.log10(abs(value)))}"


def _number_problem(value) -> str | None:
    if isinstance(value, bool):
        return None
    if isinstance(value, _TooLarge):
        return f"expected a finite number, got {value.text} (larger than any number can be, about 1.8e308)"
    if isinstance(value, float) and not math.isfinite(value):
        return f"expected a finite number, got {value}"
    if isinstance(value, int) and abs(value) > MAX_INTEGER:
        return f"number too large ({_size(value)}; integers are at most {MAX_INTEGER:.0e})"
    return None


def _check_numbers(data, lines: dict[tuple, int]) -> tuple[str, int | None] | None:
    """The first number (value or mapping key) that is not finite or is absurdly large, as (problem, line)."""
    stack: list[tuple[Any, tuple]] = [(data, ())]
    while stack:
        value, path = stack.pop()
        problem = _number_problem(value)
        if problem is not None:
            return f"{'.'.join(map(str, path)) or 'value'}: {problem}", _line(lines, path)
        if isinstance(value, dict):
            for k in value:
                problem = _number_problem(k)
                if problem is not None:
                    return f"{'.'.join(map(str, path)) or 'value'}: a key's {problem}", _line(lines, path)
            stack.extend((v, path + (k,)) for k, v in value.items())
        elif isinstance(value, list):
            stack.extend((v, path + (i,)) for i, v in enumerate(value))
    return None


def _line(lines: dict[tuple, int], path: tuple) -> int | None:
    while path and path not in lines:
        path = path[:-1]
    return lines.get(path)


def _read_text(path: str, error: type[TellwaveError]) -> str:
    regular_file(path, error, "YAML file")
    try:
        with open(path, "rb") as f:
            raw = f.read(MAX_BYTES + 1)
    except OSError as exc:
        raise error(f"cannot read ({exc.strerror or exc.__class__.__name__})", path=path) from None
    if len(raw) > MAX_BYTES:
        raise error(f"larger than {MAX_BYTES // 1024} KiB: not a YAML file tellwave reads", path=path)
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        raise error("cannot read as UTF-8 text", path=path, line=line) from None


def read_yaml(path, error: type[TellwaveError]) -> YamlDocument:
    """Read a YAML file, raising ``error`` with file and line for any problem."""
    path = str(path)
    text = _read_text(path, error)
    loader = _Loader(text)
    try:
        node = loader.get_single_node()
        numbers: dict[tuple, str] = {}
        lines = _walk(node, numbers) if node is not None else {}
        data = loader.construct_document(node) if node is not None else None
    except _Refused as exc:
        raise error(exc.problem, path=path, line=exc.line) from None
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark is not None else None
        problem = " ".join(str(exc.problem or exc.context or "syntax error").split())
        raise error(f"not valid YAML: {problem}", path=path, line=line) from None
    except yaml.reader.ReaderError as exc:
        char = exc.character if isinstance(exc.character, int) else ord(str(exc.character)[:1] or "\0")
        line = text.count("\n", 0, max(exc.position, 0)) + 1
        raise error(f"not valid YAML: character U+{char:04X} is not allowed (a control character)",
                    path=path, line=line) from None
    except yaml.YAMLError as exc:
        raise error(f"not valid YAML: {' '.join(str(exc).split())}", path=path) from None
    except RecursionError:
        raise error(f"not valid YAML: nested too deeply (more than {MAX_DEPTH} levels)", path=path) from None
    finally:
        loader.dispose()
    bad = _check_numbers(data, lines)
    if bad is not None:
        raise error(bad[0], path=path, line=bad[1])
    return YamlDocument(path, data, lines, numbers)


def _resolved(schema: dict, node: dict) -> dict:
    """``node`` with a local ``$ref`` (``#/$defs/...``) followed, its own keys kept beside it."""
    seen = 0
    while isinstance(node, dict) and isinstance(node.get("$ref"), str) and node["$ref"].startswith("#/") and seen < 16:
        target: Any = schema
        for part in node["$ref"][2:].split("/"):
            target = target.get(part, {}) if isinstance(target, dict) else {}
        node = {**target, **{k: v for k, v in node.items() if k != "$ref"}}
        seen += 1
    return node


def numbers_as_names(doc: YamlDocument, schema_name: str) -> list[tuple]:
    """Turn a number written where ``schema_name`` expects text (a name, an id, a bearing's model:
    ``model: 6309``) into the text it was written as, in ``doc.data``; the paths changed.

    YAML reads an unquoted 6309 as a number, but a model number or a numbered point is a name,
    and quoting it is a chore nobody should have to remember. Only fields whose schema type is
    text alone are changed; the number's text is taken as written (``0017`` stays ``0017``).
    """
    schema = load_schema(schema_name)
    changed: list[tuple] = []
    stack: list[tuple[Any, dict, tuple]] = [(doc.data, schema, ())]
    while stack:
        value, node, path = stack.pop()
        node = _resolved(schema, node)
        if isinstance(value, dict):
            props = node.get("properties", {})
            for key, item in value.items():
                sub = props.get(key)
                if isinstance(sub, dict) and isinstance(item, (int, float)) and not isinstance(item, bool):
                    if _resolved(schema, sub).get("type") == "string" and path + (key,) in doc.numbers_written:
                        value[key] = doc.numbers_written[path + (key,)]
                        changed.append(path + (key,))
                        continue
                if isinstance(sub, dict):
                    stack.append((item, sub, path + (key,)))
        elif isinstance(value, list) and isinstance(node.get("items"), dict):
            items = node["items"]
            for i, item in enumerate(value):
                if isinstance(item, (int, float)) and not isinstance(item, bool):
                    if _resolved(schema, items).get("type") == "string" and path + (i,) in doc.numbers_written:
                        value[i] = doc.numbers_written[path + (i,)]
                        changed.append(path + (i,))
                        continue
                stack.append((item, items, path + (i,)))
    return changed


@cache
def load_schema(name: str) -> dict:
    """A JSON Schema shipped in engine/common/schemas."""
    text = resources.files("engine.common.schemas").joinpath(name).read_text(encoding="utf-8")
    return json.loads(text)


@cache
def _schema_text(name: str) -> str:
    """The schema ``name`` as canonical text: what a remembered pass is keyed by (``common.passed``)."""
    from .jsonout import canonical

    return canonical(load_schema(name))


def _describe(err: jsonschema.ValidationError) -> str:
    if err.validator == "required":
        return err.message.replace("is a required property", "is required")
    if err.validator == "additionalProperties":
        return err.message.replace("Additional properties are not allowed", "unknown field")
    if err.validator == "type":
        return f"expected {err.validator_value}, got {_shown(err.instance)}"
    if err.validator == "enum":
        allowed = ", ".join(map(str, err.validator_value))  # type: ignore[arg-type]  # an enum's values
        return f"expected one of {allowed}, got {_shown(err.instance)}"
    if err.validator in ("minimum", "exclusiveMinimum", "maximum", "exclusiveMaximum"):
        word = {"minimum": "at least", "exclusiveMinimum": "above",
                "maximum": "at most", "exclusiveMaximum": "below"}[err.validator]
        return f"must be {word} {err.validator_value:g}, got {_shown(err.instance)}"
    if err.validator == "pattern" and isinstance(err.schema, dict) and err.schema.get("description"):
        # a pattern is for the machine; its description says the accepted forms in words
        return f"{_shown(err.instance)} is not an accepted form; accepted: {err.schema['description']}"
    return err.message


def _shown(value) -> str:
    """A value for a message: its repr, cut short (a whole mapping can be long)."""
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


def _one_of_required(err: jsonschema.ValidationError) -> list[list[str]] | None:
    """The alternative key sets of a ``oneOf`` made of ``required`` lists, if that is what failed."""
    if err.validator != "oneOf":
        return None
    options = []
    for sub in err.validator_value:  # type: ignore[union-attr]  # a oneOf's list of schemas
        if set(sub) - {"required", "not"}:
            return None
        options.append(sub["required"])
    return options


def first_problem(doc: YamlDocument, schema_name: str) -> tuple[list, str] | None:
    """The most specific schema violation in ``doc`` as (field path, problem), or None.

    The problem reported is the one deepest in the document, so a typo in one
    field is named as that field, not as "does not match any alternative" of
    its parent. Data that passed the same schema before, in any process, is not
    checked again (``engine.common.passed``: the pass is keyed by the schema, the
    data with its types and the installed validator); a problem is found afresh every time.
    """
    remembered_as = passed.key(_schema_text(schema_name), doc.data)
    if passed.remembered(remembered_as):      # this very data passed this very schema before
        return None
    import jsonschema

    validator = jsonschema.Draft202012Validator(load_schema(schema_name))
    errors = list(validator.iter_errors(doc.data))
    if not errors:
        passed.remember(remembered_as)
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
