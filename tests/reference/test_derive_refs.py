"""Derived columns checked against reference libraries and published examples.

Sources, named beside each test:
- python-dateutil ``relativedelta`` (completed months and years, and its 28 February clamping);
- ``numpy.busday_count`` and the ``holidays`` package, counted again with a plain date loop;
- Python's ``datetime.date.isocalendar()`` and ISO 8601's week examples (REFERENCES.md);
- Unicode CLDR month and weekday names through ``babel.dates``;
- ``zoneinfo`` (IANA tz database via tzdata) for moving times between zones;
- Maryland General Provisions §1-303(b) (REFERENCES.md) for 29 February birthdays.
"""

from __future__ import annotations

import calendar
import datetime as dt
from zoneinfo import ZoneInfo

import holidays
import numpy as np
import pandas as pd
import pytest
from babel.dates import get_day_names, get_month_names
from dateutil.relativedelta import relativedelta
from hypothesis import given, settings
from hypothesis import strategies as st

from datemend.core import derive
from datemend.core.calendar_parts import calendar_part
from datemend.core.clean import NAIVE, CellState, ParsedColumn
from datemend.core.zones import convert_zone

SETTINGS = settings(max_examples=60, deadline=None)

# Dates across the whole range datemend keeps (years 1–9999), with times of day.
any_dt = st.datetimes(min_value=dt.datetime(1, 1, 1), max_value=dt.datetime(9999, 12, 31))


# Month ends and 29 February are where calendar arithmetic goes wrong: draw them often.
def _near_month_end(y: int, m: int, back: int, hours: int) -> dt.datetime:
    last = calendar.monthrange(y, m)[1]
    return dt.datetime(y, m, last - back) + dt.timedelta(hours=hours)


edge_day = st.builds(
    _near_month_end,
    st.integers(1, 9998),
    st.integers(1, 12),
    st.integers(0, 3),
    st.sampled_from([0, 0, 12]),
)
some_dt = st.one_of(any_dt, edge_day)
pairs = st.lists(st.tuples(some_dt, some_dt), min_size=1, max_size=40)


def _series(values: list[dt.datetime | dt.date | None]) -> pd.Series:
    arr = np.array(
        [np.datetime64("NaT") if v is None else np.datetime64(v, "us") for v in values],
        dtype="datetime64[us]",
    )
    return pd.Series(arr)


@SETTINGS
@given(pairs)
def test_completed_months_match_relativedelta(rows):
    # Source: python-dateutil relativedelta(end, start): years * 12 + months.
    start = _series([a for a, _ in rows])
    end = _series([b for _, b in rows])
    want = []
    for a, b in rows:
        r = relativedelta(b, a)
        want.append(r.years * 12 + r.months)
    assert derive.completed_months(start, end).tolist() == want


@SETTINGS
@given(pairs)
def test_completed_years_feb28_match_relativedelta(rows):
    # Source: python-dateutil relativedelta(end, start).years; relativedelta clamps 29 February
    # to 28 February in common years, which is the "feb28" policy.
    start = _series([a for a, _ in rows])
    end = _series([b for _, b in rows])
    want = [relativedelta(b, a).years for a, b in rows]
    assert derive.completed_years(start, end, leap_day="feb28").tolist() == want


@SETTINGS
@given(pairs)
def test_completed_years_mar1_differs_only_on_28_february(rows):
    # Source: relativedelta for every pair except a 29 February start whose end falls on the
    # 28 February anniversary of a common year: there "mar1" (Maryland §1-303(b)) counts one
    # year fewer for a forward span (the birthday is 1 March).
    start = _series([a for a, _ in rows])
    end = _series([b for _, b in rows])
    got = derive.completed_years(start, end, leap_day="mar1").tolist()
    for (a, b), g in zip(rows, got):
        years = relativedelta(b, a).years
        on_clamped_day = (
            (a.month, a.day) == (2, 29)
            and (b.month, b.day) == (2, 28)
            and b.time() >= a.time()
            and b > a
        )
        assert g == (years - 1 if on_clamped_day else years), (a, b)


