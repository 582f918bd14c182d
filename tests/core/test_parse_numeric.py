"""Golden table: numeric day/month/year dates in every order and separator, two-digit years,
ambiguity, and 12-hour clocks. Expected values worked out by hand (the calendar facts they rest
on are checked with Python's ``calendar.isleap`` / ``calendar.monthrange`` in the last tests)."""

from __future__ import annotations

import calendar
import datetime

import numpy as np
import pytest
from _engine_kit import read_with

from datemend.core.clean import CellState
from datemend.core.parse import parse_column
from datemend.core.spec import ParseSpec
from datemend.core.table import RawColumn, kinds_of

NUM = ("num-slash", "num-dash", "num-dot", "num-space", "ymd-slash", "ymd-dot", "ymd-space")
DMY = ParseSpec(patterns=NUM, day_order="dmy")
MDY = ParseSpec(patterns=NUM, day_order="mdy")
OPEN = ParseSpec(patterns=NUM, day_order=None)
PAST = ParseSpec(patterns=NUM, day_order="dmy", century="past", pivot_year=2026)


def read(values: list[str], spec: ParseSpec) -> list[tuple[str, str]]:
    return read_with(values, spec)


# Year place undecided: D/M/YY (or M/D/YY) and YY/MM/DD stay rivals, in a column whose day
# order is decided. The day order says nothing of where a two-digit year stands.
YY = ("num-slash", "yymd-slash")
YY_MDY = ParseSpec(patterns=YY, day_order="mdy", rivals=YY)
YY_DMY = ParseSpec(patterns=YY, day_order="dmy", rivals=YY)
YY_EITHER = ParseSpec(patterns=YY, day_order="mdy", rivals=YY, century="either", pivot_year=2026)
SPECS = {
    "dmy": DMY,
    "mdy": MDY,
    "open": OPEN,
    "past": PAST,
    "yy-mdy": YY_MDY,
    "yy-dmy": YY_DMY,
    "yy-either": YY_EITHER,
}

