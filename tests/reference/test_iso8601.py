"""ISO 8601 calendar, ordinal and week dates, and date-times.

Sources: ISO 8601:2000 §5.2 (examples, all for 12 April 1985), as gathered in
shared/docs/REFERENCES.md; Python's ``datetime.date.isocalendar`` / ``fromisocalendar`` and
``datetime.fromisoformat`` as reference libraries.
"""

from __future__ import annotations

import datetime as dt

import pytest

from ._refkit import NAIVE, CellState, as_us, assert_unique, run

APRIL_12_1985 = dt.datetime(1985, 4, 12)

# (value, expected, why) — ISO 8601:2000 §5.2, every form of 12 April 1985.
FORMS_1985 = [
    ("19850412", APRIL_12_1985, "§5.2.1.1 calendar date, basic format"),
    ("1985-04-12", APRIL_12_1985, "§5.2.1.1 calendar date, extended format"),
    ("1985102", APRIL_12_1985, "§5.2.2.1 ordinal date, basic format (day 102)"),
    ("1985-102", APRIL_12_1985, "§5.2.2.1 ordinal date, extended format"),
    ("1985W155", APRIL_12_1985, "§5.2.3.1 week date, basic format (week 15, Friday)"),
    ("1985-W15-5", APRIL_12_1985, "§5.2.3.1 week date, extended format"),
]

# (date, ISO year, week, weekday, why) — ISO 8601 week numbering: week 01 holds the year's first
# Thursday (equivalently 4 January). Checked below against date.isocalendar().
WEEK_EXAMPLES = [
    (dt.date(2008, 12, 29), 2009, 1, 1, "2008-12-29 is 2009-W01-1"),
    (dt.date(2010, 1, 3), 2009, 53, 7, "2010-01-03 is 2009-W53-7"),
    (dt.date(1977, 1, 1), 1976, 53, 6, "1977-01-01 is 1976-W53-6"),
    (dt.date(2005, 1, 1), 2004, 53, 6, "2005-01-01 is in week 53 of 2004"),
    (dt.date(2012, 12, 31), 2013, 1, 1, "2012-12-31 is in week 1 of 2013"),
    (dt.date(1985, 4, 12), 1985, 15, 5, "1985-04-12 is 1985-W15-5"),
]

# (value, expected wall clock, offset minutes or None for naive, why) — ISO 8601 date-times;
# expected values from datetime.fromisoformat (reference library).
DATETIMES = [
    ("1985-04-12T23:20:50", None, "§5.4.1 complete representation, extended, T separator"),
    ("1985-04-12 23:20:50", None, "space instead of T (common practice, RFC 3339 §5.6 note)"),
    ("1985-04-12T23:20", None, "§5.4.2 reduced precision: hours and minutes"),
    ("1985-04-12T23:20:50.5", None, "§5.3.1.3 decimal fraction of a second"),
    ("1985-04-12T23:20:50.123456", None, "fraction to the microsecond"),
    ("1985-04-12T23:20:50Z", 0, "§5.3.3 UTC designator Z"),
    ("1985-04-12T23:20:50+01:00", 60, "§5.3.4.1 offset ahead of UTC"),
    ("1985-04-12T23:20:50-05:30", -330, "§5.3.4.1 offset behind UTC, with minutes"),
]


def test_tables_have_no_repeated_input() -> None:
    assert_unique(FORMS_1985)
    assert_unique(WEEK_EXAMPLES)
    assert_unique(DATETIMES)


@pytest.mark.parametrize(("date", "year", "week", "day", "why"), WEEK_EXAMPLES)
def test_week_examples_agree_with_isocalendar(
    date: dt.date, year: int, week: int, day: int, why: str
) -> None:
    # The published examples against the reference library (date.isocalendar()).
    assert tuple(date.isocalendar()) == (year, week, day), why


