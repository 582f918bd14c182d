"""Spreadsheet serial dates against ISO/IEC 29500-1 §18.17.4 (Date Conversion for Serial Values).

Source: ISO/IEC 29500-1 (Office Open XML) §18.17.4 / ECMA-376, as gathered in
shared/docs/REFERENCES.md. Cross-check: openpyxl.utils.datetime.from_excel (reference library);
where it differs from the standard (serial 60, fractions below 1) the test says so.
"""

from __future__ import annotations

import datetime as dt

import pytest
from openpyxl.utils.datetime import MAC_EPOCH, WINDOWS_EPOCH, from_excel

from datemend.core.table import CellKind, SourceFacts

from ._refkit import CellState, as_us, assert_unique, run

# A column that is plainly serial dates in the 1900 system (recent dates, as real exports hold);
# the spec it gives is then used to parse the edge values (how the engine applies a column-wide
# decision to every cell).
DECIDING_1900 = [38749, 45000, 44197, 43831, 45292, 40179, 41275, 3687]

# (serial, expected, why) — ISO/IEC 29500-1 §18.17.4, 1900 date system.
SERIALS_1900 = [
    (3687, dt.datetime(1910, 2, 3), "§18.17.4 example: 1910-02-03 is 3687"),
    (38749, dt.datetime(2006, 2, 1), "§18.17.4 example: 2006-02-01 is 38749"),
    (2958465, dt.datetime(9999, 12, 31), "§18.17.4: 9999-12-31 is 2958465, the last day"),
    (1, dt.datetime(1900, 1, 1), "§18.17.4: serial 1 is 1900-01-01"),
    (59, dt.datetime(1900, 2, 28), "§18.17.4: serial 59 is 1900-02-28"),
    (61, dt.datetime(1900, 3, 1), "§18.17.4: serial 61 is 1900-03-01 (1899-12-30 + 61 days)"),
    (38749.5, dt.datetime(2006, 2, 1, 12), "§18.17.4: the fraction is the time of day, .5 noon"),
    (38749.75, dt.datetime(2006, 2, 1, 18), "§18.17.4: fraction .75 is 18:00"),
]

# (serial, expected, why) — 1904 date system.
SERIALS_1904 = [
    (2225, dt.datetime(1910, 2, 3), "§18.17.4 example: 1910-02-03 is 2225 in the 1904 system"),
    (37287, dt.datetime(2006, 2, 1), "§18.17.4 example: 2006-02-01 is 37287 in the 1904 system"),
    (2957003, dt.datetime(9999, 12, 31), "§18.17.4: 9999-12-31 is 2957003 in the 1904 system"),
    (0.5, dt.datetime(1904, 1, 1, 12), "§18.17.4: 0.5 is 1904-01-01T12:00 in the 1904 system"),
    (0, dt.datetime(1904, 1, 1), "§18.17.4: serial 0 is 1904-01-01 in the 1904 system"),
]
DECIDING_1904 = [37287, 43538, 42735, 42369, 43830, 38717, 39813, 2225]


def _kind(v: float) -> CellKind:
    return CellKind.INT if isinstance(v, int) else CellKind.FLOAT


def test_tables_have_no_repeated_input() -> None:
    assert_unique(SERIALS_1900)
    assert_unique(SERIALS_1904)


@pytest.mark.parametrize(
    ("serial", "expected", "why"), SERIALS_1900, ids=[r[2] for r in SERIALS_1900]
)
def test_serial_1900_system(serial: float, expected: dt.datetime, why: str) -> None:
    # Source: ISO/IEC 29500-1 §18.17.4 (1900 date system).
    r = run(
        [serial],
        kinds=[_kind(serial)],
        spec_from=DECIDING_1900,
        spec_from_kinds=[CellKind.INT] * len(DECIDING_1900),
    )
    assert r.spec is not None, f"a column of serials {DECIDING_1900} gave no suggestion"
    assert r.spec.date_system == 1900, "a workbook in the 1900 system must be read in it"
    assert r.state(0) == CellState.PARSED, why + " — " + r.describe(0)
    assert r.value(0) == as_us(expected), why + " — " + r.describe(0)


@pytest.mark.parametrize(
    ("serial", "expected", "why"), SERIALS_1900, ids=[r[2] for r in SERIALS_1900]
)
def test_openpyxl_agrees_with_standard_except_serial_60(
    serial: float, expected: dt.datetime, why: str
) -> None:
    # Cross-check of the reference values with openpyxl.utils.datetime.from_excel.
    assert from_excel(serial, epoch=WINDOWS_EPOCH) == expected, why


def test_serial_60_is_flagged_not_moved() -> None:
    # ISO/IEC 29500-1 §18.17.4: serial 60 is 1900-02-29, a day that never existed (the 1900
    # system treats 1900 as a leap year for backward compatibility). It must be flagged, not
    # silently turned into 1900-02-28 or 1900-03-01.
    # Where openpyxl differs: from_excel(60) returns 1900-02-28 (it folds the missing day).
    assert from_excel(60, epoch=WINDOWS_EPOCH) == dt.datetime(1900, 2, 28)
    r = run(
        [60],
        kinds=[CellKind.INT],
        spec_from=DECIDING_1900,
        spec_from_kinds=[CellKind.INT] * len(DECIDING_1900),
    )
    assert r.parsed is not None
    assert r.state(0) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(0)
    assert r.reason(0), "a flagged cell must carry a reason: " + r.describe(0)
    assert r.value(0) != as_us(dt.datetime(1900, 2, 28))
    assert r.value(0) != as_us(dt.datetime(1900, 3, 1))