# (input, spec name, expected ISO or "STATE: words in the reason", why) — by hand
ROWS = [
    ("03/04/2024", "dmy", "2024-04-03", "day first: 3 April"),
    ("03/04/2024 ", "mdy", "2024-03-04", "month first: 4 March"),
    (
        " 03/04/2024",
        "open",
        "AMBIGUOUS: could be 3 April 2024 (day first) or 4 March 2024",
        "both ≤ 12",
    ),
    ("4/4/2024", "open", "2024-04-04", "day == month: both readings agree"),
    ("13/4/2024", "open", "2024-04-13", "first field above 12 can only be a day"),
    ("4/13/2024", "open", "2024-04-13", "second field above 12 can only be a day"),
    ("13/13/2024", "open", "FAILED: neither 13 nor 13 can be a month", "no reading"),
    ("4/13/2024 ", "dmy", "FAILED: month 13", "the column says day first: no month 13"),
    ("31/4/2024", "dmy", "FAILED: 31 April 2024 does not exist", "April has 30 days"),
    ("29/2/2023", "dmy", "FAILED: 2023 is not a leap year", "never rolled to 1 March"),
    ("2/30/2024", "mdy", "FAILED: 30 February 2024 does not exist", "never rolled to 1 March"),
    ("29-02-2024", "dmy", "2024-02-29", "dash separator; 2024 is a leap year"),
    ("12.04.1985", "dmy", "1985-04-12", "dot separator"),
    ("12.04.1985.", "dmy", "1985-04-12", "trailing period is noise"),
    ("12 04 1985", "dmy", "1985-04-12", "space separator"),
    ("1985/4/12", "open", "1985-04-12", "year first is always Y/M/D"),
    ("1985.04.12", "open", "1985-04-12", "year first with dots"),
    ("1985 04 12", "open", "1985-04-12", "year first with spaces"),
    ("5/6/69", "dmy", "1969-06-05", "POSIX: 69 → 1969"),
    ("5/6/68", "dmy", "2068-06-05", "POSIX: 68 → 2068"),
    ("5/6/00", "dmy", "2000-06-05", "POSIX: 00 → 2000"),
    ("5/6/99", "dmy", "1999-06-05", "POSIX: 99 → 1999"),
    ("5/6/68 ", "past", "1968-06-05", "past rule, pivot 2026: latest year ≤ 2026 ending in 68"),
    ("5/6/26", "past", "2026-06-05", "past rule: 2026 itself is allowed"),
    ("5/6/27", "past", "1927-06-05", "past rule: 2027 would be after the pivot"),
    ("5/6/00 ", "past", "2000-06-05", "past rule: 2000 ≤ 2026"),
    ("1/2/2024 3:15 PM", "dmy", "2024-02-01T15:15:00", "12-hour clock, PM"),
    ("1/2/2024 3:15 p.m.", "dmy", "2024-02-01T15:15:00", "p.m. with dots"),
    ("1/2/2024 3:15pm", "dmy", "2024-02-01T15:15:00", "pm attached"),
    ("1/2/2024 12:00 AM", "dmy", "2024-02-01T00:00:00", "12 AM is midnight"),
    ("1/2/2024 12:30 PM", "dmy", "2024-02-01T12:30:00", "12 PM is noon"),
    ("1/2/2024 11:59:59 a.m.", "dmy", "2024-02-01T11:59:59", "a.m. with seconds"),
    ("1/2/2024 0:30 AM", "dmy", "FAILED: hour 0 cannot go with AM", "12-hour clock runs 1–12"),
    ("1/2/2024 13:00 PM", "dmy", "FAILED: hour 13 cannot go with PM", "12-hour clock runs 1–12"),
    ("1/2/2024 23:45", "dmy", "2024-02-01T23:45:00", "24-hour clock"),
    ("1/2/2024 00:00:00", "dmy", "2024-02-01", "stray midnight"),
    ("1/2/2024T00:00:00", "dmy", "2024-02-01", "stray T00:00:00 after a D/M/Y date"),
    ("00/00/0000", "dmy", "FAILED: does not exist", "a placeholder is not a date"),
    (
        "25/04/18",
        "yy-mdy",
        "AMBIGUOUS: 2018-04-25 (D/M/YY, against the column's month-first order) or 2025-04-18",
        "no month 25: day first against the column, or year first (strptime %d/%m/%y, %y/%m/%d)",
    ),
    ("04/25/18", "yy-mdy", "2018-04-25", "only M/D/YY reads it: YY/MM/DD has no month 25"),
    ("18/04/18", "yy-mdy", "2018-04-18", "18 April 2018 either way: both readings agree"),
    ("04/25/19", "yy-dmy", "FAILED: month 25", "no year-first reading; day first: no month 25"),
    (
        "13/12/05",
        "yy-dmy",
        "AMBIGUOUS: 2005-12-13 (D/M/YY) or 2013-12-05 (YY/MM/DD)",
        "both readings are real days (strptime %d/%m/%y, %y/%m/%d)",
    ),
    (
        "25/04/30",
        "yy-either",
        "AMBIGUOUS: 2025-04-30 (YY/MM/DD), or 25 April 1930 or 25 April 2030",
        "day first against the column, and then 30 is 1930 or 2030 (century undecided)",
    ),
    (
        "31/04/20",
        "yy-either",
        "AMBIGUOUS: could be 20 April 1931 or 20 April 2031",
        "only year first reads it (no month 31, no 31 April); 31 is 1931 or 2031",
    ),
]


def test_no_input_repeats() -> None:
    keys = [(r[0], r[1]) for r in ROWS]
    assert len(keys) == len(set(keys))
    assert len({r[0] for r in ROWS}) == len(ROWS)


