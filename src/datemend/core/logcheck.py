"""Reading a fix log file safely: size and nesting caps, JSON that is data only, and each step
checked against its registered JSON Schema (Draft 2020-12), with one clear sentence per problem.

The file is read with ``json.loads`` (never unpickled or evaluated); files over ``MAX_BYTES``,
nested deeper than ``MAX_DEPTH`` or holding more than ``MAX_STEPS`` steps are refused; NaN,
Infinity and repeated keys are refused. ``fixlog.py`` holds the log itself.
"""

from __future__ import annotations

import importlib
import json
from typing import Any

import jsonschema
import numpy as np

from .._version import __version__
from .steps import STEP_TYPES, FieldValueError, Step, dataclass_schema
from .table import DatemendError

__all__ = [
    "FORMAT",
    "MAX_BYTES",
    "MAX_DEPTH",
    "MAX_STEPS",
    "VERSION",
    "FixLogError",
    "build_step",
    "check_envelope",
    "fixlog_schema",
    "load_step_kinds",
    "parse_json",
]

FORMAT = "datemend-fixlog"
VERSION = 1
#: Largest fix log read (bytes). A log of ten thousand hand-set cells is about 2 MB.
MAX_BYTES = 5 * 1024 * 1024
#: Deepest nesting of JSON arrays and objects read; real logs nest about 5 deep.
MAX_DEPTH = 64
#: Most steps a log may hold (each is checked against its schema: this bounds the time a
#: hostile file can cost). Ten thousand hand-set cells is already far beyond real use.
MAX_STEPS = 20_000


class FixLogError(DatemendError):
    """A fix log cannot be read. ``step`` is 1-based (None for the envelope); ``field`` is the
    dotted field path inside the step or envelope, if known."""

    def __init__(
        self,
        message: str,
        path: str | None = None,
        step: int | None = None,
        field: str | None = None,
    ) -> None:
        super().__init__(message)
        self.path = path
        self.step = step
        self.field = field


# ---------------------------------------------------------------------------- step kinds

#: Modules that register more step kinds (derived columns, rules); imported before a log is read.
STEP_MODULES = ("derive", "checks")


def load_step_kinds() -> None:
    """Import every module that registers step kinds, so a log may use any of them."""
    for mod in STEP_MODULES:
        name = f"{__package__}.{mod}"
        try:
            importlib.import_module(name)
        except ModuleNotFoundError as err:
            if err.name != name:
                raise


# ------------------------------------------------------------------------------ parsing


def _max_depth(text: str) -> int:
    """Deepest nesting of [ and { outside strings, in linear time without recursion (numpy):
    a quote opens or closes a string unless an odd run of backslashes precedes it."""
    arr = np.frombuffer(text.encode("utf-8", "surrogatepass"), dtype=np.uint8)
    if len(arr) == 0:
        return 0
    pos = np.arange(len(arr), dtype=np.int32)
    last_plain = np.maximum.accumulate(np.where(arr != ord("\\"), pos, -1))
    before = np.concatenate((np.array([-1], dtype=np.int32), last_plain[:-1].astype(np.int32)))
    backslashes = pos - 1 - before  # backslashes right before each position
    quote = (arr == ord('"')) & (backslashes % 2 == 0)
    inside = (np.cumsum(quote, dtype=np.int32) % 2) == 1
    step = (np.isin(arr, (ord("["), ord("{"))) & ~inside).astype(np.int32)
    step -= np.isin(arr, (ord("]"), ord("}"))) & ~inside
    return int(np.cumsum(step).max())


def _no_constant(token: str) -> Any:
    raise ValueError(f"{token} is not a JSON number")


def _no_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for k, v in pairs:
        if k in out:
            raise ValueError(f'field "{k}" appears twice in one object')
        out[k] = v
    return out


