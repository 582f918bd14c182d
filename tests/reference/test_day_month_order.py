"""Day/month order: evidence, preference and undecidable columns.

Sources: python-dateutil's documented defaults (``dayfirst=False``, ``yearfirst=False``; with both
set, yearfirst wins) and its own test values (``090107`` → 2007-09-01; yearfirst → 2009-01-07;
dayfirst → 2007-01-09), as gathered in REFERENCES.md; dateutil itself as reference library.
"A column is undecidable when every value has both fields ≤ 12" (common practice, no source).
"""

from __future__ import annotations

import datetime as dt

import pytest
from dateutil import parser as du_parser

from ._refkit import CellState, as_us, assert_unique, run

# (value, dateutil default, dayfirst, yearfirst, why) — dateutil's own examples.
DATEUTIL_ROWS = [
    (
        "090107",
        dt.datetime(2007, 9, 1),
        dt.datetime(2007, 1, 9),
        dt.datetime(2009, 1, 7),
        "dateutil test: 090107",
    ),
    (
        "01/02/2003",
        dt.datetime(2003, 1, 2),
        dt.datetime(2003, 2, 1),
        dt.datetime(2003, 1, 2),
        "month first by default, day first with dayfirst",
    ),
]


def test_table_has_no_repeated_input() -> None:
    assert_unique(DATEUTIL_ROWS)


@pytest.mark.parametrize(
    ("value", "default", "dayfirst", "yearfirst", "why"),
    DATEUTIL_ROWS,
    ids=[r[0] for r in DATEUTIL_ROWS],
)
def test_dateutil_documented_behaviour(
    value: str, default: dt.datetime, dayfirst: dt.datetime, yearfirst: dt.datetime, why: str
) -> None:
    # The reference itself: its defaults read month first, so its answer is a guess.
    assert du_parser.parse(value) == default, why
    assert du_parser.parse(value, dayfirst=True) == dayfirst, why
    assert du_parser.parse(value, yearfirst=True) == yearfirst, why
    # With both set the year is read first (yearfirst wins the year), then day before month:
    # 090107 → 2009-07-01 (checked with dateutil; REFERENCES.md's "yearfirst wins" is about the
    # year only).
    both = du_parser.parse(value, dayfirst=True, yearfirst=True)
    assert both.year == yearfirst.year, "yearfirst wins the year"


def test_compact_six_digits_all_readable_three_ways_are_not_guessed() -> None:
    # "090107" and the rest read as valid YYMMDD, MMDDYY and DDMMYY dates (dateutil gives three
    # different answers, above). Nothing in the column decides, so no cell may be PARSED as if
    # it were known (issue 3 point 4: ambiguity is never resolved silently).
    values = ["090107", "050311", "120610", "030504", "110208"]
    for v in values:
        readings = {
            du_parser.parse(v),
            du_parser.parse(v, dayfirst=True),
            du_parser.parse(v, yearfirst=True),
        }
        assert len(readings) == 3, v
    r = run(values)
    if r.parsed is None or not r.report.is_date:
        return  # not taken for dates at all: nothing silently wrong
    for i in range(len(values)):
        assert r.state(i) != CellState.PARSED, "guessed: " + r.describe(i)


def test_compact_six_digits_decided_by_the_column() -> None:
    # Only DDMMYY reads 311299, 150185, 280288 (month 31/15/28 and day 99/85/88 are impossible
    # otherwise; checked with datetime.strptime below), so the column is day-first, two-digit
    # year last, and 010203 follows it: 2003-02-01.
    values = ["311299", "150185", "280288", "010203"]
    for v in values[:3]:
        for fmt in ("%y%m%d", "%m%d%y"):
            with pytest.raises(ValueError):
                dt.datetime.strptime(v, fmt)
    expected = [dt.datetime.strptime(v, "%d%m%y") for v in values]
    r = run(values)
    for i, want in enumerate(expected):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(want), r.describe(i)


def test_first_field_above_12_decides_day_first() -> None:
    # A value whose first field is above 12 can only be day-first (common practice, no source);
    # the column then reads every value day-first (issue 3 point 3), checked with dateutil
    # dayfirst=True (reference library).
    values = ["25/12/2023", "13/01/2024", "03/04/2024", "11/02/2022", "30/06/2021"]
    r = run(values)
    assert r.spec is not None and r.spec.day_order == "dmy", r.spec
    assert r.report.best.decisions.get("day_order") == "evidence", r.report.best.decisions
    for i, v in enumerate(values):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(du_parser.parse(v, dayfirst=True)), r.describe(i)