@pytest.mark.parametrize(("text", "spec", "expected", "why"), ROWS, ids=[r[0] for r in ROWS])
def test_numeric_table(text: str, spec: str, expected: str, why: str) -> None:
    ((state, got),) = read([text], SPECS[spec])
    if expected.split(":")[0] in ("FAILED", "AMBIGUOUS") and not expected[:4].isdigit():
        want_state, words = expected.split(": ", 1)
        assert state == want_state, f"{text}: {why}; got {state} {got}"
        assert words in got, f"{text}: reason {got!r}"
    else:
        assert (state, got) == ("PARSED", expected), why


def test_ambiguous_reason_gives_both_readings_and_no_value() -> None:
    arr = np.array(["3/4/2024"], dtype=object)
    col = parse_column(RawColumn("c", arr, kinds_of(arr, text_only=True)), OPEN)
    assert col.state[0] == CellState.AMBIGUOUS
    assert np.isnat(col.value[0])
    assert "3 April 2024" in col.reason[0] and "4 March 2024" in col.reason[0]


def test_every_day_of_a_leap_and_common_year_both_orders() -> None:
    # Reference: calendar.monthrange gives the days in each month.
    for year in (2023, 2024):
        days = [(m, d) for m in range(1, 13) for d in range(1, calendar.monthrange(year, m)[1] + 1)]
        dmy = read([f"{d}/{m}/{year}" for m, d in days], DMY)
        mdy = read([f"{m}/{d}/{year}" for m, d in days], MDY)
        want = [("PARSED", f"{year}-{m:02d}-{d:02d}") for m, d in days]
        assert dmy == want and mdy == want


def test_day_after_month_end_always_fails() -> None:
    # Reference: calendar.monthrange; the day after each month's last day must fail, never roll.
    texts, isleap = [], calendar.isleap(1900)
    assert not isleap
    for year in (1900, 2000, 2023, 2024):
        for m in range(1, 13):
            texts.append(f"{calendar.monthrange(year, m)[1] + 1}/{m}/{year}")
    got = read(texts, DMY)
    assert all(state == "FAILED" and "does not exist" in why for state, why in got), got


# The two-digit-year rival rows above, read by Python's datetime.strptime (%y: the POSIX rule):
# (text, format, ISO, or None where strptime must refuse the text).
YY_BY_STRPTIME = [
    ("25/04/18", "%d/%m/%y", "2018-04-25"),
    ("25/04/18", "%y/%m/%d", "2025-04-18"),
    ("25/04/18", "%m/%d/%y", None),
    ("04/25/18", "%m/%d/%y", "2018-04-25"),
    ("04/25/18", "%y/%m/%d", None),
    ("18/04/18", "%d/%m/%y", "2018-04-18"),
    ("18/04/18", "%y/%m/%d", "2018-04-18"),
    ("04/25/19", "%d/%m/%y", None),
    ("04/25/19", "%y/%m/%d", None),
    ("13/12/05", "%d/%m/%y", "2005-12-13"),
    ("13/12/05", "%y/%m/%d", "2013-12-05"),
    ("25/04/30", "%y/%m/%d", "2025-04-30"),
    ("25/04/30", "%d/%m/%y", "2030-04-25"),
    ("25/04/30", "%m/%d/%y", None),
    ("31/04/20", "%y/%m/%d", "2031-04-20"),
    ("31/04/20", "%d/%m/%y", None),
    ("31/04/20", "%m/%d/%y", None),
]


def test_yy_by_strptime_rows_do_not_repeat() -> None:
    assert len({r[:2] for r in YY_BY_STRPTIME}) == len(YY_BY_STRPTIME)


@pytest.mark.parametrize(("text", "fmt", "iso"), YY_BY_STRPTIME)
def test_two_digit_year_rival_readings_by_strptime(text: str, fmt: str, iso: str | None) -> None:
    if iso is None:
        with pytest.raises(ValueError):
            datetime.datetime.strptime(text, fmt)
    else:
        assert datetime.datetime.strptime(text, fmt).date().isoformat() == iso