def parse_json(text: str, name: str) -> Any:
    if not text.strip():
        raise FixLogError(f"{name} is empty; it is not a fix log.", name)
    if _max_depth(text) > MAX_DEPTH:
        raise FixLogError(
            f"{name} nests deeper than {MAX_DEPTH} levels, which no fix log does; it was not read.",
            name,
        )
    try:
        return json.loads(text, parse_constant=_no_constant, object_pairs_hook=_no_duplicates)
    except json.JSONDecodeError as err:
        where = f"line {err.lineno}, column {err.colno}"
        if err.pos >= len(text.rstrip()) or err.msg.startswith("Unterminated string"):
            msg = f"{name} ends before its JSON is complete ({where}); the file may be cut short."
        else:
            msg = f"{name} is not valid JSON at {where}: {err.msg}."
        raise FixLogError(msg, name) from None
    except RecursionError:
        raise FixLogError(f"{name} nests too deeply to read; it is not a fix log.", name) from None
    except ValueError as err:
        raise FixLogError(f"{name} is not valid JSON data: {err}.", name) from None


# ----------------------------------------------------------------------------- validation


def _envelope_schema(step_schema: dict[str, Any]) -> dict[str, Any]:
    from .fixlog import LogSource

    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "type": "object",
        "required": ["format", "version", "steps"],
        "properties": {
            "format": {"const": FORMAT},
            "version": {"type": "integer", "minimum": 1},
            "datemend_version": {"type": "string"},
            "created": {"type": "string"},
            "source": {**dataclass_schema(LogSource), "type": ["object", "null"]},
            "key_column": {"type": ["string", "null"]},
            "notes": {"type": "array", "items": {"type": "string"}},
            "steps": {
                "type": "array",
                "items": {
                    "type": "object",
                    "required": ["step"],
                    "properties": {"enabled": {"type": "boolean"}, "step": step_schema},
                    "additionalProperties": False,
                },
            },
        },
        "additionalProperties": False,
    }


def fixlog_schema() -> dict[str, Any]:
    """The whole log's JSON Schema, built from every registered step kind (for documentation and
    other tools; loading checks the same rules step by step, for clearer messages)."""
    load_step_kinds()
    kinds = sorted(STEP_TYPES)
    step = {
        "type": "object",
        "required": ["kind"],
        "properties": {"kind": {"enum": kinds}},
        "allOf": [
            {"if": {"properties": {"kind": {"const": k}}}, "then": STEP_TYPES[k].schema()}
            for k in kinds
        ],
    }
    return _envelope_schema(step)


_JSON_TYPES = {
    dict: "an object",
    list: "a list",
    str: "text",
    bool: "true/false",
    int: "a whole number",
    float: "a number",
    type(None): "null",
}
_TYPE_WORDS = {
    "object": "an object",
    "array": "a list",
    "string": "text",
    "boolean": "true or false",
    "integer": "a whole number",
    "number": "a number",
    "null": "null",
}


def _describe(value: Any) -> str:
    return _JSON_TYPES.get(type(value), type(value).__name__)


def _explain(err: jsonschema.ValidationError) -> tuple[str, str]:
    """(dotted field path, what is wrong) for one schema error, in plain words."""
    path = ".".join(str(p) for p in err.absolute_path)
    v = err.validator
    if v == "required":
        missing = [p for p in err.validator_value if p not in err.instance]
        name = missing[0] if missing else "?"
        return (f"{path}.{name}" if path else name), "is missing"
    if v == "additionalProperties":
        known = set(err.schema.get("properties", {}))
        extra = sorted(k for k in err.instance if k not in known)
        name = extra[0] if extra else "?"
        return (f"{path}.{name}" if path else name), "is not a field this kind of entry has"
    if v == "type":
        want = err.validator_value
        wants = [want] if isinstance(want, str) else list(want)
        words = " or ".join(_TYPE_WORDS.get(w, w) for w in wants)
        return path, f"must be {words}, not {_describe(err.instance)}"
    if v in ("enum", "const"):
        allowed = err.validator_value if v == "enum" else [err.validator_value]
        return path, f"must be one of {json.dumps(allowed)}, not {json.dumps(err.instance)}"
    if v in ("minLength", "minItems"):
        return path, "must not be empty"
    if v == "pattern":
        return path, f"has the wrong form ({json.dumps(err.instance)})"
    if v in ("minimum", "maximum"):
        return path, f"is out of range ({json.dumps(err.instance)})"
    return path, err.message


_validators: dict[object, jsonschema.protocols.Validator] = {}


