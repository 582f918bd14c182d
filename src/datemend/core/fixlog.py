"""FixLog: the ordered fix steps of one kind of file, saved as JSON and replayed next month.

The JSON file holds data only (it is read with ``json.loads``, never unpickled or evaluated),
says what it is (``"format": "datemend-fixlog"``, an integer ``version``), and carries facts
about the file it was made on — for the drift report, never as a lock. Loading refuses files
over ``MAX_BYTES`` or nested deeper than ``MAX_DEPTH``, and checks every step against its
registered JSON Schema (Draft 2020-12); each problem is a ``FixLogError`` whose one sentence
names the file, the step number (1-based) and the field.

Example::

    {
      "format": "datemend-fixlog",
      "version": 1,
      "datemend_version": "0.1.0",
      "created": "2026-11-02T09:15:00Z",
      "source": {"file_name": "rowing_club_2026-10.xlsx", "sheet": "Members",
                 "columns": ["Member no", "Name", "Born", "Joined"], "sha256": "9f2c…",
                 "rows": 180, "ranges": {"Born": ["1941-05-02T00:00:00", "2012-08-30T00:00:00"]}},
      "key_column": "Member no",
      "notes": [],
      "steps": [
        {"enabled": true, "step": {"kind": "read-dates", "column": "Born",
                                   "spec": {"patterns": ["dmy-slash"], "day_order": "dmy", …},
                                   "label": "D/M/YYYY 100%"}},
        {"enabled": true, "step": {"kind": "blank-tokens", "tokens": ["n/a"], "columns": []}}
      ]
    }
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import importlib
import json
import os
import tempfile
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import jsonschema
import numpy as np
import pandas as pd

from .._version import __version__
from .clean import CellState, CleanTable
from .steps import STEP_TYPES, FieldValueError, Step, dataclass_schema
from .table import DatemendError

__all__ = [
    "FORMAT",
    "MAX_BYTES",
    "MAX_DEPTH",
    "MAX_STEPS",
    "VERSION",
    "FixLog",
    "FixLogError",
    "LogEntry",
    "LogSource",
    "StepError",
    "fixlog_schema",
    "load_step_kinds",
    "parsed_ranges",
    "unresolved_shapes",
    "unresolved_values",
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


class StepError(DatemendError):
    """A step could not be applied; the message names the step number."""


@dataclass(frozen=True)
class LogEntry:
    """One step of a log and whether it runs."""

    step: Step
    enabled: bool = True


@dataclass(frozen=True)
class LogSource:
    """Facts about the file a log was made on (information for the drift report, not a lock).

    ``ranges``: for each parsed source column, the earliest and latest date read or set by hand
    (ISO 8601), so replay can point at values far outside them. ``unresolved``: the distinct raw
    values (the ``MAX_UNRESOLVED`` most frequent per column) no pattern read in the source, and
    ``unresolved_shapes`` the shapes of all of them, so replay tells a failure already known from
    a new one. ``keys``: the key column's values when the table
    has at most ``MAX_KEYS`` rows, so replay can say which rows are new and which are gone.
    """

    file_name: str | None = None
    sheet: str | None = None
    columns: tuple[str, ...] = ()
    sha256: str | None = None
    rows: int | None = None
    date_system: int | None = None
    ranges: dict[str, tuple[str, str]] = field(default_factory=dict)
    unresolved: dict[str, tuple[str, ...]] = field(default_factory=dict)
    unresolved_shapes: dict[str, tuple[str, ...]] = field(default_factory=dict)
    keys: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        d = dataclasses.asdict(self)
        d["columns"] = list(self.columns)
        d["ranges"] = {k: list(v) for k, v in self.ranges.items()}
        d["unresolved"] = {k: list(v) for k, v in self.unresolved.items()}
        d["unresolved_shapes"] = {k: list(v) for k, v in self.unresolved_shapes.items()}
        d["keys"] = list(self.keys)
        return d

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> LogSource:
        d = dict(d)
        d["columns"] = tuple(d.get("columns", ()))
        d["ranges"] = {k: (v[0], v[1]) for k, v in d.get("ranges", {}).items()}
        d["unresolved"] = {k: tuple(v) for k, v in d.get("unresolved", {}).items()}
        shapes = d.get("unresolved_shapes", {})
        d["unresolved_shapes"] = {k: tuple(v) for k, v in shapes.items()}
        d["keys"] = tuple(d.get("keys", ()))
        return cls(**d)

    @classmethod
    def of(cls, clean: CleanTable) -> LogSource:
        raw = clean.raw
        return cls(
            file_name=raw.facts.file_name,
            sheet=raw.facts.sheet,
            columns=tuple(raw.names),
            sha256=raw.facts.sha256,
            rows=raw.n_rows,
            date_system=raw.facts.date_system,
            ranges=parsed_ranges(clean),
            unresolved=unresolved_values(clean),
            unresolved_shapes=unresolved_shapes(clean),
            keys=_keys_of(clean),
        )


def _keys_of(clean: CleanTable) -> tuple[str, ...]:
    from .rowkey import key_text

    key = clean.key_column
    if key is None or key not in clean.raw or clean.raw.n_rows > MAX_KEYS:
        return ()
    return tuple(str(k) for k in key_text(clean.raw.column(key)))


def parsed_ranges(clean: CleanTable) -> dict[str, tuple[str, str]]:
    """Earliest and latest value (parsed or set by hand) of each parsed column, ISO 8601."""
    out: dict[str, tuple[str, str]] = {}
    for name, pc in clean.parsed.items():
        ok = ((pc.state == CellState.PARSED) | (pc.state == CellState.MANUAL)) & ~np.isnat(pc.value)
        if ok.any():
            vals = pc.value[ok]
            lo, hi = np.datetime_as_string(np.array([vals.min(), vals.max()]), unit="s")
            out[name] = (str(lo), str(hi))
    return out


#: Distinct unresolved values a log keeps per column (and their longest kept length).
MAX_UNRESOLVED = 100
MAX_VALUE_CHARS = 60
#: Largest table whose row keys a log keeps (about 150 kB of JSON for short keys).
MAX_KEYS = 10_000


#: Distinct shapes of unresolved values a log keeps per column.
MAX_SHAPES = 200


def _failed_counts(clean: CleanTable) -> dict[str, pd.Series]:
    """Per parsed column: count of each distinct trimmed raw value no pattern read, most
    frequent first."""
    from .rowkey import cells_text

    out: dict[str, pd.Series] = {}
    for name, pc in clean.parsed.items():
        rows = np.flatnonzero(pc.state == CellState.FAILED)
        if len(rows) and name in clean.raw:
            counts = cells_text(clean.raw.column(name), rows).value_counts()
            out[name] = counts.sort_index(kind="stable").sort_values(ascending=False, kind="stable")
    return out


def unresolved_values(clean: CleanTable) -> dict[str, tuple[str, ...]]:
    """The most frequent distinct raw values of the cells no pattern read, per parsed column."""
    out: dict[str, tuple[str, ...]] = {}
    for name, counts in _failed_counts(clean).items():
        values = [str(v)[:MAX_VALUE_CHARS] for v in counts.index[:MAX_UNRESOLVED]]
        out[name] = tuple(dict.fromkeys(values))
    return out


def unresolved_shapes(clean: CleanTable) -> dict[str, tuple[str, ...]]:
    """The shapes (see ``replay.shape_of``) of every unresolved value, per parsed column."""
    from .replay import shape_of

    out: dict[str, tuple[str, ...]] = {}
    for name, counts in _failed_counts(clean).items():
        shapes = pd.Series(counts.to_numpy(), index=[shape_of(str(v)) for v in counts.index])
        ranked = (
            shapes.groupby(level=0, sort=True).sum().sort_values(ascending=False, kind="stable")
        )
        out[name] = tuple(str(s) for s in ranked.index[:MAX_SHAPES])
    return out


def _now() -> str:
    return _dt.datetime.now(_dt.UTC).replace(microsecond=0).isoformat().replace("+00:00", "Z")


@dataclass(frozen=True)
class FixLog:
    """Ordered fix steps plus facts about the file they were made on. Immutable: every edit
    returns a new log, so an undo history is a list of logs."""

    entries: tuple[LogEntry, ...] = ()
    source: LogSource | None = None
    key_column: str | None = None
    created: str = field(default_factory=_now)
    datemend_version: str = __version__
    notes: tuple[str, ...] = ()

    # ---- reading the log
    def __len__(self) -> int:
        return len(self.entries)

    @property
    def steps(self) -> tuple[Step, ...]:
        """The enabled steps, in order."""
        return tuple(e.step for e in self.entries if e.enabled)

    def blank_tokens(self, column: str) -> set[str]:
        """Tokens (case-folded) this log treats as blank in ``column``."""
        from .steps import BlankTokens, ReadDates

        out: set[str] = set()
        for s in self.steps:
            if isinstance(s, ReadDates) and s.column == column:
                out |= {t.strip().casefold() for t in s.spec.blank_tokens}
            elif isinstance(s, BlankTokens) and (not s.columns or column in s.columns):
                out |= {t.strip().casefold() for t in s.tokens}
        return out

    # ---- edits (each returns a new log)
    def evolve(self, **changes: Any) -> FixLog:
        return dataclasses.replace(self, **changes)

    def _with(self, entries: Iterable[LogEntry]) -> FixLog:
        return self.evolve(entries=tuple(entries))

    def add(self, step: Step, index: int | None = None, *, enabled: bool = True) -> FixLog:
        items = list(self.entries)
        items.insert(len(items) if index is None else index, LogEntry(step, enabled))
        return self._with(items)

    def remove(self, index: int) -> FixLog:
        items = list(self.entries)
        del items[index]
        return self._with(items)

    def replace(self, index: int, step: Step) -> FixLog:
        items = list(self.entries)
        items[index] = LogEntry(step, items[index].enabled)
        return self._with(items)

    def set_enabled(self, index: int, enabled: bool) -> FixLog:
        items = list(self.entries)
        items[index] = LogEntry(items[index].step, enabled)
        return self._with(items)

    def move(self, src: int, dst: int) -> FixLog:
        """Move the step at ``src`` so that it ends up at position ``dst``."""
        items = list(self.entries)
        item = items.pop(src)
        items.insert(dst, item)
        return self._with(items)

    def with_columns_renamed(self, mapping: dict[str, str]) -> FixLog:
        """The log with its steps reading the new names of renamed columns (e.g. the likely
        matches of a drift report); the source facts follow the new names too."""
        entries = tuple(
            LogEntry(e.step.with_columns_renamed(mapping), e.enabled) for e in self.entries
        )
        key = mapping.get(self.key_column, self.key_column) if self.key_column else None
        src = self.source
        if src is not None:
            src = dataclasses.replace(
                src,
                columns=tuple(mapping.get(c, c) for c in src.columns),
                ranges={mapping.get(k, k): v for k, v in src.ranges.items()},
                unresolved={mapping.get(k, k): v for k, v in src.unresolved.items()},
                unresolved_shapes={mapping.get(k, k): v for k, v in src.unresolved_shapes.items()},
            )
        return self.evolve(entries=entries, key_column=key, source=src)

    def with_source(self, clean: CleanTable) -> FixLog:
        """The log with facts (and value ranges) taken from the table it was made on."""
        return self.evolve(source=LogSource.of(clean))

    # ---- JSON
    def to_dict(self) -> dict[str, Any]:
        return {
            "format": FORMAT,
            "version": VERSION,
            "datemend_version": self.datemend_version,
            "created": self.created,
            "source": None if self.source is None else self.source.to_dict(),
            "key_column": self.key_column,
            "notes": list(self.notes),
            "steps": [{"enabled": e.enabled, "step": e.step.to_dict()} for e in self.entries],
        }

    def to_json(self) -> str:
        return json.dumps(self.to_dict(), indent=2, ensure_ascii=False) + "\n"

    def save(self, path: str | Path) -> None:
        """Write the log as UTF-8 JSON, atomically (temporary file in the folder, then moved)."""
        path = Path(path)
        data = self.to_json().encode("utf-8")
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
            os.replace(tmp, path)
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise

    @classmethod
    def from_dict(cls, d: Any, name: str = "the fix log") -> FixLog:
        """Validate JSON data and build the log; every problem is one FixLogError."""
        load_step_kinds()
        _check_envelope(d, name)
        entries = []
        for i, item in enumerate(d["steps"], start=1):
            entries.append(LogEntry(_build_step(item["step"], i, name), item.get("enabled", True)))
        try:
            source = None if d.get("source") is None else LogSource.from_dict(d["source"])
        except (TypeError, ValueError) as err:
            raise FixLogError(f'{name}: field "source" is not valid ({err}).', name) from None
        return cls(
            entries=tuple(entries),
            source=source,
            key_column=d.get("key_column"),
            created=d.get("created", ""),
            datemend_version=d.get("datemend_version", ""),
            notes=tuple(d.get("notes", ())),
        )

    @classmethod
    def loads(cls, text: str | bytes, name: str = "the fix log") -> FixLog:
        """Read a log from JSON text; refuses oversized or too deeply nested input."""
        if len(text) > MAX_BYTES:
            raise FixLogError(
                f"{name} is larger than {MAX_BYTES // (1024 * 1024)} MB, too big for a fix "
                "log; it was not read.",
                name,
            )
        if isinstance(text, bytes):
            try:
                text = text.decode("utf-8-sig")
            except UnicodeDecodeError as err:
                raise FixLogError(
                    f"{name} is not UTF-8 text (byte {err.start}); it is not a fix log.", name
                ) from None
        return cls.from_dict(_parse_json(text, name), name)

    @classmethod
    def load(cls, path: str | Path) -> FixLog:
        """Read a log file (see ``loads``); the error names the file."""
        path = Path(path)
        name = path.name
        try:
            if path.stat().st_size > MAX_BYTES:
                raise FixLogError(
                    f"{name} is larger than {MAX_BYTES // (1024 * 1024)} MB, too big for a fix "
                    "log; it was not read.",
                    str(path),
                )
            with path.open("rb") as fh:
                data = fh.read(MAX_BYTES + 1)
        except OSError as err:
            raise FixLogError(f"{name} could not be opened ({err.strerror}).", str(path)) from None
        try:
            return cls.loads(data, name)
        except FixLogError as err:
            err.path = str(path)
            raise


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


def _parse_json(text: str, name: str) -> Any:
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


def _check_envelope(d: Any, name: str) -> None:
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


def _build_step(d: dict[str, Any], number: int, name: str) -> Step:
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


_APPLY = ("apply_entry", "apply_log", "apply_run", "apply_to_dataframe", "auto_fix")
_APPLY += ("known_names", "make_auto_log")


def __getattr__(name: str) -> Any:
    # Applying lives in applylog.py and replaying in replay.py (both import this module); they
    # are reachable from here too, as ``fixlog.apply_log``, ``fixlog.replay`` and so on.
    if name in _APPLY:
        from . import applylog

        return getattr(applylog, name)
    if name in ("replay", "ReplayReport", "drift_report"):
        from . import replay as _replay

        return getattr(_replay, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
