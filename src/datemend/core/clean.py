"""CleanTable: the raw table with parsed date columns beside it, and a state for every cell.

A ParsedColumn is a set of parallel numpy arrays, one slot per row, so the table model in the
window, the exporters and replay read them without per-cell Python work.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from enum import IntEnum

import numpy as np
import pandas as pd

from .table import RawTable

__all__ = ["NAIVE", "CellState", "CleanTable", "DerivedColumn", "ParsedColumn"]

#: ``offset_min`` value of a naive cell (no UTC offset written).
NAIVE = np.iinfo(np.int32).min


class CellState(IntEnum):
    """What became of one cell of a date column."""

    BLANK = 0  # empty, or a placeholder token treated as blank
    PARSED = 1  # read as a date by a pattern
    FAILED = 2  # no pattern reads it, or it names a day that does not exist; ``reason`` says why
    AMBIGUOUS = 3  # readable in more than one way that gives different dates; nothing chosen
    MANUAL = 4  # value set by hand (a recorded step)


@dataclass(frozen=True, eq=False)
class ParsedColumn:
    """Parsed values of one source column, row-aligned with the RawTable.

    - ``value``: ``datetime64[us]`` wall-clock value as written (NaT where there is none);
      microsecond units keep years 1–9999 (pandas' nanosecond range is far narrower).
    - ``offset_min``: int32 minutes east of UTC, or ``NAIVE`` where no offset was written.
    - ``has_time``: bool, whether the cell carried a time of day.
    - ``state``: int8 ``CellState``.
    - ``pattern``: int16 index into ``patterns`` (-1 where no pattern applied).
    - ``reason``: object array, a sentence for FAILED/AMBIGUOUS/BLANK-by-token cells, else None.
    - ``labels``: a short human label for each of ``patterns`` ("D/M/YYYY", "serial 1900"), or
      () where none was worked out (show the pattern ids then).
    """

    source: str
    value: np.ndarray
    offset_min: np.ndarray
    has_time: np.ndarray
    state: np.ndarray
    pattern: np.ndarray
    patterns: tuple[str, ...]
    reason: np.ndarray
    name: str | None = None  # output column name; None means the source name
    date_only: bool = False  # a step dropped the time part
    labels: tuple[str, ...] = ()

    def pattern_label(self, i: int) -> str:
        """The human label of pattern ``i`` (its id when there is no label); "" for -1."""
        if not 0 <= i < len(self.patterns):
            return ""
        return self.labels[i] if len(self.labels) == len(self.patterns) else self.patterns[i]

    @property
    def output_name(self) -> str:
        return self.name or self.source

    def __len__(self) -> int:
        return len(self.value)

    @classmethod
    def empty(cls, source: str, n: int) -> ParsedColumn:
        return cls(
            source=source,
            value=np.full(n, np.datetime64("NaT"), dtype="datetime64[us]"),
            offset_min=np.full(n, NAIVE, dtype=np.int32),
            has_time=np.zeros(n, dtype=bool),
            state=np.full(n, CellState.FAILED, dtype=np.int8),
            pattern=np.full(n, -1, dtype=np.int16),
            patterns=(),
            reason=np.full(n, None, dtype=object),
        )

    def evolve(self, **changes: object) -> ParsedColumn:
        """A copy with some fields replaced (arrays are shared unless replaced)."""
        return replace(self, **changes)  # type: ignore[arg-type]

    def counts(self) -> dict[str, int]:
        """Number of cells in each state, by lower-case state name."""
        c = np.bincount(self.state.astype(np.int64), minlength=len(CellState))
        return {s.name.lower(): int(c[s]) for s in CellState}

    def utc(self) -> np.ndarray:
        """Values moved to UTC where an offset is known; naive values unchanged."""
        aware = self.offset_min != NAIVE
        out = self.value.copy()
        out[aware] = self.value[aware] - self.offset_min[aware].astype("timedelta64[m]")
        return out

    def problems(self) -> np.ndarray:
        """Bool mask of cells that need the user's eye (failed or ambiguous)."""
        return (self.state == CellState.FAILED) | (self.state == CellState.AMBIGUOUS)


@dataclass(frozen=True, eq=False)
class DerivedColumn:
    """A column computed from others by a step (span, age, calendar part ...)."""

    name: str
    values: pd.Series  # row-aligned; nullable dtypes (Int64, string, datetime64[us]) for gaps
    step_index: int | None = None
    note: str | None = None  # e.g. a caution shown beside age columns


@dataclass(frozen=True, eq=False)
class CleanTable:
    """The result of applying a fix log to a RawTable. Never mutated: steps return new ones."""

    raw: RawTable
    parsed: dict[str, ParsedColumn] = field(default_factory=dict)  # by source column name
    derived: dict[str, DerivedColumn] = field(default_factory=dict)  # by output name, in order
    rule_hits: dict[str, np.ndarray] = field(default_factory=dict)  # rule label -> bool mask
    warnings: tuple[str, ...] = ()
    key_column: str | None = None  # column whose values identify rows (hand-set cells)

    def evolve(self, **changes: object) -> CleanTable:
        return replace(self, **changes)  # type: ignore[arg-type]

    def with_parsed(self, col: ParsedColumn) -> CleanTable:
        parsed = dict(self.parsed)
        parsed[col.source] = col
        return self.evolve(parsed=parsed)

    def with_warning(self, text: str) -> CleanTable:
        return self.evolve(warnings=(*self.warnings, text))

    def values_of(self, name: str) -> pd.Series:
        """A column by output name as a pandas Series: parsed dates, derived values, or raw."""
        for col in self.parsed.values():
            if col.output_name == name:
                return pd.Series(col.value, name=name)
        if name in self.derived:
            return self.derived[name].values
        if name in self.raw:
            return pd.Series(self.raw.column(name).values, name=name, dtype=object)
        raise KeyError(f'{self.raw.facts.where()} has no column "{name}"')

    def to_dataframe(self, *, keep_raw: bool = False) -> pd.DataFrame:
        """Raw columns with each parsed one replaced by its dates (unresolved cells: NaT) and
        derived columns appended; with ``keep_raw`` the raw text stays beside each parsed one."""
        out: dict[str, pd.Series] = {}
        for rc in self.raw.columns:
            pc = self.parsed.get(rc.name)
            if pc is None:
                out[rc.name] = pd.Series(rc.values, dtype=object)
                continue
            if keep_raw:
                out[f"{rc.name} (raw)"] = pd.Series(rc.values, dtype=object)
            out[pc.output_name] = pd.Series(pc.value)
        for name, dc in self.derived.items():
            out[name] = dc.values.reset_index(drop=True)
        return pd.DataFrame(out)
