"""Fix steps: small frozen dataclasses, each a pure, row-local change to a CleanTable.

A step's fields are its parameters and its JSON form; ``apply`` never infers anything (that
happened before the step was made), so replaying a log gives the same result on a whole file or
on any partition of it. Register new step kinds with ``@register_step``.

The base class turns dataclass fields into JSON and back, and builds the JSON Schema, from the
fields' type hints (str, int, float, bool, ``X | None``, ``tuple[X, ...]``, ``dict[str, X]``,
``Literal[...]``, ``datetime.date``, ``ParseSpec``). A field may add schema keywords with
``field(metadata={"schema": {...}})``. So a new step kind is a dataclass, ``kind``, ``apply`` and
``describe``; nothing else is needed unless its fields are unusual.

The core kinds are in this module: ``read-dates``, ``blank-tokens``, ``set-cell``, ``date-part``
and ``rename-column``.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, ClassVar, TypeVar

import numpy as np
import pandas as pd

from .clean import NAIVE, CellState, CleanTable
from .parse import parse_column
from .spec import ParseSpec
from .stepjson import dataclass_schema, field_hints, from_json, to_json
from .table import CellKind

__all__ = [
    "STEP_TYPES",
    "ApplyContext",
    "BlankTokens",
    "DatePart",
    "FieldValueError",
    "ReadDates",
    "RenameColumn",
    "SetCell",
    "Step",
    "dataclass_schema",
    "manual_value",
    "register_step",
    "step_from_dict",
]


@dataclass(frozen=True)
class ApplyContext:
    """Facts a step may need that are not in the table: "today" for steps whose reference date is
    the day of replay, and the key column chosen for the run."""

    today: _dt.date = field(default_factory=_dt.date.today)
    key_column: str | None = None


class FieldValueError(ValueError):
    """A step parameter that its type allows but its meaning does not; names the field."""

    def __init__(self, field_name: str, message: str) -> None:
        super().__init__(message)
        self.field = field_name


# ----------------------------------------------------------------------------- base class


class Step:
    """Base of every fix step. Subclasses are ``@dataclass(frozen=True)`` and set ``kind``.

    ``to_dict``/``from_dict``/``schema`` work from the dataclass fields; override them only for
    fields the type hints cannot describe.
    """

    kind: ClassVar[str] = ""

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        raise NotImplementedError

    def describe(self) -> str:
        """The one sentence the fix-log panel shows."""
        raise NotImplementedError

    def columns_read(self) -> tuple[str, ...]:
        """Source or output column names this step needs."""
        return ()

    def with_columns_renamed(self, mapping: dict[str, str]) -> Step:
        """This step reading renamed columns: every field value (or tuple item) that is one of
        ``columns_read()`` and a key of ``mapping`` is replaced."""
        read = set(self.columns_read()) & set(mapping)
        if not read:
            return self
        changes: dict[str, Any] = {}
        for f in dataclasses.fields(self):  # type: ignore[arg-type]
            v = getattr(self, f.name)
            if isinstance(v, str) and v in read:
                changes[f.name] = mapping[v]
            elif isinstance(v, tuple) and any(isinstance(x, str) and x in read for x in v):
                changes[f.name] = tuple(mapping.get(x, x) if x in read else x for x in v)
        return dataclasses.replace(self, **changes)  # type: ignore[type-var]

    @classmethod
    def apply_many(cls, table: CleanTable, steps: Sequence[Step], ctx: ApplyContext) -> CleanTable:
        """Apply consecutive steps of this kind; a kind may override it to share work (copying
        arrays once for many hand-set cells). Must equal applying them one by one."""
        for s in steps:
            table = s.apply(table, ctx)
        return table

    def columns_changed(self) -> tuple[str, ...]:
        """Source column names whose parsed values this step may change (for views)."""
        return self.columns_read()

    def to_dict(self) -> dict[str, Any]:
        """JSON form: ``{"kind": self.kind, ...parameters}``; JSON values only."""
        out: dict[str, Any] = {"kind": self.kind}
        for f in dataclasses.fields(self):  # type: ignore[arg-type]
            out[f.name] = to_json(getattr(self, f.name))
        return out

    @classmethod
    def schema(cls) -> dict[str, Any]:
        """JSON Schema of this step's JSON form; the fix log's schema is built from these."""
        sch = dataclass_schema(cls)
        sch["properties"] = {"kind": {"const": cls.kind}, **sch["properties"]}
        sch["required"] = ["kind", *sch["required"]]
        return sch

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> Step:
        hints = field_hints(cls)
        kwargs = {}
        for f in dataclasses.fields(cls):  # type: ignore[arg-type]
            if f.init and f.name in d:
                try:
                    kwargs[f.name] = from_json(d[f.name], hints[f.name])
                except (ValueError, TypeError) as err:
                    raise FieldValueError(f.name, str(err)) from None
        return cls(**kwargs)


S = TypeVar("S", bound=type[Step])

#: Every step kind by its JSON name.
STEP_TYPES: dict[str, type[Step]] = {}


def register_step(cls: S) -> S:
    if not cls.kind:
        raise TypeError(f"{cls.__name__} has no kind")
    if cls.kind in STEP_TYPES and STEP_TYPES[cls.kind] is not cls:
        raise TypeError(f"step kind {cls.kind!r} registered twice")
    STEP_TYPES[cls.kind] = cls
    return cls


def step_from_dict(d: dict[str, Any]) -> Step:
    """Build a step from its JSON form (validated beforehand by the fix log's schema)."""
    kind = d.get("kind")
    if kind not in STEP_TYPES:
        raise KeyError(kind)
    return STEP_TYPES[kind].from_dict(d)


# ------------------------------------------------------------------------------ helpers


def _not_read(table: CleanTable, column: str, what: str) -> CleanTable:
    return _warn(table, f'"{column}" is not read as dates, so {what} did nothing.')


def _warn(table: CleanTable, text: str) -> CleanTable:
    return table if text in table.warnings else table.with_warning(text)


def _token_cells(table: CleanTable, column: str, wanted: set[str]) -> np.ndarray:
    """Which cells of a column hold one of the ``wanted`` tokens (trimmed, case-folded). Each
    distinct text is checked once, through the engine's per-column distinct values when the
    column has only text and number cells (what a token can be)."""
    from .parse import distinct_texts
    from .rowkey import column_text

    raw = table.raw.column(column)
    hit = np.zeros(len(raw), dtype=bool)
    if np.isin(raw.kinds, _TOKEN_KINDS).all():
        rows, codes, uniques = distinct_texts(raw)
        hit_u = np.array([str(u).strip().casefold() in wanted for u in uniques], dtype=bool)
        if len(rows):
            hit[rows] = hit_u[codes]
        return hit
    codes, uniques = pd.factorize(column_text(raw))
    hit_u = np.array([str(u).casefold() in wanted for u in uniques], dtype=bool)
    known = codes >= 0
    hit[known] = hit_u[codes[known]]
    return hit


#: Kinds of cells ``distinct_texts`` covers (empty cells hold no token: "" is never one).
_TOKEN_KINDS = np.array(
    [CellKind.EMPTY, CellKind.TEXT, CellKind.INT, CellKind.FLOAT, CellKind.ERROR], dtype=np.int8
)


def manual_value(value: str) -> tuple[np.datetime64, int, bool]:
    """An ISO 8601 date or date-time typed by hand → (wall-clock value, offset minutes or NAIVE,
    has time). Raises ValueError naming the value if it is not one."""
    text = value.strip()
    try:
        if len(text) <= 10:
            d = _dt.date.fromisoformat(text)
            return np.datetime64(d.isoformat(), "us"), NAIVE, False
        dt = _dt.datetime.fromisoformat(text)
    except ValueError:
        raise ValueError(f'"{value}" is not an ISO 8601 date or date-time') from None
    off = dt.utcoffset()
    offset = NAIVE if off is None else int(off.total_seconds() // 60)
    naive = dt.replace(tzinfo=None)
    return np.datetime64(naive.isoformat(), "us"), offset, True


def _is_row_number(key: str) -> bool:
    """ASCII digits only (str.isdigit also accepts "²" and other scripts' digits), short enough
    for an int64."""
    return key.isascii() and key.isdigit() and 0 < len(key) <= 18


def _is_zone(name: str) -> bool:
    """An IANA zone key that zoneinfo (with tzdata) knows; "UTC" included."""
    import zoneinfo

    try:
        zoneinfo.ZoneInfo(name)
    except (zoneinfo.ZoneInfoNotFoundError, ValueError, OSError):
        return False
    return True


def _spec_words(spec: ParseSpec) -> str:
    words = []
    if spec.day_order == "dmy":
        words.append("day before month")
    elif spec.day_order == "mdy":
        words.append("month before day")
    if spec.century == "past":
        words.append(f"two-digit years not after {spec.pivot_year}")
    elif spec.century == "either":
        words.append(
            f"two-digit years left unclear where the POSIX rule and not-after-{spec.pivot_year} "
            "differ"
        )
    if spec.date_system == 1904:
        words.append("1904 date system")
    if spec.zone:
        words.append(f"times moved to {spec.zone}")
    return f" ({', '.join(words)})" if words else ""


# ---------------------------------------------------------------------------- core kinds


@register_step
@dataclass(frozen=True)
class ReadDates(Step):
    """Read a column as dates with a ParseSpec (usually an accepted suggestion)."""

    kind: ClassVar[str] = "read-dates"
    column: str = field(metadata={"schema": {"minLength": 1}})
    spec: ParseSpec
    label: str = ""  # the suggestion's label, for the sentence

    def __post_init__(self) -> None:
        from .patterns import PATTERNS

        unknown = [p for p in self.spec.patterns if p not in PATTERNS]
        if unknown:
            raise FieldValueError(
                "spec.patterns", f'"{unknown[0]}" is not a pattern this datemend knows'
            )
        for name in ("zone", "naive_zone"):
            zone = getattr(self.spec, name)
            if zone is not None and not _is_zone(zone):
                raise FieldValueError(f"spec.{name}", f'"{zone}" is not an IANA time zone name')

    def columns_read(self) -> tuple[str, ...]:
        return (self.column,)

    def describe(self) -> str:
        how = self.label or " · ".join(self.spec.patterns) or "no patterns"
        return f'Read "{self.column}" as dates: {how}{_spec_words(self.spec)}.'

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        if self.column not in table.raw:
            return _warn(table, f'Column "{self.column}" is not in the file; not read as dates.')
        col = parse_column(table.raw.column(self.column), self.spec, table.raw.facts)
        return table.with_parsed(col)


@register_step
@dataclass(frozen=True)
class BlankTokens(Step):
    """Treat the given tokens (trimmed, any case) as blank cells; hand-set cells stay."""

    kind: ClassVar[str] = "blank-tokens"
    tokens: tuple[str, ...] = field(metadata={"schema": {"minItems": 1}})
    columns: tuple[str, ...] = ()  # () means every column read as dates

    def columns_read(self) -> tuple[str, ...]:
        return self.columns

    def describe(self) -> str:
        toks = ", ".join(f'"{t}"' for t in self.tokens)
        where = ", ".join(f'"{c}"' for c in self.columns) or "every date column"
        return f"Treat {toks} as blank in {where}."

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        wanted = {t.strip().casefold() for t in self.tokens}
        targets = self.columns or tuple(table.parsed)
        for name in targets:
            pc = table.parsed.get(name)
            if pc is None:
                table = _not_read(table, name, "treating tokens as blank")
                continue
            hit = _token_cells(table, name, wanted)
            hit &= pc.state != CellState.MANUAL
            if not hit.any():
                continue
            reason = pc.reason.copy()
            reason[hit] = "treated as blank (a placeholder token)"
            table = table.with_parsed(
                pc.evolve(
                    value=np.where(hit, np.datetime64("NaT", "us"), pc.value),
                    offset_min=np.where(hit, NAIVE, pc.offset_min).astype(np.int32),
                    has_time=pc.has_time & ~hit,
                    state=np.where(hit, CellState.BLANK, pc.state).astype(np.int8),
                    pattern=np.where(hit, -1, pc.pattern).astype(np.int16),
                    reason=reason,
                )
            )
        return table


@register_step
@dataclass(frozen=True)
class SetCell(Step):
    """Set one cell by hand. The row is found by its value in ``key_column`` (or, when that is
    None, by its 1-based source row number). With ``raw`` recorded, the cell is set only while
    its raw text is still that, so a corrected source value is never overwritten silently."""

    kind: ClassVar[str] = "set-cell"
    column: str = field(metadata={"schema": {"minLength": 1}})
    key: str
    value: str | None  # ISO 8601 date or date-time; None sets the cell blank by hand
    key_column: str | None = None
    raw: str | None = None
    note: str = ""

    def __post_init__(self) -> None:
        if self.value is not None:
            try:
                manual_value(self.value)
            except ValueError as err:
                raise FieldValueError("value", str(err)) from None
        if self.key_column is None and not _is_row_number(self.key):
            raise FieldValueError("key", f'a row number must be 1 to 18 digits, not "{self.key}"')

    def columns_read(self) -> tuple[str, ...]:
        cols = (self.column,)
        return cols if self.key_column is None else (*cols, self.key_column)

    def columns_changed(self) -> tuple[str, ...]:
        return (self.column,)

    def where(self) -> str:
        if self.key_column is None:
            return f"row {self.key}"
        return f'the row whose "{self.key_column}" is "{self.key}"'

    def describe(self) -> str:
        to = "blank" if self.value is None else self.value
        tail = " (found by row number)" if self.key_column is None else ""
        return f'Set "{self.column}" in {self.where()} to {to} by hand{tail}.'

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        return SetCell.apply_many(table, [self], ctx)

    @classmethod
    def apply_many(cls, table: CleanTable, steps: Sequence[Step], ctx: ApplyContext) -> CleanTable:
        """Set many cells, copying each column's arrays once."""
        from .rowkey import prefetch_rows

        copies: dict[str, dict[str, np.ndarray]] = {}
        by_key: dict[str | None, list[str]] = {}
        for step in steps:
            assert isinstance(step, SetCell)
            by_key.setdefault(step.key_column, []).append(step.key)
        for key_column, keys in by_key.items():
            prefetch_rows(table.raw, key_column, keys)
        for step in steps:
            assert isinstance(step, SetCell)
            table, row = step._locate(table)
            if row is None:
                continue
            arrays = copies.get(step.column)
            if arrays is None:
                pc = table.parsed[step.column]
                arrays = {n: getattr(pc, n).copy() for n in _CELL_ARRAYS}
                copies[step.column] = arrays
            step._write(arrays, row)
        for name, arrays in copies.items():
            table = table.with_parsed(table.parsed[name].evolve(**arrays))
        return table

    def _locate(self, table: CleanTable) -> tuple[CleanTable, int | None]:
        """(table with any warning, row position) — None when the cell cannot be placed."""
        from .rowkey import cells_text, find_rows

        if self.column not in table.parsed:
            return _not_read(table, self.column, f"setting {self.where()} by hand"), None
        if self.key_column is None:
            table = _warn(
                table,
                f'Hand-set cells in "{self.column}" are found by row number (no key column): '
                "they land on other rows if rows are added, removed or sorted.",
            )
        elif self.key_column not in table.raw:
            text = (
                f'Key column "{self.key_column}" is not in the file; '
                f'the hand-set "{self.column}" of "{self.key}" was not applied.'
            )
            return _warn(table, text), None
        rows = find_rows(table.raw, self.key_column, self.key)
        if len(rows) != 1:
            why = "is gone" if len(rows) == 0 else f"matches {len(rows)} rows"
            text = (
                f'The hand-set "{self.column}" of {self.where()} was not applied: that key {why}.'
            )
            return _warn(table, text), None
        r = int(rows[0])
        if self.raw is not None:
            now = cells_text(table.raw.column(self.column), [r]).iat[0]
            if now != self.raw.strip():
                text = (
                    f'The hand-set "{self.column}" of {self.where()} was not applied: its raw '
                    f'value changed from "{self.raw}" to "{now}".'
                )
                return _warn(table, text), None
        return table, r

    def _write(self, arrays: dict[str, np.ndarray], r: int) -> None:
        if self.value is None:
            arrays["value"][r] = np.datetime64("NaT", "us")
            arrays["offset_min"][r], arrays["has_time"][r] = NAIVE, False
            arrays["state"][r] = CellState.BLANK
        else:
            v, off, has_time = manual_value(self.value)
            arrays["value"][r], arrays["offset_min"][r], arrays["has_time"][r] = v, off, has_time
            arrays["state"][r] = CellState.MANUAL
        arrays["pattern"][r] = -1
        arrays["reason"][r] = self.note or "set by hand"


_CELL_ARRAYS = ("value", "offset_min", "has_time", "state", "pattern", "reason")


@register_step
@dataclass(frozen=True)
class DatePart(Step):
    """Keep only the calendar date of each value, as written (any offset is dropped)."""

    kind: ClassVar[str] = "date-part"
    column: str = field(metadata={"schema": {"minLength": 1}})

    def columns_read(self) -> tuple[str, ...]:
        return (self.column,)

    def describe(self) -> str:
        return f'Keep only the date of "{self.column}" (times and offsets dropped).'

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        pc = table.parsed.get(self.column)
        if pc is None:
            return _not_read(table, self.column, "keeping the date part")
        return table.with_parsed(
            pc.evolve(
                value=pc.value.astype("datetime64[D]").astype("datetime64[us]"),
                offset_min=np.full(len(pc), NAIVE, dtype=np.int32),
                has_time=np.zeros(len(pc), dtype=bool),
                date_only=True,
            )
        )


@register_step
@dataclass(frozen=True)
class RenameColumn(Step):
    """Give a parsed column another name in the output (the raw column keeps its own)."""

    kind: ClassVar[str] = "rename-column"
    column: str = field(metadata={"schema": {"minLength": 1}})
    name: str = field(metadata={"schema": {"minLength": 1, "pattern": r"\S"}})

    def columns_read(self) -> tuple[str, ...]:
        return (self.column,)

    def describe(self) -> str:
        return f'Name the parsed "{self.column}" "{self.name}" in the output.'

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        pc = table.parsed.get(self.column)
        if pc is None:
            return _not_read(table, self.column, f'renaming it "{self.name}"')
        taken = set(table.derived)
        for other in table.raw.names:
            if other != self.column:
                opc = table.parsed.get(other)
                taken.add(other if opc is None else opc.output_name)
        if self.name in taken:
            return _warn(
                table,
                f'"{self.column}" was not renamed: "{self.name}" is already a '
                "column of the output.",
            )
        return table.with_parsed(pc.evolve(name=self.name))