def test_second_field_above_12_decides_month_first() -> None:
    # Mirror case; expected from dateutil's default (month first).
    values = ["12/25/2023", "1/13/2024", "3/4/2024", "11/2/2022", "6/30/2021"]
    r = run(values)
    assert r.spec is not None and r.spec.day_order == "mdy", r.spec
    for i, v in enumerate(values):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(du_parser.parse(v)), r.describe(i)


UNDECIDABLE = ["03/04/2024", "11/02/2022", "01/12/2021", "05/05/2020", "07/08/2019"]


def test_undecidable_column_stays_ambiguous() -> None:
    # Every value has both fields ≤ 12: undecidable (common practice, no source). Cells whose two
    # readings differ are AMBIGUOUS; 05/05/2020 reads the same both ways and may be PARSED.
    r = run(UNDECIDABLE)
    assert r.parsed is not None and r.report.best is not None
    assert r.report.best.decisions.get("day_order") == "undecided", r.report.best.decisions
    for i, v in enumerate(UNDECIDABLE):
        same = du_parser.parse(v) == du_parser.parse(v, dayfirst=True)
        if same:
            if r.state(i) == CellState.PARSED:
                assert r.value(i) == as_us(du_parser.parse(v)), r.describe(i)
        else:
            assert r.state(i) == CellState.AMBIGUOUS, r.describe(i)


@pytest.mark.parametrize(("prefer", "dayfirst"), [("dmy", True), ("mdy", False)])
def test_preference_decides_and_says_so(prefer: str, dayfirst: bool) -> None:
    # Issue 3 point 4: a stated preference may decide an undecidable column, and the report then
    # says it was a preference. Expected from dateutil with the same order (reference library).
    r = run(UNDECIDABLE, prefer_day_order=prefer)
    assert r.spec is not None and r.spec.day_order == prefer, r.spec
    assert r.report.best.decisions.get("day_order") == "preference", r.report.best.decisions
    for i, v in enumerate(UNDECIDABLE):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(du_parser.parse(v, dayfirst=dayfirst)), r.describe(i)


def test_preference_does_not_override_evidence() -> None:
    # Evidence (a first field of 25) beats a stated month-first preference.
    values = ["25/12/2023", "03/04/2024", "11/02/2022"]
    r = run(values, prefer_day_order="mdy")
    assert r.spec is not None and r.spec.day_order == "dmy", r.spec
    assert r.value(1) == as_us(dt.datetime(2024, 4, 3)), r.describe(1)


@pytest.mark.parametrize("sep", ["/", "-", ".", " "])
def test_separators(sep: str) -> None:
    # Issue 3 point 2: "/ - . or space" separators; expected from dateutil dayfirst=True.
    values = [sep.join(p) for p in (("25", "12", "2023"), ("3", "4", "2024"), ("30", "06", "2021"))]
    r = run(values)
    for i, v in enumerate(values):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(du_parser.parse(v.replace(" ", "/"), dayfirst=True)), r.describe(
            i
        )


def test_year_first_numeric_is_year_month_day() -> None:
    # spec.py: year-first numeric dates (2024/03/04) are read year-month-day (ISO 8601 order);
    # dateutil with yearfirst=True agrees.
    values = ["2024/03/04", "2023/12/25", "2021/01/02"]
    r = run(values)
    for i, v in enumerate(values):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(du_parser.parse(v, yearfirst=True)), r.describe(i)


def test_day_order_decision_is_column_wide_across_patterns() -> None:
    # Issue 3 point 3: a column-wide decision applies to every pattern in the column: a
    # D/M/YYYY value with 25 decides, and D-M-YY values follow it (dateutil dayfirst=True).
    # The D-M-YY value ends in 45 (no day 45), so its year can only be last: only the day
    # order is open, and the column decides it.
    values = ["25/12/2023", "03/04/2024", "04-05-45", "11/02/2022"]
    r = run(values, century="posix")  # the century rule is not under test: POSIX, as dateutil
    for i, v in enumerate(values):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(du_parser.parse(v, dayfirst=True)), r.describe(i)


