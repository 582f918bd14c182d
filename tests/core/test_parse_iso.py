"""Golden table: ISO 8601 calendar, week and ordinal dates, times, offsets, impossible values.

Expected values are worked out by hand, or taken from Python's ``datetime`` (``date.isocalendar``,
``date.fromisocalendar``, ``timetuple().tm_yday``), or from the examples of ISO 8601:2000 §5.2 and
RFC 3339 §5.8, as each row says.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest
from _engine_kit import read_with

from datemend.core.parse import parse_column
from datemend.core.spec import ParseSpec
from datemend.core.table import RawColumn, kinds_of

ISO = ParseSpec(patterns=("iso-date", "iso-week", "iso-ordinal", "compact-ymd"))


def read(values: list[str], spec: ParseSpec = ISO) -> list[tuple[str, str]]:
    return read_with(values, spec)


# (input, expected ISO text, or "FAILED: <words in the reason>", why)
ROWS = [
    ("1985-04-12", "1985-04-12", "ISO 8601:2000 §5.2.1.1 extended calendar date"),
    ("19850412", "1985-04-12", "ISO 8601:2000 §5.2.1.1 basic calendar date"),
    ("1985-102", "1985-04-12", "ISO 8601:2000 §5.2.2.1 extended ordinal date"),
    ("1985102", "1985-04-12", "ISO 8601:2000 §5.2.2.1 basic ordinal date"),
    ("1985-W15-5", "1985-04-12", "ISO 8601:2000 §5.2.3.1 extended week date"),
    ("1985W155", "1985-04-12", "ISO 8601:2000 §5.2.3.1 basic week date"),
    ("2009-W01-1", "2008-12-29", "date.fromisocalendar(2009, 1, 1)"),
    ("2009-W53-7", "2010-01-03", "date.fromisocalendar(2009, 53, 7)"),
    ("1976-W53-6", "1977-01-01", "date(1977, 1, 1).isocalendar() = (1976, 53, 6)"),
    ("2013-W01-1", "2012-12-31", "date(2012, 12, 31).isocalendar() = (2013, 1, 1)"),
    ("2010-W53-1", "FAILED: no week 53", "date(2010, 12, 31).isocalendar()[1] == 52"),
    ("2009-W00-1", "FAILED: no week 0", "weeks count from 1"),
    ("2009-W10-8", "FAILED: weekday 8", "ISO weekdays run 1-7"),
    ("2024-366", "2024-12-31", "2024 is a leap year: day 366 is 31 December (by hand)"),
    ("2023-366", "FAILED: day 366 of 2023", "2023 has 365 days (calendar.isleap(2023) is False)"),
    ("2024-060", "2024-02-29", "day 60 of a leap year (date(2024,2,29).timetuple().tm_yday)"),
    ("2024-2-5", "2024-02-05", "month and day without leading zeros (common in exports)"),
    ("2024-02-29", "2024-02-29", "2024 is a leap year (calendar.isleap)"),
    ("2000-02-29", "2000-02-29", "2000 is a leap year: divisible by 400"),
    ("1900-02-29", "FAILED: 1900 is not a leap year", "1900 is not: divisible by 100, not 400"),
    ("2023-02-29", "FAILED: 2023 is not a leap year", "impossible date, never rolled over"),
    ("2024-02-30", "FAILED: 30 February 2024 does not exist", "never rolled into March"),
    ("2024-04-31", "FAILED: 31 April 2024 does not exist", "April has 30 days"),
    ("2024-13-01", "FAILED: month 13", "no month 13"),
    ("2024-00-10", "FAILED: month 0", "no month 0"),
    ("2024-01-00", "FAILED: day 0", "no day 0"),
    ("0000-01-01", "FAILED: year 0", "the proleptic calendar has no year 0 in datetime"),
    ("0001-01-01", "0001-01-01", "datetime.MINYEAR survives (outside pandas' ns range)"),
    ("1600-03-01", "1600-03-01", "before 1677: outside pandas' ns range, kept in us"),
    ("9999-12-31", "9999-12-31", "datetime.MAXYEAR survives"),
    ("2024-03-01T10:30", "2024-03-01T10:30:00", "date-time with T, hh:mm"),
    ("2024-03-01 10:30:15", "2024-03-01T10:30:15", "space instead of T"),
    ("2024-03-01T10:30:15.250", "2024-03-01T10:30:15.250000", "fraction of a second"),
    ("2024-03-01T10:30:15,5", "2024-03-01T10:30:15.500000", "ISO 8601 allows a comma"),
    ("1985-04-12T23:20:50.52Z", "1985-04-12T23:20:50.520000+00:00", "RFC 3339 §5.8 example"),
    ("1996-12-19T16:39:57-08:00", "1996-12-19T16:39:57-08:00", "RFC 3339 §5.8 example"),
    ("1937-01-01T12:00:27.87+00:20", "1937-01-01T12:00:27.870000+00:20", "RFC 3339 §5.8"),
    ("2024-03-01T10:30:00+0530", "2024-03-01T10:30:00+05:30", "offset without colon"),
    ("2024-03-01T10:30:00+05", "2024-03-01T10:30:00+05:00", "offset of whole hours"),
    ("2024-03-01T10:30:00 UTC", "2024-03-01T10:30:00+00:00", "UTC written as a word"),
    ("19850412T101530Z", "1985-04-12T10:15:30+00:00", "ISO 8601 basic date-time"),
    ("2024-03-01T00:00:00", "2024-03-01", "a stray midnight is no time of day"),
    ("1990-12-31T23:59:60Z", "FAILED: leap second", "RFC 3339 §5.8: datetime cannot hold it"),
    ("2024-03-01T25:00", "FAILED: hour 25", "no hour 25"),
    ("2024-03-01T24:00", "FAILED: 24:00", "end-of-day 24:00 is not read silently"),
    ("2024-03-01T10:60", "FAILED: minute 60", "no minute 60"),
    ("2024-03-01T10:30:61", "FAILED: second 61", "no second 61"),
    ("2024-03-01T10", "FAILED: no minutes", "an hour alone is not a time"),
    ("2024-03-01T10:30+25:00", "FAILED: not a UTC offset", "offset hours run 0-23"),
    ("10:30", "FAILED: a time of day with no date", "time only"),
    ("1985-W15", "FAILED: no pattern", "a week with no day is not a day"),
]


def test_no_input_repeats() -> None:
    inputs = [r[0] for r in ROWS]
    assert len(inputs) == len(set(inputs))


@pytest.mark.parametrize(("text", "expected", "why"), ROWS, ids=[r[0] for r in ROWS])
def test_iso_table(text: str, expected: str, why: str) -> None:
    ((state, got),) = read([text])
    if expected.startswith("FAILED: "):
        assert state == "FAILED", f"{text}: {why}; got {got}"
        assert expected[8:] in got, f"{text}: reason {got!r}"
    else:
        assert (state, got) == ("PARSED", expected), why


def test_week_dates_match_python_isocalendar() -> None:
    # Reference: Python's date.isocalendar for every day of 2004–2010 (weeks 52 and 53 years).
    days = [dt.date(2004, 1, 1) + dt.timedelta(days=i) for i in range(0, 7 * 365, 5)]
    texts = ["{}-W{:02d}-{}".format(*d.isocalendar()) for d in days]
    got = read(texts)
    assert got == [("PARSED", d.isoformat()) for d in days]


def test_ordinal_dates_match_python_yday() -> None:
    days = [dt.date(1999, 1, 1) + dt.timedelta(days=i) for i in range(0, 3 * 366, 7)]
    texts = [f"{d.year}-{d.timetuple().tm_yday:03d}" for d in days]
    assert read(texts) == [("PARSED", d.isoformat()) for d in days]


def test_has_time_and_offset_arrays() -> None:
    arr = np.array(["2024-03-01", "2024-03-01T10:00:00+02:00", "2024-03-01T10:00"], dtype=object)
    col = parse_column(RawColumn("c", arr, kinds_of(arr, text_only=True)), ISO)
    assert col.has_time.tolist() == [False, True, True]
    assert col.offset_min[1] == 120
    assert col.value.dtype == np.dtype("datetime64[us]")
    # utc(): 10:00+02:00 is 08:00Z (RFC 3339 §4.2 arithmetic, by hand)
    assert col.utc()[1] == np.datetime64("2024-03-01T08:00:00", "us")
    assert col.patterns == ISO.patterns
    assert col.pattern.tolist() == [0, 0, 0]
