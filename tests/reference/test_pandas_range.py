"""Dates outside pandas' nanosecond range survive (issue 3 point 9).

Source: pandas documentation (REFERENCES.md): ``datetime64[ns]`` spans 1677-09-21 to 2262-04-11;
values are kept as ``datetime64[us]``. Expected values from Python's datetime (reference library:
``date.fromisoformat``), whose range is years 1–9999.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

from datemend.core.table import CellKind

from ._refkit import CellState, as_us, assert_unique, run

# (ISO text, why)
ROWS = [
    ("0001-01-01", "first day datetime can hold"),
    ("1600-01-01", "before pandas' nanosecond range"),
    ("1677-09-20", "one day before the nanosecond range starts"),
    ("2262-04-12", "one day after the nanosecond range ends"),
    ("9999-12-31", "last day datetime can hold (a common far-future sentinel)"),
]


def test_table_has_no_repeated_input() -> None:
    assert_unique(ROWS)


def test_the_nanosecond_limits() -> None:
    # pandas' own limits (reference library), so the rows above really are outside them.
    assert pd.Timestamp.min.date() == dt.date(1677, 9, 21)
    assert pd.Timestamp.max.date() == dt.date(2262, 4, 11)


@pytest.mark.parametrize(("value", "why"), ROWS, ids=[r[0] for r in ROWS])
def test_iso_text_survives(value: str, why: str) -> None:
    others = ["2024-02-29", "1999-12-31", "2001-09-09"]
    r = run([value, *others])
    assert r.parsed is not None
    assert r.parsed.value.dtype == np.dtype("datetime64[us]")
    assert r.state(0) == CellState.PARSED, why + " — " + r.describe(0)
    assert r.value(0) == as_us(dt.date.fromisoformat(value)), why + " — " + r.describe(0)


def test_datetime_cells_survive() -> None:
    # Real date-time cells at the ends of datetime's range are kept exactly.
    values = [
        dt.datetime(1, 1, 1),
        dt.datetime(9999, 12, 31, 23, 59, 59, 999999),
        dt.datetime(1600, 1, 1, 12),
        dt.datetime(2262, 4, 12),
    ]
    r = run(values, kinds=[CellKind.DATETIME] * len(values))
    for i, v in enumerate(values):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(v), r.describe(i)


def test_numeric_dates_outside_the_range() -> None:
    # D/M/YYYY written the long way for old and sentinel dates (dateutil-free: fields by hand).
    values = ["31/12/9999", "01/01/1600", "13/04/2262", "25/12/0100"]
    expected = [
        dt.date(9999, 12, 31),
        dt.date(1600, 1, 1),
        dt.date(2262, 4, 13),
        dt.date(100, 12, 25),
    ]
    r = run(values)
    for i, want in enumerate(expected):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(want), r.describe(i)