def test_serial_60_inside_a_real_column() -> None:
    # Same rule (§18.17.4) when serial 60 sits among ordinary serials scanned together.
    values = [*DECIDING_1900, 60]
    r = run(values, kinds=[CellKind.INT] * len(values))
    assert r.parsed is not None
    i = len(values) - 1
    assert r.state(i) != CellState.PARSED, r.describe(i)
    assert r.reason(i), r.describe(i)
    for j, v in enumerate(DECIDING_1900):
        assert r.state(j) == CellState.PARSED, r.describe(j)
        assert r.value(j) == as_us(from_excel(v, epoch=WINDOWS_EPOCH)), r.describe(j)


@pytest.mark.parametrize(
    ("serial", "expected", "why"), SERIALS_1904, ids=[r[2] for r in SERIALS_1904]
)
def test_serial_1904_system(serial: float, expected: dt.datetime, why: str) -> None:
    # Source: ISO/IEC 29500-1 §18.17.4 (1904 date system); the workbook says which system
    # (workbookPr date1904="1"), carried here in SourceFacts.date_system.
    facts = SourceFacts(format="xlsx", date_system=1904)
    r = run(
        [serial],
        kinds=[_kind(serial)],
        facts=facts,
        spec_from=DECIDING_1904,
        spec_from_kinds=[CellKind.INT] * len(DECIDING_1904),
    )
    assert r.spec is not None
    assert r.spec.date_system == 1904, "the workbook's 1904 system must be used: " + str(r.spec)
    assert r.state(0) == CellState.PARSED, why + " — " + r.describe(0)
    assert r.value(0) == as_us(expected), why + " — " + r.describe(0)


@pytest.mark.parametrize(
    ("serial", "expected", "why"), SERIALS_1904, ids=[r[2] for r in SERIALS_1904]
)
def test_openpyxl_1904(serial: float, expected: dt.datetime, why: str) -> None:
    # Cross-check with openpyxl.from_excel(epoch=MAC_EPOCH). Where it differs: below 1 it
    # returns a time of day (datetime.time), not a date-time on 1904-01-01.
    got = from_excel(serial, epoch=MAC_EPOCH)
    if serial < 1:
        assert got == expected.time(), why
    else:
        assert got == expected, why


def test_two_systems_differ_by_1462_days() -> None:
    # §18.17.4: the same day is 1462 more in the 1900 system than in the 1904 system.
    pairs = [(3687, 2225), (38749, 37287), (2958465, 2957003)]
    for s1900, s1904 in pairs:
        assert s1900 - s1904 == 1462
        a = run(
            [s1900],
            kinds=[CellKind.INT],
            spec_from=DECIDING_1900,
            spec_from_kinds=[CellKind.INT] * len(DECIDING_1900),
        )
        b = run(
            [s1904],
            kinds=[CellKind.INT],
            facts=SourceFacts(format="xlsx", date_system=1904),
            spec_from=DECIDING_1904,
            spec_from_kinds=[CellKind.INT] * len(DECIDING_1904),
        )
        assert a.state(0) == b.state(0) == CellState.PARSED, a.describe(0) + " / " + b.describe(0)
        assert a.value(0) == b.value(0)


def test_the_same_numbers_differ_between_systems() -> None:
    # §18.17.4: one stored number, two systems, two days 1462 apart. The column-wide date system
    # must follow the workbook, never a guess from the numbers.
    values = DECIDING_1900
    kinds = [CellKind.INT] * len(values)
    a = run(values, kinds=kinds)
    b = run(values, kinds=kinds, facts=SourceFacts(format="xlsx", date_system=1904))
    assert a.spec is not None and b.spec is not None
    assert (a.spec.date_system, b.spec.date_system) == (1900, 1904)
    for i, v in enumerate(values):
        assert a.value(i) == as_us(from_excel(v, epoch=WINDOWS_EPOCH)), a.describe(i)
        assert b.value(i) == as_us(from_excel(v, epoch=MAC_EPOCH)), b.describe(i)


def test_date_cells_from_a_workbook_are_kept() -> None:
    # Real date cells are already dates: kept as they are (issue 3, point 2). Expected values are
    # the cells themselves (Python's datetime is the reference).
    values = [
        dt.date(2006, 2, 1),
        dt.datetime(1910, 2, 3, 7, 30),
        dt.date(9999, 12, 31),
        dt.date(1, 1, 1),
    ]
    kinds = [CellKind.DATE, CellKind.DATETIME, CellKind.DATE, CellKind.DATE]
    r = run(values, kinds=kinds)
    assert r.parsed is not None
    for i, v in enumerate(values):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(v), r.describe(i)


@pytest.mark.parametrize("serial", [2958466, 3000000, 2958465.9999999])
def test_serials_past_the_last_day_are_flagged(serial: float) -> None:
    # §18.17.4: 2958465 is 9999-12-31, the last day the 1900 system holds; anything later is no
    # date (and must not overflow or wrap). 2958465.9999999 is still 9999-12-31 (23:59:59.99).
    r = run(
        [serial],
        kinds=[_kind(serial)],
        spec_from=DECIDING_1900,
        spec_from_kinds=[CellKind.INT] * len(DECIDING_1900),
    )
    assert r.parsed is not None
    if serial < 2958466:
        if r.state(0) == CellState.PARSED:
            assert str(r.value(0))[:10] == "9999-12-31", r.describe(0)
        return
    assert r.state(0) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(0)
    assert r.reason(0), r.describe(0)
