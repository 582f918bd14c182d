"""The human label of each pattern a parsed column was read with (what the window's Pattern
column and its pattern groups show instead of the engine's ids). Each cell's date is checked
against Python's ``datetime.strptime`` (the reference library); the labels follow the
strftime-like notation the readings use (D day, M month, YY/YYYY year)."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd

from datemend.core.clean import CellState
from datemend.core.parse import parse_column
from datemend.core.spec import ParseSpec
from datemend.core.table import RawTable


def _column(values: list[object]):
    return RawTable.from_dataframe(pd.DataFrame({"When": values})).column("When")


def _days(parsed) -> list[dt.date | None]:
    return [None if np.isnat(d) else d.astype(dt.date) for d in parsed.value.astype("M8[D]")]


def test_a_pattern_is_named_in_the_column_s_day_order_and_year_width():
    col = _column(["23/06/1960", "05/11/87", "2024-02-29", "26/05/13", "garbage"])
    spec = ParseSpec(patterns=("num-slash", "iso-date"), day_order="dmy", pivot_year=2026)
    got = parse_column(col, spec)
    assert _days(got)[:3] == [
        dt.datetime.strptime("23/06/1960", "%d/%m/%Y").date(),
        dt.date(1987, 11, 5),  # "05/11/87": day first, 1987 (not after 2026)
        dt.date.fromisoformat("2024-02-29"),
    ]
    assert got.state[4] == CellState.FAILED
    i_num, i_iso = got.patterns.index("num-slash"), got.patterns.index("iso-date")
    assert got.pattern_label(i_num) == "D/M/YY or D/M/YYYY"  # both year widths were read
    assert got.pattern_label(i_iso) == "ISO 8601"
    assert got.pattern_label(-1) == ""


def test_one_year_width_and_month_first():
    col = _column(["3/14/1999", "12/25/2001"])
    got = parse_column(col, ParseSpec(patterns=("num-slash",), day_order="mdy"))
    assert _days(got) == [
        dt.datetime.strptime(t, "%m/%d/%Y").date() for t in ("3/14/1999", "12/25/2001")
    ]
    assert got.labels == ("M/D/YYYY",)
    two = parse_column(_column(["3/14/99"]), ParseSpec(patterns=("num-slash",), day_order="mdy"))
    assert two.labels == ("M/D/YY",)


def test_serials_are_named_with_their_date_system():
    col = _column([2225.0, 37287.0])
    got = parse_column(col, ParseSpec(patterns=("serial",), date_system=1904))
    # ISO/IEC 29500-1 §18.17.4 (REFERENCES.md), 1904 system: 2225 is 1910-02-03, 37287 is
    # 2006-02-01.
    assert _days(got) == [dt.date(1910, 2, 3), dt.date(2006, 2, 1)]
    assert got.labels == ("serial 1904",)


def test_without_labels_the_pattern_id_is_shown():
    col = _column(["2024-02-29"])
    got = parse_column(col, ParseSpec(patterns=("iso-date",))).evolve(labels=())
    assert got.pattern_label(0) == "iso-date"


def test_an_undecided_day_order_names_both():
    col = _column(["05/10/2026", "09/10/2026"])
    got = parse_column(col, ParseSpec(patterns=("num-slash",), day_order=None))
    assert set(got.state) == {CellState.AMBIGUOUS}  # 5 October or 10 May: nothing decides
    assert got.labels == ("D/M/YYYY or M/D/YYYY",)