def _validator(key: object, schema: Any) -> jsonschema.protocols.Validator:
    """One compiled validator per step class (or envelope), built on first use."""
    v = _validators.get(key)
    if v is None:
        v = jsonschema.Draft202012Validator(schema() if callable(schema) else schema)
        _validators[key] = v
    return v


def _first_error(
    validator: jsonschema.protocols.Validator, data: Any
) -> jsonschema.ValidationError | None:
    if validator.is_valid(data):
        return None
    errors = sorted(validator.iter_errors(data), key=lambda e: (list(e.absolute_path), e.message))
    return errors[0] if errors else None


def _check_entries(steps: list[Any], name: str) -> None:
    """Each entry is {"step": {"kind": …, …}, "enabled": true/false}: checked in plain Python, so
    a long log of hand-set cells is not walked by the schema library twice."""
    for i, item in enumerate(steps, start=1):
        problem = None
        if not isinstance(item, dict):
            field_name, problem = "step", f"must be an object, not {_describe(item)}"
        elif "step" not in item:
            field_name, problem = "step", "is missing"
        elif extra := sorted(k for k in item if k not in ("step", "enabled")):
            field_name, problem = extra[0], "is not a field this kind of entry has"
        elif "enabled" in item and not isinstance(item["enabled"], bool):
            field_name, problem = (
                "enabled",
                f"must be true or false, not {_describe(item['enabled'])}",
            )
        elif not isinstance(item["step"], dict):
            field_name, problem = "step", f"must be an object, not {_describe(item['step'])}"
        elif "kind" not in item["step"]:
            field_name, problem = "kind", "is missing"
        if problem is not None:
            raise FixLogError(
                f'{name}: step {i}, field "{field_name}" {problem}.', name, i, field_name
            )


def check_envelope(d: Any, name: str) -> None:
    if not isinstance(d, dict):
        raise FixLogError(
            f"{name} is not a datemend fix log (its JSON is {_describe(d)}, not an object).", name
        )
    if d.get("format") != FORMAT:
        raise FixLogError(f'{name} is not a datemend fix log (no "format": "{FORMAT}").', name)
    version = d.get("version")
    if not isinstance(version, int) or isinstance(version, bool):
        raise FixLogError(
            f'{name}: field "version" must be a whole number, not {_describe(version)}.',
            name,
            field="version",
        )
    if version > VERSION:
        raise FixLogError(
            f"{name} was saved by a newer datemend (fix log version {version}); this datemend "
            f"({__version__}) reads version {VERSION} — update datemend to open it.",
            name,
            field="version",
        )
    err = _first_error(_validator("envelope", _envelope_without_steps), d)
    if err is not None:
        path, what = _explain(err)
        raise FixLogError(f'{name}: field "{path}" {what}.', name, field=path)
    if len(d["steps"]) > MAX_STEPS:
        raise FixLogError(
            f"{name} holds {len(d['steps']):,} steps, more than the {MAX_STEPS:,} a fix log may "
            "hold; it was not read.",
            name,
            field="steps",
        )
    _check_entries(d["steps"], name)


def _envelope_without_steps() -> dict[str, Any]:
    sch = _envelope_schema({})
    sch["properties"]["steps"] = {"type": "array"}
    return sch


def build_step(d: dict[str, Any], number: int, name: str) -> Step:
    kind = d["kind"]
    if not isinstance(kind, str) or kind not in STEP_TYPES:
        known = ", ".join(f'"{k}"' for k in sorted(STEP_TYPES))
        raise FixLogError(
            f'{name}: step {number}, field "kind": {json.dumps(kind)} is not a step kind this '
            f"datemend knows ({known}).",
            name,
            number,
            "kind",
        )
    cls = STEP_TYPES[kind]
    err = _first_error(_validator(cls, cls.schema), d)
    if err is not None:
        path, what = _explain(err)
        raise FixLogError(
            f'{name}: step {number} ("{kind}"), field "{path}" {what}.', name, number, path
        )
    try:
        return cls.from_dict(d)
    except FieldValueError as err:
        raise FixLogError(
            f'{name}: step {number} ("{kind}"), field "{err.field}": {err}.',
            name,
            number,
            err.field,
        ) from None
    except (ValueError, TypeError) as err:
        raise FixLogError(
            f'{name}: step {number} ("{kind}") is not valid: {err}.', name, number
        ) from None
