"""Golden table: spreadsheet serials (1900 and 1904 systems), Unix epochs, and cell kinds
(numbers, real date cells, times, booleans). Serial check values from ISO/IEC 29500-1 §18.17.4
(via REFERENCES.md); epoch values from POSIX "Seconds Since the Epoch" examples; the rest from
Python's datetime arithmetic, as each row says."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest
from _engine_kit import read_with

from datemend.core.clean import NAIVE, CellState
from datemend.core.parse import iso_text, parse_column
from datemend.core.spec import ParseSpec
from datemend.core.table import CellKind, RawColumn, kinds_of

S1900 = ParseSpec(patterns=("serial", "epoch-s", "epoch-ms"))
S1904 = ParseSpec(patterns=("serial",), date_system=1904)
SPECS = {"1900": S1900, "1904": S1904}


def read(values: list[object], spec: ParseSpec, kinds=None) -> list[tuple[str, str]]:
    return read_with(values, spec, kinds, text_only=False)


ROWS = [
    ("1", "1900", "1900-01-01", "ISO/IEC 29500 §18.17.4: serial 1 is 1900-01-01"),
    ("59", "1900", "1900-02-28", "serial 59 is 1900-02-28"),
    ("60", "1900", "FAILED: 29 February 1900, a day that does not exist", "the leap-year quirk"),
    ("61", "1900", "1900-03-01", "from 61 on: 1899-12-30 + N"),
    ("0", "1900", "FAILED: day zero", "serial 0 is 1900-01-00, not a day"),
    ("3687", "1900", "1910-02-03", "ISO/IEC 29500 check value"),
    ("38749", "1900", "2006-02-01", "ISO/IEC 29500 check value"),
    ("2958465", "1900", "9999-12-31", "ISO/IEC 29500 check value (largest)"),
    ("2958466", "1900", "FAILED: after 9999-12-31", "beyond the calendar"),
    ("44927", "1900", "2023-01-01", "date(1899,12,30) + timedelta(44927)"),
    ("44927.0", "1900", "2023-01-01", "trailing .0 of a serial stored as text"),
    ("44927.5", "1900", "2023-01-01T12:00:00", "a fraction is the time of day: noon"),
    ("44927.25", "1900", "2023-01-01T06:00:00", "0.25 day = 06:00"),
    ("0 ", "1904", "1904-01-01", "ISO/IEC 29500: 1904 system serial 0 is 1904-01-01"),
    ("0.5", "1904", "1904-01-01T12:00:00", "1904 system 0.5 is noon of 1904-01-01"),
    ("2225", "1904", "1910-02-03", "ISO/IEC 29500 check value, 1904 system"),
    ("37287", "1904", "2006-02-01", "ISO/IEC 29500 check value, 1904 system"),
    ("2957003", "1904", "9999-12-31", "ISO/IEC 29500 check value, 1904 system"),
    ("60 ", "1904", "1904-03-01", "no quirk in the 1904 system (1904 is a leap year)"),
    ("1000000000", "1900", "2001-09-09T01:46:40+00:00", "POSIX epoch example"),
    ("1234567890", "1900", "2009-02-13T23:31:30+00:00", "POSIX epoch example"),
    ("2147483647", "1900", "2038-01-19T03:14:07+00:00", "largest signed 32-bit value"),
    ("-27723426", "1900", "1969-02-14T03:02:54+00:00", "RFC 5322 App. A.5 instant"),
    ("1234567890123", "1900", "2009-02-13T23:31:30.123000+00:00", "epoch milliseconds"),
    ("1234567890.5", "1900", "2009-02-13T23:31:30.500000+00:00", "epoch with a fraction"),
]


def test_no_input_repeats() -> None:
    keys = [r[0] for r in ROWS]
    assert len(keys) == len(set(keys))


@pytest.mark.parametrize(("text", "system", "expected", "why"), ROWS, ids=[r[0] for r in ROWS])
def test_numbers_table(text: str, system: str, expected: str, why: str) -> None:
    ((state, got),) = read([text], SPECS[system], kinds=[CellKind.TEXT])
    if expected.startswith("FAILED: "):
        assert state == "FAILED", f"{text}: {why}; got {got}"
        assert expected[8:] in got, got
    else:
        assert (state, got) == ("PARSED", expected), why


def test_serials_match_python_date_arithmetic() -> None:
    # Reference: 1899-12-30 + N days for N ≥ 61 (ISO/IEC 29500 §18.17.4), via datetime.
    serials = list(range(61, 80000, 997))
    want = [("PARSED", (dt.date(1899, 12, 30) + dt.timedelta(days=n)).isoformat()) for n in serials]
    assert read([str(n) for n in serials], S1900, kinds=[CellKind.TEXT] * len(serials)) == want
    want04 = [("PARSED", (dt.date(1904, 1, 1) + dt.timedelta(days=n)).isoformat()) for n in serials]
    assert read([str(n) for n in serials], S1904, kinds=[CellKind.TEXT] * len(serials)) == want04


def test_numeric_cells_are_read_like_their_text() -> None:
    # INT and FLOAT cells: the same serial reading as digits written as text.
    got = read([44927, 44927.5, 60], S1900)
    assert got[0] == ("PARSED", "2023-01-01")
    assert got[1] == ("PARSED", "2023-01-01T12:00:00")
    assert got[2][0] == "FAILED" and "29 February 1900" in got[2][1]


def test_real_date_cells_are_kept() -> None:
    values = [
        dt.date(1600, 1, 1),
        dt.datetime(9999, 12, 31, 23, 59, 59),
        dt.datetime(2024, 3, 1, 0, 0),
        dt.datetime(2024, 3, 1, 10, 0, tzinfo=dt.timezone(dt.timedelta(hours=2))),
    ]
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    col = parse_column(RawColumn("c", arr, kinds_of(arr)), S1900)
    assert col.state.tolist() == [CellState.PARSED] * 4
    assert iso_text(col.value, col.offset_min, col.has_time).tolist() == [
        "1600-01-01",
        "9999-12-31T23:59:59",
        "2024-03-01",
        "2024-03-01T10:00:00+02:00",
    ]
    assert col.patterns[col.pattern[0]] == "date-cell"
    assert col.offset_min[0] == NAIVE


def test_time_and_bool_cells_fail_with_a_reason() -> None:
    got = read([dt.time(10, 30), True], S1900)
    assert got[0][0] == "FAILED" and "time" in got[0][1]
    assert got[1][0] == "FAILED" and "true/false" in got[1][1]


def test_empty_cells_are_blank_not_failed() -> None:
    got = read([None, "", "  "], S1900)
    assert [g[0] for g in got] == ["BLANK"] * 3


def test_epoch_digit_counts_keep_numbers_apart() -> None:
    # Seconds need 8–10 digits (or a sign), milliseconds 11–13: a 5-digit number is a serial.
    got = read(["44927", "1234567890", "1234567890123"], S1900, kinds=[CellKind.TEXT] * 3)
    assert got == [
        ("PARSED", "2023-01-01"),
        ("PARSED", "2009-02-13T23:31:30+00:00"),
        ("PARSED", "2009-02-13T23:31:30.123000+00:00"),
    ]


def test_whole_numbers_are_written_as_python_writes_them():
    # reference: Python's own str() of an int; Arrow writes them for an ID column in one pass
    import numpy as _np

    from datemend.core.parse import _numbers_text

    ints = [0, 7, -5, 100001, 2**62, -(2**63)]
    assert _numbers_text(_np.array(ints, dtype=object)).tolist() == [str(v) for v in ints]
    big = [1, 2**70]  # past 64 bits: still exact
    assert _numbers_text(_np.array(big, dtype=object)).tolist() == [str(v) for v in big]
    mixed = [3, 2.5, 1e16]  # floats keep Python's shortest repr, whole ones as integers
    want = ["3", "2.5", "10000000000000000"]
    assert _numbers_text(_np.array(mixed, dtype=object)).tolist() == want


@pytest.mark.parametrize(
    "cells",
    [
        [3, 3.0, 2.5, 3, -0.0, 0, 45123.75, 2.5, 1e16, -7],  # equal numbers coded alike
        [2**53, 2**53 + 1, 2**53],  # past float64's exact whole numbers: hashed as Python ints
        [1, 2**70, 1],  # past 64 bits
        [float("inf"), 1.5, float("nan"), float("nan"), 1.5],
        [np.int64(44927), np.float64(0.1), 44927.0],  # numpy scalars from a DataFrame
    ],
)
def test_number_cells_are_coded_as_python_equality_codes_them(cells):
    # reference: Python's own == and hash (a dict keyed by the number), str() of an int and
    # repr() of a float; NaN != NaN in Python, but every NaN cell is written "nan" alike
    from datemend.core.parse import _factorize_numbers

    values = np.array(cells, dtype=object)
    kinds = np.array(
        [CellKind.INT if isinstance(v, int | np.integer) else CellKind.FLOAT for v in cells],
        dtype=np.int8,
    )
    codes, texts = _factorize_numbers(values, kinds)
    seen: dict[object, int] = {}
    want_codes, want_texts = [], []
    for v in cells:
        key = "nan" if v != v else v
        if key not in seen:
            seen[key] = len(seen)
            f = float(v)
            if isinstance(v, int | np.integer):
                want_texts.append(str(int(v)))
            elif f == f and f not in (float("inf"), float("-inf")) and f.is_integer():
                want_texts.append(str(int(f)))
            else:
                want_texts.append(repr(f))
        want_codes.append(seen[key])
    assert codes.tolist() == want_codes
    assert list(texts) == want_texts


def test_decimal_number_cells_keep_their_own_text():
    # reference: Python's str() of a decimal.Decimal keeps its written digits ("1.10")
    from decimal import Decimal

    from datemend.core.parse import _factorize_numbers

    values = np.array([Decimal("1.10"), Decimal("45000"), Decimal("1.10")], dtype=object)
    codes, texts = _factorize_numbers(values, np.full(3, CellKind.FLOAT, dtype=np.int8))
    assert codes.tolist() == [0, 1, 0]
    assert list(texts) == ["1.10", "45000"]