def test_compact_text_among_serial_numbers_is_not_silently_a_serial() -> None:
    # "041470" in a month-first column reads MMDDYY as 1970-04-14 (datetime.strptime "%m%d%y",
    # POSIX two-digit years; dateutil's clock-bound window would say 2070 in 2026);
    # as a serial number it would be 2013-07-15. Number cells beside it are serials, but this
    # cell is text: both readings exist, so read it as the compact date or flag it.
    from datemend.core.table import CellKind

    assert dt.datetime.strptime("041470", "%m%d%y") == dt.datetime(1970, 4, 14)
    values = ["041470", 22495.11472222222, 14134.6202199074, 64706.0982175926, "12/25/2023"]
    kinds = [CellKind.TEXT, CellKind.FLOAT, CellKind.FLOAT, CellKind.FLOAT, CellKind.TEXT]
    r = run(values, kinds=kinds)
    assert r.parsed is not None
    if r.state(0) == CellState.PARSED:
        assert r.value(0) == as_us(dt.datetime(1970, 4, 14)), r.describe(0)
    else:
        assert r.reason(0), r.describe(0)


@pytest.mark.parametrize("order", ["mdy", "dmy"])
def test_impossible_numeric_dates_fail_not_roll_over(order: str) -> None:
    # Issue 3 point 6: 30 February, 31 April, 29 February in a common year are no days
    # (datetime.date refuses them); they fail with a reason and are never rolled into March/May.
    days = [(2024, 2, 30), (2023, 2, 31), (2022, 4, 31), (2023, 2, 29)]
    for y, m, d in days:
        with pytest.raises(ValueError):
            dt.date(y, m, d)
    fmt = "{m}/{d}/{y}" if order == "mdy" else "{d}/{m}/{y}"
    values = [fmt.format(y=y, m=m, d=d) for y, m, d in days]
    decide = "12/25/2023" if order == "mdy" else "25/12/2023"
    r = run([*values, decide, fmt.format(y=2024, m=2, d=29)])
    for i in range(len(days)):
        assert r.state(i) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(i)
        assert r.reason(i), r.describe(i)
    assert r.value(len(days) + 1) == as_us(dt.date(2024, 2, 29)), r.describe(len(days) + 1)


def test_two_digit_year_first_decided_by_a_value_that_can_only_be_a_year() -> None:
    # "98-12-31" reads only year first (98 is no day; dateutil gives 1998-12-31 with or without
    # yearfirst), so the column is YY-MM-DD and "24-01-05" follows it: 2024-01-05
    # (dateutil yearfirst=True). Reading it 24 January 2005 contradicts the column's evidence.
    assert du_parser.parse("98-12-31") == du_parser.parse("98-12-31", yearfirst=True)
    values = ["98-12-31", "24-01-05", "87-06-30"]
    r = run(values)
    for i, v in enumerate(values):
        want = du_parser.parse(v, yearfirst=True)
        if r.state(i) == CellState.PARSED:
            assert r.value(i) == as_us(want), r.describe(i)
        else:
            assert r.reason(i), r.describe(i)
    assert r.state(0) == CellState.PARSED, r.describe(0)


def test_two_digit_year_first_or_last_undecided_is_not_guessed() -> None:
    # Every value reads as YY-MM-DD and as DD-MM-YY with different dates (dateutil yearfirst=True
    # vs default), and no value decides where the year is: ambiguity is never resolved silently
    # (issue 3 point 4), as for six-digit compact values above.
    values = ["24-01-05", "23-11-30", "22-07-15"]
    for v in values:
        assert du_parser.parse(v) != du_parser.parse(v, yearfirst=True), v
    r = run(values)
    if r.parsed is None or not r.report.is_date:
        return
    for i in range(len(values)):
        assert r.state(i) != CellState.PARSED, "guessed: " + r.describe(i)


def test_lone_six_digit_value_in_a_mixed_column_is_not_guessed() -> None:
    # "080704" reads as YYMMDD (2008-07-04), MMDDYY (2004-08-07) and DDMMYY (2004-07-08)
    # (datetime.strptime, POSIX two-digit years). The column's other values fix the day order
    # (12/25/2023: month first) but say nothing of where a six-digit value keeps its year, so
    # YYMMDD and MMDDYY stay open: flag it (issue 3 point 4).
    readings = {dt.datetime.strptime("080704", f) for f in ("%y%m%d", "%m%d%y", "%d%m%y")}
    assert len(readings) == 3
    values = ["1932/04/29", "11/28/2094 11:05 PM", "1919-154", "080704", "20200113", "12/25/2023"]
    r = run(values)
    assert r.parsed is not None
    assert r.state(3) != CellState.PARSED, "guessed: " + r.describe(3)
    assert r.reason(3), r.describe(3)