LEAP_ROWS = [
    # (born, as of, policy, expected age, why) — worked out by hand.
    ("2000-02-29", "2023-02-28", "mar1", 22, "birthday not until 1 March 2023"),
    ("2000-02-29", "2023-02-28", "feb28", 23, "birthday taken as 28 February"),
    ("2000-02-29", "2023-03-01", "mar1", 23, "1 March: birthday reached under both"),
    ("2000-02-29", "2023-03-01", "feb28", 23, "past 28 February"),
    ("2000-02-29", "2024-02-28", "mar1", 23, "leap year: birthday is 29 February"),
    ("2000-02-29", "2024-02-29", "feb28", 24, "leap year: the day itself"),
    ("2000-02-29", "2023-02-27", "feb28", 22, "day before the 28 February birthday"),
    ("2000-03-01", "2023-02-28", "mar1", 22, "born 1 March, day before birthday"),
]


def test_leap_rows_unique():
    keys = [r[:3] for r in LEAP_ROWS]
    assert len(keys) == len(set(keys))


@pytest.mark.parametrize(("born", "as_of", "policy", "age", "why"), LEAP_ROWS)
def test_leap_day_policies_by_hand(born, as_of, policy, age, why):
    # Source: Maryland General Provisions §1-303(b) (attains the age on 1 March) for "mar1";
    # the 28 February reading for "feb28" (REFERENCES.md: unverified secondary sources).
    got = derive.completed_years(
        _series([dt.date.fromisoformat(born)]), _series([dt.date.fromisoformat(as_of)]), policy
    )
    assert got.tolist() == [age], why


# -------------------------------------------------------------- business days

short_dates = st.dates(min_value=dt.date(2019, 1, 1), max_value=dt.date(2028, 12, 31))


def _loop_count(a: dt.date, b: dt.date, workdays: set[int], hol: set[dt.date], include_end: bool):
    # Plain date loop, independent of numpy. Forward: days in [start, end), or [start, end]
    # with include_end. Reversed: minus the days in (end, start] (numpy.busday_count's rule, the
    # start counts and the end does not), or [end, start] with include_end.
    one = dt.timedelta(1)
    if a <= b:
        sign, lo, hi = 1, a, b - one if not include_end else b
    else:
        sign, lo, hi = -1, b + one if not include_end else b, a
    n, d = 0, lo
    while d <= hi:
        if d.weekday() in workdays and d not in hol:
            n += 1
        d += one
    return sign * n


@settings(max_examples=25, deadline=None)
@given(
    st.lists(st.tuples(short_dates, short_dates), min_size=1, max_size=6),
    st.sampled_from([("DE", "BY"), ("US", "CA"), ("GB", "SCT"), ("FR", None)]),
    st.booleans(),
)
def test_business_days_with_country_holidays_match_plain_loop(rows, place, include_end):
    # Sources: numpy.busday_count's rule (start in, end out) and the holidays package's
    # calendar, here looked up day by day with `date in holidays_obj`.
    country, subdiv = place
    cal = holidays.country_holidays(country, subdiv=subdiv, years=range(2019, 2029))
    hol = {d for d in cal}
    got = derive.business_days(
        _series([a for a, _ in rows]),
        _series([b for _, b in rows]),
        holidays=derive.holiday_dates(country, subdiv, range(2019, 2029)),
        include_end=include_end,
    ).tolist()
    want = [_loop_count(a, b, {0, 1, 2, 3, 4}, hol, include_end) for a, b in rows]
    assert got == want


@SETTINGS
@given(
    st.lists(st.tuples(short_dates, short_dates), min_size=1, max_size=20),
    st.lists(st.booleans(), min_size=7, max_size=7).filter(any),
)
def test_business_days_match_numpy_busday_count(rows, mask):
    # Source: numpy.busday_count itself, one pair at a time, for any working-week mask.
    weekmask = "".join("1" if m else "0" for m in mask)
    got = derive.business_days(
        _series([a for a, _ in rows]), _series([b for _, b in rows]), weekmask=weekmask
    ).tolist()
    want = [int(np.busday_count(a, b, weekmask=weekmask)) for a, b in rows]
    assert got == want


def test_business_days_known_week():
    # By hand: Mon 2026-11-30 → Mon 2026-12-07 is five working days (end excluded), six with
    # the end (checked against a 2026 calendar, value from memory). Fri 2026-12-25, Christmas,
    # is in the holidays package's GB calendar, so 21 → 28 December has four.
    a = _series([dt.date(2026, 11, 30), dt.date(2026, 12, 21)])
    b = _series([dt.date(2026, 12, 7), dt.date(2026, 12, 28)])
    assert derive.business_days(a, b).tolist() == [5, 5]
    assert derive.business_days(a, b, include_end=True).tolist() == [6, 6]
    gb = derive.holiday_dates("GB", None, [2026])
    assert derive.business_days(a, b, holidays=gb).tolist() == [5, 4]