@pytest.mark.parametrize(("value", "expected", "why"), FORMS_1985, ids=[r[0] for r in FORMS_1985])
def test_every_form_of_12_april_1985(value: str, expected: dt.datetime, why: str) -> None:
    # Source: ISO 8601:2000 §5.2. Each form scanned in a column of its own kind (three more values
    # of the same form, made with Python's datetime, so the column decides its pattern).
    others = [dt.date(2009, 12, 31), dt.date(1977, 1, 1), dt.date(2004, 2, 29)]
    render = {
        "19850412": lambda d: d.strftime("%Y%m%d"),
        "1985-04-12": lambda d: d.isoformat(),
        "1985102": lambda d: f"{d.year:04d}{d.timetuple().tm_yday:03d}",
        "1985-102": lambda d: f"{d.year:04d}-{d.timetuple().tm_yday:03d}",
        "1985W155": lambda d: "{:04d}W{:02d}{:d}".format(*d.isocalendar()),
        "1985-W15-5": lambda d: "{:04d}-W{:02d}-{:d}".format(*d.isocalendar()),
    }[value]
    assert render(APRIL_12_1985.date()) == value  # the renderer itself matches the standard
    values = [value, *(render(d) for d in others)]
    r = run(values)
    for i, want in enumerate([expected, *others]):
        assert r.state(i) == CellState.PARSED, why + " — " + r.describe(i)
        assert r.value(i) == as_us(want), why + " — " + r.describe(i)


@pytest.mark.parametrize(
    ("date", "year", "week", "day", "why"), WEEK_EXAMPLES, ids=[r[4] for r in WEEK_EXAMPLES]
)
def test_week_dates_read_back(date: dt.date, year: int, week: int, day: int, why: str) -> None:
    # Week-numbering examples from REFERENCES.md, written as YYYY-Www-D and read back; expected
    # from date.fromisocalendar (reference library).
    assert dt.date.fromisocalendar(year, week, day) == date
    values = [f"{year:04d}-W{week:02d}-{day}", "2020-W01-1", "2015-W53-7", "1999-W30-3"]
    r = run(values)
    assert r.state(0) == CellState.PARSED, why + " — " + r.describe(0)
    assert r.value(0) == as_us(date), why + " — " + r.describe(0)


def test_week_53_in_a_year_that_has_none_is_not_a_date() -> None:
    # ISO 8601 week numbering: 2021 has 52 weeks (date.fromisocalendar(2021, 53, 1) raises).
    with pytest.raises(ValueError):
        dt.date.fromisocalendar(2021, 53, 1)
    values = ["2021-W53-1", "2020-W53-5", "2015-W53-7", "1999-W30-3"]
    r = run(values)
    assert r.parsed is not None
    assert r.state(0) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(0)
    assert r.reason(0), r.describe(0)


def test_ordinal_day_366_only_in_leap_years() -> None:
    # ISO 8601 ordinal dates: day 366 exists only in leap years (2000 yes, 1900 and 2001 no;
    # Gregorian rule, checked with calendar.isleap).
    import calendar

    assert calendar.isleap(2000) and not calendar.isleap(2001)
    values = ["2000-366", "2001-366", "1985-102", "2001-001"]
    r = run(values)
    assert r.state(0) == CellState.PARSED, r.describe(0)
    assert r.value(0) == as_us(dt.date(2000, 12, 31)), r.describe(0)
    assert r.state(1) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(1)
    assert r.value(3) == as_us(dt.date(2001, 1, 1)), r.describe(3)


@pytest.mark.parametrize(("value", "offset", "why"), DATETIMES, ids=[r[0] for r in DATETIMES])
def test_iso_datetimes(value: str, offset: int | None, why: str) -> None:
    # Expected from datetime.fromisoformat (reference library, Python 3.11+ reads these forms).
    ref = dt.datetime.fromisoformat(value.replace("Z", "+00:00"))
    values = [value, "2001-09-09T01:46:40", "1999-12-31T23:59:59"]
    if offset is not None:
        values = [value, "2001-09-09T01:46:40Z", "1999-12-31T23:59:59+02:00"]
    r = run(values)
    assert r.state(0) == CellState.PARSED, why + " — " + r.describe(0)
    assert r.value(0) == as_us(ref.replace(tzinfo=None)), why + " — " + r.describe(0)
    if offset is None:
        assert r.offset(0) == NAIVE, "a naive value must stay naive: " + r.describe(0)
    else:
        assert r.offset(0) == offset, why + " — " + r.describe(0)
        assert r.utc(0) == as_us(ref), why + " — " + r.describe(0)


