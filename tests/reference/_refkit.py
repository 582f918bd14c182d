"""Shared helpers for the reference tests: run a column through the public engine path.

The path is the one a user takes: a RawColumn → ``scan_column`` → best suggestion's spec →
``parse_column``. Nothing here depends on the engine's internal pattern ids.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from datemend.core.clean import NAIVE, CellState, ParsedColumn
from datemend.core.infer import scan_column
from datemend.core.parse import parse_column
from datemend.core.report import ColumnReport
from datemend.core.spec import ParseSpec
from datemend.core.table import CellKind, RawColumn, SourceFacts, kinds_of

__all__ = [
    "NAIVE",
    "CellState",
    "Run",
    "as_us",
    "assert_unique",
    "column",
    "run",
]


def column(
    values: Sequence[Any], kinds: Sequence[CellKind] | None = None, name: str = "c"
) -> RawColumn:
    """A RawColumn of the given values; kinds from the values' Python types unless given."""
    arr = np.empty(len(values), dtype=object)
    arr[:] = list(values)
    k = kinds_of(arr) if kinds is None else np.asarray([int(x) for x in kinds], dtype=np.int8)
    return RawColumn(name, arr, k)


@dataclass
class Run:
    """One column scanned and parsed with the best suggestion (or a spec derived from it)."""

    col: RawColumn
    report: ColumnReport
    spec: ParseSpec | None
    parsed: ParsedColumn | None

    def state(self, i: int) -> CellState:
        assert self.parsed is not None, "the scan gave no suggestion at all"
        return CellState(int(self.parsed.state[i]))

    def value(self, i: int) -> np.datetime64:
        assert self.parsed is not None
        return self.parsed.value[i]

    def utc(self, i: int) -> np.datetime64:
        assert self.parsed is not None
        return self.parsed.utc()[i]

    def offset(self, i: int) -> int:
        assert self.parsed is not None
        return int(self.parsed.offset_min[i])

    def reason(self, i: int) -> str | None:
        assert self.parsed is not None
        return self.parsed.reason[i]

    def describe(self, i: int) -> str:
        """Everything about cell i, for assertion messages."""
        if self.parsed is None:
            return f"{self.col.values[i]!r}: no suggestion (report: {self.report.summary!r})"
        return (
            f"{self.col.values[i]!r}: state={self.state(i).name} value={self.value(i)} "
            f"offset={self.offset(i)} reason={self.reason(i)!r} "
            f"spec={self.spec}"
        )


def run(
    values: Sequence[Any],
    *,
    kinds: Sequence[CellKind] | None = None,
    name: str = "c",
    facts: SourceFacts | None = None,
    prefer_day_order: str | None = None,
    reference_year: int | None = None,
    spec_from: Sequence[Any] | None = None,
    spec_from_kinds: Sequence[CellKind] | None = None,
    **spec_changes: Any,
) -> Run:
    """Scan ``values`` (or ``spec_from``, a column that decides the spec), then parse ``values``.

    ``spec_changes`` are applied to the chosen spec with ``dataclasses.replace`` (for example
    ``day_order="dmy"``), the way a user's choice would be.
    """
    col = column(values, kinds, name)
    scan_col = col if spec_from is None else column(spec_from, spec_from_kinds, name)
    report = scan_column(
        scan_col, facts, prefer_day_order=prefer_day_order, reference_year=reference_year
    )
    if report.best is None:
        return Run(col, report, None, None)
    spec = report.best.spec
    if spec_changes:
        spec = replace(spec, **spec_changes)
    return Run(col, report, spec, parse_column(col, spec, facts))


def as_us(value: dt.datetime | dt.date | str) -> np.datetime64:
    """A reference datetime as numpy datetime64[us] (naive wall clock)."""
    if isinstance(value, dt.datetime) and value.tzinfo is not None:
        value = value.astimezone(dt.UTC).replace(tzinfo=None)
    if isinstance(value, dt.date) and not isinstance(value, dt.datetime):
        value = dt.datetime(value.year, value.month, value.day)
    if isinstance(value, dt.datetime):
        value = value.isoformat()
    return np.datetime64(value, "us")


def assert_unique(rows: Iterable[Sequence[Any]]) -> None:
    """Table-driven tests: no input appears twice (the first field of each row is the input)."""
    seen: set[Any] = set()
    for row in rows:
        key = row[0] if not isinstance(row[0], list) else tuple(row[0])
        key = (type(key), key)
        assert key not in seen, f"input {row[0]!r} appears twice in the table"
        seen.add(key)
