"""Step fields ↔ JSON, and JSON Schema from type hints: the machinery behind ``Step.to_dict``,
``Step.from_dict`` and ``Step.schema``.

Supported hints: str, int, float, bool, ``X | None``, ``tuple[X, ...]``, fixed tuples,
``dict[str, X]``, ``Literal[...]``, enums, ``datetime.date``/``datetime``, ``ParseSpec`` and
nested dataclasses. A dataclass field may add schema keywords with
``field(metadata={"schema": {...}})``.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import enum
import types
import typing
from typing import Any, Literal

from .spec import CENTURY_RULES, ParseSpec

__all__ = ["dataclass_schema", "field_hints", "from_json", "parse_spec_schema", "to_json"]


def to_json(value: Any) -> Any:
    """A field value as JSON data (ParseSpec, dates, enums, tuples converted)."""
    if value is None or isinstance(value, bool | int | float | str):
        return value
    if isinstance(value, ParseSpec):
        return value.to_dict()
    if isinstance(value, _dt.date | _dt.datetime | _dt.time):
        return value.isoformat()
    if isinstance(value, enum.Enum):
        return value.value
    if isinstance(value, tuple | list):
        return [to_json(v) for v in value]
    if isinstance(value, dict):
        return {str(k): to_json(v) for k, v in value.items()}
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: to_json(getattr(value, f.name)) for f in dataclasses.fields(value)}
    raise TypeError(f"{type(value).__name__} has no JSON form")


def _is_union(hint: Any) -> bool:
    return typing.get_origin(hint) in (typing.Union, types.UnionType)


def from_json(value: Any, hint: Any) -> Any:
    """JSON data back to a field value of type ``hint``."""
    if hint is Any or hint is object:
        return value
    if _is_union(hint):
        args = typing.get_args(hint)
        if value is None and type(None) in args:
            return None
        for a in args:
            if a is not type(None):
                return from_json(value, a)
    origin, args = typing.get_origin(hint), typing.get_args(hint)
    if origin is Literal:
        return value
    if origin is tuple:
        if len(args) == 2 and args[1] is Ellipsis:
            return tuple(from_json(v, args[0]) for v in value)
        return tuple(from_json(v, a) for v, a in zip(value, args))
    if origin is dict:
        return {k: from_json(v, args[1] if args else Any) for k, v in value.items()}
    if hint is ParseSpec:
        return ParseSpec.from_dict(value)
    if hint is _dt.datetime:
        return _dt.datetime.fromisoformat(value)
    if hint is _dt.date:
        return _dt.date.fromisoformat(value)
    if isinstance(hint, type) and issubclass(hint, enum.Enum):
        return hint(value)
    if hint is float and isinstance(value, int):
        return float(value)
    return value


_SIMPLE = {str: "string", int: "integer", float: "number", bool: "boolean"}


def _schema_of(hint: Any) -> dict[str, Any]:
    """JSON Schema (Draft 2020-12) of one type hint."""
    if hint is Any or hint is object:
        return {}
    if hint in _SIMPLE:
        return {"type": _SIMPLE[hint]}
    if _is_union(hint):
        args = [a for a in typing.get_args(hint) if a is not type(None)]
        nullable = len(args) < len(typing.get_args(hint))
        parts = [_schema_of(a) for a in args]
        if len(parts) == 1 and set(parts[0]) == {"type"} and isinstance(parts[0]["type"], str):
            return {"type": [parts[0]["type"], "null"] if nullable else parts[0]["type"]}
        if len(parts) == 1 and set(parts[0]) == {"enum"} and nullable:
            return {"enum": [*parts[0]["enum"], None]}
        return {"anyOf": parts + ([{"type": "null"}] if nullable else [])}
    origin, args = typing.get_origin(hint), typing.get_args(hint)
    if origin is Literal:
        return {"enum": list(args)}
    if origin is tuple:
        if len(args) == 2 and args[1] is Ellipsis:
            return {"type": "array", "items": _schema_of(args[0])}
        return {
            "type": "array",
            "prefixItems": [_schema_of(a) for a in args],
            "minItems": len(args),
            "maxItems": len(args),
        }
    if origin is dict:
        return {"type": "object", "additionalProperties": _schema_of(args[1]) if args else {}}
    if hint is ParseSpec:
        return parse_spec_schema()
    if hint is _dt.datetime:
        return {"type": "string", "minLength": 10}
    if hint is _dt.date:
        return {"type": "string", "pattern": r"^\d{4}-\d{2}-\d{2}$"}
    if isinstance(hint, type) and issubclass(hint, enum.Enum):
        return {"enum": [m.value for m in hint]}
    if isinstance(hint, type) and dataclasses.is_dataclass(hint):
        return dataclass_schema(hint)
    raise TypeError(f"no JSON Schema for type {hint!r}")


_HINTS: dict[type, dict[str, Any]] = {}


def field_hints(cls: type) -> dict[str, Any]:
    """The resolved type hints of a dataclass (resolved once per class: it is slow)."""
    hints = _HINTS.get(cls)
    if hints is None:
        hints = _HINTS[cls] = typing.get_type_hints(cls)
    return hints


def dataclass_schema(
    cls: type, *, skip: tuple[str, ...] = (), extra: dict[str, dict[str, Any]] | None = None
) -> dict[str, Any]:
    """Object schema of a dataclass from its fields' hints: fields without a default are required,
    unknown properties refused. ``extra`` merges more keywords into named properties."""
    hints = field_hints(cls)
    props: dict[str, Any] = {}
    required: list[str] = []
    for f in dataclasses.fields(cls):
        if f.name in skip or not f.init:
            continue
        sch = dict(_schema_of(hints[f.name]))
        sch.update(f.metadata.get("schema", {}))
        sch.update((extra or {}).get(f.name, {}))
        props[f.name] = sch
        if f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING:
            required.append(f.name)
    return {
        "type": "object",
        "properties": props,
        "required": required,
        "additionalProperties": False,
    }


def parse_spec_schema() -> dict[str, Any]:
    """Schema of a ParseSpec's JSON form, built from its fields (so new fields are included)."""
    return dataclass_schema(
        ParseSpec,
        extra={
            "patterns": {"items": {"type": "string", "minLength": 1}},
            "day_order": {"enum": ["dmy", "mdy", None]},
            "century": {"enum": list(CENTURY_RULES)},
            "date_system": {"enum": [1900, 1904]},
            "pivot_year": {"type": ["integer", "null"], "minimum": 1, "maximum": 9999},
        },
    )