# -------------------------------------------------------------- ISO weeks, names

ISO_EXAMPLES = [
    # (date, ISO year, week, weekday) — ISO 8601 examples from REFERENCES.md
    ("2008-12-29", 2009, 1, 1),
    ("2010-01-03", 2009, 53, 7),
    ("1977-01-01", 1976, 53, 6),
    ("2005-01-01", 2004, 53, 6),
    ("2012-12-31", 2013, 1, 1),
]


def test_iso_examples_unique():
    assert len({r[0] for r in ISO_EXAMPLES}) == len(ISO_EXAMPLES)


@pytest.mark.parametrize(("day", "year", "week", "weekday"), ISO_EXAMPLES)
def test_iso_week_examples(day, year, week, weekday):
    # Source: ISO 8601 week examples (REFERENCES.md); weekdays by date.isocalendar().
    s = _series([dt.date.fromisoformat(day)])
    assert calendar_part(s, "iso-year").tolist() == [year]
    assert calendar_part(s, "iso-week").tolist() == [week]
    assert calendar_part(s, "weekday").tolist() == [weekday]


@SETTINGS
@given(st.lists(st.dates(), min_size=1, max_size=50))
def test_iso_parts_match_isocalendar(days):
    # Source: Python's date.isocalendar(), date.timetuple().tm_yday, date.isoweekday().
    s = _series(days)
    assert calendar_part(s, "iso-year").tolist() == [d.isocalendar()[0] for d in days]
    assert calendar_part(s, "iso-week").tolist() == [d.isocalendar()[1] for d in days]
    assert calendar_part(s, "weekday").tolist() == [d.isoweekday() for d in days]
    assert calendar_part(s, "day-of-year").tolist() == [d.timetuple().tm_yday for d in days]
    assert calendar_part(s, "year").tolist() == [d.year for d in days]
    assert calendar_part(s, "month").tolist() == [d.month for d in days]
    assert calendar_part(s, "day").tolist() == [d.day for d in days]
    assert calendar_part(s, "quarter").tolist() == [(d.month - 1) // 3 + 1 for d in days]


@pytest.mark.parametrize("locale", ["en", "fr", "de", "es", "nl", "pt_BR"])
def test_month_and_weekday_names_from_cldr(locale):
    # Source: Unicode CLDR via babel.dates (stand-alone, wide).
    days = [dt.date(2026, m, 1) for m in range(1, 13)]
    s = _series(days)
    months = get_month_names("wide", context="stand-alone", locale=locale)
    weekdays = get_day_names("wide", context="stand-alone", locale=locale)
    assert calendar_part(s, "month-name", locale=locale).tolist() == [
        months[m] for m in range(1, 13)
    ]
    assert calendar_part(s, "weekday-name", locale=locale).tolist() == [
        weekdays[d.weekday()] for d in days
    ]


def test_month_names_known_values():
    # Value from memory, confirmed by CLDR through babel above: French "janvier", German "März".
    s = _series([dt.date(2026, 1, 5), dt.date(2026, 3, 5)])
    assert calendar_part(s, "month-name", locale="fr").tolist()[0] == "janvier"
    assert calendar_part(s, "month-name", locale="de").tolist()[1] == "März"


# -------------------------------------------------------------- fiscal years (by hand)

FISCAL_ROWS = [
    # (date, start month, label, fiscal year, fiscal quarter, why) — worked out by hand
    ("2026-06-30", 7, "end", 2026, 4, "last day of the year that ends in June 2026"),
    ("2026-07-01", 7, "end", 2027, 1, "first day of the year ending June 2027"),
    ("2026-07-01", 7, "start", 2026, 1, "named by its starting year"),
    ("2026-06-30", 7, "start", 2025, 4, "started July 2025"),
    ("2026-03-31", 4, "end", 2026, 4, "April start: March closes the year"),
    ("2026-04-01", 4, "end", 2027, 1, "April start: new year named 2027"),
    ("2026-04-01", 4, "start", 2026, 1, "April start, named by start year"),
    ("2026-10-01", 10, "end", 2027, 1, "October start"),
    ("2026-09-30", 10, "end", 2026, 4, "October start, last day"),
    ("2026-12-31", 1, "end", 2026, 4, "January start: the calendar year"),
    ("2026-01-01", 1, "start", 2026, 1, "January start: both labels agree"),
    ("2026-08-15", 7, "end", 2027, 1, "mid first quarter"),
    ("2026-11-15", 7, "end", 2027, 2, "second quarter Oct–Dec"),
    ("2027-02-01", 7, "end", 2027, 3, "third quarter Jan–Mar"),
]


def test_fiscal_rows_unique():
    keys = [r[:3] for r in FISCAL_ROWS]
    assert len(keys) == len(set(keys))


@pytest.mark.parametrize(("day", "start", "label", "year", "quarter", "why"), FISCAL_ROWS)
def test_fiscal_year_and_quarter(day, start, label, year, quarter, why):
    # By hand (common practice, no source): a fiscal year starting 1 July 2026 ends 30 June
    # 2027; "end" names it 2027, "start" names it 2026; quarters count from the start month.
    s = _series([dt.date.fromisoformat(day)])
    got_y = calendar_part(s, "fiscal-year", fiscal_start=start, fiscal_label=label).tolist()
    got_q = calendar_part(s, "fiscal-quarter", fiscal_start=start).tolist()
    assert (got_y, got_q) == ([year], [quarter]), why


# -------------------------------------------------------------- zones

aware_dt = st.datetimes(min_value=dt.datetime(1950, 1, 1), max_value=dt.datetime(2060, 12, 31)).map(
    lambda d: d.replace(microsecond=0)
)
offsets = st.integers(-14 * 60, 14 * 60)
zones = st.sampled_from(["Europe/Paris", "America/New_York", "Asia/Kolkata", "Australia/Lord_Howe"])


def _parsed(values, offs):
    n = len(values)
    return ParsedColumn(
        source="t",
        value=np.array(values, dtype="datetime64[us]"),
        offset_min=np.array(offs, dtype=np.int32),
        has_time=np.ones(n, bool),
        state=np.full(n, CellState.PARSED, np.int8),
        pattern=np.zeros(n, np.int16),
        patterns=("iso",),
        reason=np.full(n, None, object),
    )


@SETTINGS
@given(st.lists(st.tuples(aware_dt, offsets), min_size=1, max_size=20), zones)
def test_convert_zone_matches_zoneinfo(rows, zone):
    # Source: zoneinfo (tzdata): datetime.astimezone(ZoneInfo(zone)).
    col = _parsed([v for v, _ in rows], [o for _, o in rows])
    out = convert_zone(col, zone)
    for i, (v, o) in enumerate(rows):
        want = v.replace(tzinfo=dt.timezone(dt.timedelta(minutes=o))).astimezone(ZoneInfo(zone))
        assert out.value[i] == np.datetime64(want.replace(tzinfo=None), "us")
        assert out.offset_min[i] == int(want.utcoffset().total_seconds() // 60)


def test_convert_zone_naive_in_gap_and_fold_are_not_guessed():
    # Source: zoneinfo/tzdata: Europe/Paris skipped 02:00–03:00 on 2026-03-29 and repeated
    # 02:00–03:00 on 2026-10-25 (EU summer time ends on the last Sunday of October).
    vals = ["2026-03-29T02:30", "2026-10-25T02:30", "2026-07-01T12:00"]
    col = _parsed(vals, [NAIVE] * 3)
    out = convert_zone(col, "UTC", naive_zone="Europe/Paris")
    assert list(out.state) == [CellState.FAILED, CellState.AMBIGUOUS, CellState.PARSED]
    assert out.value[2] == np.datetime64("2026-07-01T10:00", "us")  # CEST is UTC+2
    assert out.offset_min[2] == 0
    day_only = col.evolve(has_time=np.zeros(3, bool))
    assert list(convert_zone(day_only, "UTC", naive_zone="Europe/Paris").value) == list(col.value)
    left = convert_zone(col, "UTC")  # no zone given for naive times: left as they are
    assert list(left.value) == list(col.value)
    assert list(left.offset_min) == [NAIVE] * 3