def test_impossible_calendar_dates_fail() -> None:
    # Gregorian calendar (Python's datetime refuses these): 30 February, month 13, 29 February in
    # a common year are no dates; never rolled into the next month (issue 3 point 6).
    values = ["2024-02-30", "2023-13-01", "2023-02-29", "2024-02-29", "2023-03-01"]
    for v in values[:3]:
        with pytest.raises(ValueError):
            dt.date.fromisoformat(v)
    r = run(values)
    for i in range(3):
        assert r.state(i) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(i)
        assert r.reason(i), r.describe(i)
    assert r.value(3) == as_us(dt.date(2024, 2, 29)), r.describe(3)
    assert r.value(4) == as_us(dt.date(2023, 3, 1)), r.describe(4)


def test_comma_as_decimal_sign() -> None:
    # ISO 8601 (value from memory: the decimal sign is a comma or a full stop, the comma
    # preferred): 23:20:50,52 is 23:20:50.52.
    values = ["1985-04-12T23:20:50,52", "1985-04-12T23:20:50.52", "1999-12-31T23:59:59"]
    r = run(values)
    for i in range(2):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(dt.datetime(1985, 4, 12, 23, 20, 50, 520000)), r.describe(i)


def test_end_of_day_24_00() -> None:
    # ISO 8601:2004 (value from memory): 24:00:00 is the end of the day, the same instant as
    # 00:00:00 of the next day. Read so, or flagged: never the start of the same day.
    values = ["1985-04-12T24:00:00", "1985-04-12T23:20:50", "1999-12-31T23:59:59"]
    r = run(values)
    if r.state(0) == CellState.PARSED:
        assert r.value(0) == as_us(dt.datetime(1985, 4, 13)), r.describe(0)
    else:
        assert r.reason(0), r.describe(0)


@pytest.mark.parametrize(
    ("value", "exists"),
    [("1900-02-29", False), ("2000-02-29", True), ("2100-02-29", False), ("2024-02-29", True)],
)
def test_gregorian_leap_years(value: str, exists: bool) -> None:
    # ISO 8601 uses the Gregorian calendar: century years are leap only when divisible by 400
    # (calendar.isleap is the reference library).
    import calendar

    assert calendar.isleap(int(value[:4])) == exists
    r = run([value, "2023-03-01", "1999-12-31"])
    if exists:
        assert r.state(0) == CellState.PARSED, r.describe(0)
        assert r.value(0) == as_us(dt.date.fromisoformat(value)), r.describe(0)
    else:
        assert r.state(0) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(0)
        assert r.reason(0), r.describe(0)


@pytest.mark.parametrize(
    "others",
    [
        [50413167, 1551073921, "25/3/2014", "1912-212"],
        ["1/1/2000 12:00 AM", "20770101"],
    ],
    ids=["among epoch-second numbers", "among M/D/YYYY text"],
)
def test_basic_calendar_date_text_is_not_taken_for_epoch_seconds(others: list[object]) -> None:
    # ISO 8601 §5.2.1.1 basic format: "21001121" is 2100-11-21 (datetime.strptime "%Y%m%d").
    # As epoch seconds it would be 1970-09-01; both readings exist, so the cell is read as the
    # date or flagged — never silently as 1970 (issue 3 point 4).
    target = "21001121"
    want = dt.datetime.strptime(target, "%Y%m%d")
    r = run([target, *others])
    assert r.parsed is not None
    if r.state(0) == CellState.PARSED:
        assert r.value(0) == as_us(want), r.describe(0)
    else:
        assert r.reason(0), r.describe(0)
