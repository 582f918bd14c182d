"""Scan decisions: day/month order by evidence or preference, century rules, date system,
zones, rival number readings — and the sentences that say why. Counts in the expected
sentences are counted by hand from the columns below."""

from __future__ import annotations

import calendar
import datetime as dt

import numpy as np
import pandas as pd
import pytest

from datemend.core.clean import CellState
from datemend.core.infer import scan_column
from datemend.core.parse import iso_text, parse_column
from datemend.core.table import RawColumn, RawTable, SourceFacts, kinds_of


def col(values: list[object], name: str = "c", text: bool = True) -> RawColumn:
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    return RawColumn(name, arr, kinds_of(arr, text_only=text))


def test_day_first_by_evidence() -> None:
    c = col(["13/4/2024", "25/12/2023", "31/1/2024", "3/4/2024", "5/5/2024"])
    best = scan_column(c).best
    assert best.spec.day_order == "dmy"
    assert best.decisions["day_order"] == "evidence"
    assert best.evidence[0].startswith(
        "day before month: 3 values have a first field above 12; none contradict"
    )
    # 3/4/2024 is then read day first: 3 April (by hand)
    parsed = parse_column(c, best.spec)
    assert parsed.value[3] == np.datetime64("2024-04-03", "us")


def test_month_first_by_evidence() -> None:
    c = col(["4/13/2024", "12/25/2023", "3/4/2024"])
    best = scan_column(c).best
    assert best.spec.day_order == "mdy"
    assert best.evidence[0].startswith(
        "month before day: 2 values have a second field above 12; none contradict"
    )


def test_undecided_stays_ambiguous_and_alternatives_say_guess() -> None:
    c = col(["3/4/2024", "5/6/2024", "7/7/2024", "1/2/2023"])
    rep = scan_column(c)
    best = rep.best
    assert best.spec.day_order is None
    assert best.decisions["day_order"] == "undecided"
    assert best.ambiguous == 3 and best.parsed == 1  # 7/7/2024 reads the same both ways
    assert any("nothing in the column decides" in w for w in best.warnings)
    orders = [s.spec.day_order for s in rep.suggestions]
    assert {"dmy", "mdy"} <= set(orders)
    assert all("a guess, not evidence" in s.evidence[0] for s in rep.suggestions[1:3])
    # The two guesses disagree on 3/4/2024: 3 April vs 4 March (by hand).
    second = rep.suggestions[1]
    assert ("3/4/2024", "2024-04-03", "2024-03-04") in second.disagreements or (
        "3/4/2024",
        "2024-03-04",
        "2024-04-03",
    ) in second.disagreements
    parsed = parse_column(c, best.spec)
    assert parsed.state.tolist().count(CellState.AMBIGUOUS) == 3


def test_preference_decides_only_where_data_cannot_and_says_so() -> None:
    c = col(["3/4/2024", "5/6/2024"])
    best = scan_column(c, prefer_day_order="dmy").best
    assert best.spec.day_order == "dmy"
    assert best.decisions["day_order"] == "preference"
    assert "a preference, not evidence" in best.evidence[0]
    # Evidence beats preference.
    best2 = scan_column(col(["4/13/2024", "3/4/2024"]), prefer_day_order="dmy").best
    assert best2.spec.day_order == "mdy" and best2.decisions["day_order"] == "evidence"


def test_conflicting_orders_are_flagged_and_each_value_read_alone() -> None:
    c = col(["13/4/2024", "4/13/2024", "3/4/2024"])
    best = scan_column(c).best
    assert best.spec.day_order is None
    assert any("mixes day/month orders" in w for w in best.warnings)
    parsed = parse_column(c, best.spec)
    assert parsed.state.tolist() == [CellState.PARSED, CellState.PARSED, CellState.AMBIGUOUS]
    assert parsed.value[0] == parsed.value[1] == np.datetime64("2024-04-13", "us")


def test_two_digit_years_posix_by_default_and_said() -> None:
    best = scan_column(col(["13/4/99", "25/12/05"], name="Visit"), reference_year=2026).best
    assert best.spec.century == "posix"
    assert any("POSIX rule" in e for e in best.evidence)


def test_past_events_never_land_in_the_future() -> None:
    # Under POSIX "30" is 2030, after the reference year 2026: read as 1930 instead (by hand).
    c = col(["13/4/85", "25/12/30", "1/2/03"], name="Registered")
    best = scan_column(c, reference_year=2026).best
    assert (best.spec.century, best.spec.pivot_year) == ("past", 2026)
    assert best.decisions["century"] == "evidence"
    assert any('column name "Registered" suggests past events' in e for e in best.evidence)
    parsed = parse_column(c, best.spec)
    assert parsed.value[1] == np.datetime64("1930-12-25", "us")
    assert (parsed.value <= np.datetime64("2026-12-31", "us")).all()


def test_name_hint_for_dates_of_birth() -> None:
    # No value lands after 2026 by POSIX, but a birth date column takes the past rule
    # (common practice, no source): 13/4/20 is then 2020, not a problem; 1/1/25 stays 2025.
    c = col(["13/4/20", "1/1/25"], name="DOB")
    best = scan_column(c, reference_year=2026).best
    assert best.spec.century == "past"
    assert any('column name "DOB"' in e for e in best.evidence)


def test_date_system_from_the_workbook() -> None:
    facts = SourceFacts(format="xlsx", date_system=1904)
    c = col([2225, 37287, 40000], name="Joined", text=False)
    best = scan_column(c, facts).best
    assert best.spec.date_system == 1904
    assert best.decisions["date_system"] == "evidence"
    parsed = parse_column(c, best.spec)
    # ISO/IEC 29500 §18.17.4: 1904-system serials 2225 and 37287.
    assert parsed.value[:2].tolist() == [
        np.datetime64("1910-02-03", "us").astype(object),
        np.datetime64("2006-02-01", "us").astype(object),
    ]


def test_aware_and_naive_mix_is_flagged_and_utc_offered() -> None:
    c = col(["2024-01-02T10:00:00+02:00", "2024-01-02T10:00:00", "2024-01-03T09:00:00Z"])
    rep = scan_column(c)
    assert any("mixes aware and naive" in w for w in rep.best.warnings)
    zones = [s.spec.zone for s in rep.suggestions]
    assert zones[0] is None and "UTC" in zones


def test_rival_number_readings_stay_ambiguous() -> None:
    # Each value is a valid YYMMDD, DDMMYY and MMDDYY date (dateutil's own example 090107).
    c = col(["090107", "050311", "120610", "030504", "110208"], name="Day")
    rep = scan_column(c, reference_year=2026)
    best = rep.best
    assert best.decisions.get("numbers") == "undecided"
    parsed = parse_column(c, best.spec)
    assert (parsed.state != CellState.PARSED).all()
    assert "could be" in parsed.reason[0]


def test_compact_digits_decided_by_evidence() -> None:
    # 31122024 can only be DDMMYYYY (no month 31): the column is read day first.
    c = col(["31122024", "01022024", "15062023"], name="Day")
    best = scan_column(c, reference_year=2026).best
    assert "compact-dmy" in best.spec.patterns and not best.spec.rivals
    parsed = parse_column(c, best.spec)
    assert parsed.value[1] == np.datetime64("2024-02-01", "us")


def test_number_read_plausibly_by_a_later_reading_stays_ambiguous() -> None:
    # '121603' is serial 1900 → 2232-12-07 (implausible) or MMDDYY → 2003-12-16; the serial
    # cell 54296.87 (2048-08-26 20:52:48, datetime arithmetic) reads only as a serial.
    values: list[object] = ["121603", 54296.87, "12/25/2023"]
    arr = np.empty(3, dtype=object)
    arr[:] = values
    c = RawColumn("c", arr, kinds_of(arr))
    best = scan_column(c, reference_year=2026).best
    parsed = parse_column(c, best.spec)
    assert parsed.state.tolist() == [CellState.AMBIGUOUS, CellState.PARSED, CellState.PARSED]
    assert "2232-12-07" in parsed.reason[0] and "2003-12-16" in parsed.reason[0]
    assert any("fit both serial 1900 and MMDDYY" in w for w in best.warnings)


def test_two_digit_year_place_undecided_stays_ambiguous() -> None:
    # 15/03/24 is 15 March 2024 (year last) or 2015-03-24 (year first): nothing in the column
    # says which, so neither is taken (dateutil parse vs parse(yearfirst=True) differ).
    c = col(["15/03/24", "13/04/21"])
    best = scan_column(c, reference_year=2026).best
    assert any("could stand first (YY/MM/DD) or last" in w for w in best.warnings)
    parsed = parse_column(c, best.spec)
    assert (parsed.state == CellState.AMBIGUOUS).all()
    assert "2024-03-15" in parsed.reason[0] and "2015-03-24" in parsed.reason[0]
    quiet = scan_column(col(["15/03/85", "13/04/21"]), reference_year=2026).best.warnings
    assert not any("could stand first" in w for w in quiet)


# Where a two-digit year stands, decided column-wide by a two-digit year only one place can
# read; a four-digit year shows only its own place (13/04/2021 says nothing of 24/03/15). Rows:
# (column, cell, state, readings, why). Readings worked out by hand: the date when PARSED, every
# date the reason must name when AMBIGUOUS; each is cross-checked with datetime.strptime in
# STRPTIME_READINGS below, and each deciding value's impossible reading in ONE_PLACE_ONLY.
BUG = ("wed apr 1 05:19:32 1970", "5/7/1950 7:04 AM", "25/04/18 8:57:57 pm", "2145830400")
FIRST = ("99/12/31", "5/7/1950 7:04 AM", "25/04/18 8:57:57 pm")
LAST = ("15/03/85", "5/7/1950 7:04 AM", "25/04/18 8:57:57 pm")
YEAR_PLACE_ROWS = [
    (("98/12/31", "24/03/15"), 1, "PARSED", ("2024-03-15",), "98 is no day or month: year first"),
    (("31.12.98", "24.03.15"), 1, "PARSED", ("2015-03-24",), "98 last: year last, 24 is the day"),
    (
        ("13/04/2021", "24/03/15"),
        1,
        "AMBIGUOUS",
        ("2015-03-24", "2024-03-15"),
        "a four-digit year last shows only its own place: the two-digit one stays open",
    ),
    (("99-01-31", "05-06-07"), 1, "PARSED", ("2005-06-07",), "99 first: YY-MM-DD"),
    (
        ("24/03/15", "23/12/01"),
        0,
        "AMBIGUOUS",
        ("2015-03-24", "2024-03-15"),
        "nothing shows the place: both readings kept",
    ),
    (
        ("3/4/24", "5/6/23"),
        0,
        "AMBIGUOUS",
        ("2024-04-03", "2024-03-04"),
        "one-digit first field: day/month undecided",
    ),
    (
        ("1993/06/30", "16.4.1900", "25/6/16"),
        2,
        "AMBIGUOUS",
        ("2016-06-25", "2025-06-16"),
        "four-digit years first and last decide nothing for a two-digit one",
    ),
    (
        ("2024/03/15", "15/03/24"),
        1,
        "AMBIGUOUS",
        ("2024-03-15", "2015-03-24"),
        "YYYY/MM/DD elsewhere shows only that value's own place",
    ),
    # The reported column (2145830400 is the epoch; here as text, as a CSV gives it).
    (
        BUG,
        2,
        "AMBIGUOUS",
        ("2018-04-25T20:57:57", "2025-04-18T20:57:57"),
        "written YY/MM/DD; nothing in the column shows the year's place",
    ),
    (
        BUG,
        1,
        "AMBIGUOUS",
        ("1950-07-05T07:04:00", "1950-05-07T07:04:00"),
        "25/04/18 shows day first only if its year is last: no evidence of the day order",
    ),
    (BUG, 0, "PARSED", ("1970-04-01T05:19:32",), "asctime, year last in four digits"),
    (
        FIRST,
        2,
        "PARSED",
        ("2025-04-18T20:57:57",),
        "99/12/31 can only be year first: the column writes YY/MM/DD",
    ),
    (
        FIRST,
        1,
        "AMBIGUOUS",
        ("1950-07-05T07:04:00", "1950-05-07T07:04:00"),
        "with 25/04/18 year first, no value shows the day order",
    ),
    (
        LAST,
        2,
        "PARSED",
        ("2018-04-25T20:57:57",),
        "15/03/85 can only be year last: D/M/YY, and 25 is then a day",
    ),
    (
        LAST,
        1,
        "PARSED",
        ("1950-07-05T07:04:00",),
        "15/03/85 and 25/04/18 (year last) show the day first",
    ),
    (
        ("25/04/31", "25/04/18"),
        1,
        "AMBIGUOUS",
        ("2018-04-25", "2025-04-18"),
        "25/04/31 fails year first only by the calendar (no 31 April): a typo looks the same",
    ),
    (
        ("25/04/31", "25/04/18"),
        0,
        "AMBIGUOUS",
        ("1931-04-25", "2031-04-25"),
        "year last, but 31 is 2031 by POSIX and 1931 as a past event",
    ),
    (
        ("15/03/85", "25/04/18", "05/03/12"),
        2,
        "PARSED",
        ("2012-03-05",),
        "only year-last values: 05/03/12 is 5 March 2012, not 2005-03-12",
    ),
    (
        ("2-17-84", "25-08-23", "12/25/2023"),
        1,
        "AMBIGUOUS",
        ("2023-08-25", "2025-08-23"),
        "year last goes against the month-first order; year first against 2-17-84",
    ),
    (
        ("2-17-84", "25-08-23", "12/25/2023"),
        0,
        "PARSED",
        ("1984-02-17",),
        "17 can be no month: M-D-YY",
    ),
    (
        ("12/25/2023", "3/4/2020", "25/04/18"),
        2,
        "AMBIGUOUS",
        ("2018-04-25", "2025-04-18"),
        "D/M/YY against the month-first order, or YY/MM/DD: the day order is no year place",
    ),
    (
        ("12/25/2023", "3/4/2020", "25/04/18"),
        1,
        "PARSED",
        ("2020-03-04",),
        "12/25/2023 shows the month first",
    ),
]

# A value the other place fails only by the calendar decides nothing (a mistyped date looks
# the same); where strong evidence decides, that value fails with its reason.
YEAR_PLACE_ROWS += [
    (
        ("31/04/20", "15/03/19", "05/06/21"),
        1,
        "AMBIGUOUS",
        ("2019-03-15", "2015-03-19"),
        "31/04/20 fails D/M/YY only by the calendar: it decides nothing",
    ),
    (
        ("31/04/20", "15/03/19", "05/06/21"),
        0,
        "AMBIGUOUS",
        ("1931-04-20", "2031-04-20"),
        "year first, 31 is 1931 or 2031: nothing says which century",
    ),
    (
        ("15/03/85", "31/04/20", "25/04/18"),
        1,
        "FAILED",
        ("31 April 2020 does not exist",),
        "the column writes D/M/YY (no day 85): no 31 April",
    ),
    (
        ("15/03/85", "31/04/20", "25/04/18"),
        2,
        "PARSED",
        ("2018-04-25",),
        "a typo does not undo the year-last evidence",
    ),
    (
        ("99/12/31", "25/04/31"),
        1,
        "FAILED",
        ("31 April 2025 does not exist",),
        "the column writes YY/MM/DD (no day 99): no 31 April",
    ),
]

# A year's place shown with one separator says nothing of values written with another.
YEAR_PLACE_ROWS += [
    (
        ("31/12/70 11:59:59 pm", "25-01-19 02:52:07", "25/12/2023"),
        1,
        "AMBIGUOUS",
        ("2019-01-25T02:52:07", "2025-01-19T02:52:07"),
        "31/12/70 shows the year last for D/M/YY only, not for 25-01-19",
    ),
    (
        ("31-12-70", "25-01-19", "25/12/2023"),
        1,
        "PARSED",
        ("2019-01-25",),
        "31-12-70 can only be year last (no day 70): D-M-YY with the same separator",
    ),
]

# Every reading above by Python's datetime.strptime (%y: 69–99 → 1900s, 00–68 → 2000s, the
# POSIX rule): (text, format, ISO). 1931-04-25 is the past-events reading of 31 (2031 − 100).
STRPTIME_READINGS = [
    ("98/12/31", "%y/%m/%d", "1998-12-31"),
    ("24/03/15", "%y/%m/%d", "2024-03-15"),
    ("24/03/15", "%d/%m/%y", "2015-03-24"),
    ("24.03.15", "%d.%m.%y", "2015-03-24"),
    ("05-06-07", "%y-%m-%d", "2005-06-07"),
    ("3/4/24", "%d/%m/%y", "2024-04-03"),
    ("3/4/24", "%m/%d/%y", "2024-03-04"),
    ("25/6/16", "%d/%m/%y", "2016-06-25"),
    ("25/6/16", "%y/%m/%d", "2025-06-16"),
    ("15/03/24", "%d/%m/%y", "2024-03-15"),
    ("15/03/24", "%y/%m/%d", "2015-03-24"),
    ("25/04/18 8:57:57 pm", "%d/%m/%y %I:%M:%S %p", "2018-04-25T20:57:57"),
    ("25/04/18 8:57:57 pm", "%y/%m/%d %I:%M:%S %p", "2025-04-18T20:57:57"),
    ("5/7/1950 7:04 AM", "%d/%m/%Y %I:%M %p", "1950-07-05T07:04:00"),
    ("5/7/1950 7:04 AM", "%m/%d/%Y %I:%M %p", "1950-05-07T07:04:00"),
    ("wed apr 1 05:19:32 1970", "%a %b %d %H:%M:%S %Y", "1970-04-01T05:19:32"),
    ("25/04/18", "%d/%m/%y", "2018-04-25"),
    ("25/04/18", "%y/%m/%d", "2025-04-18"),
    ("25/04/31", "%d/%m/%y", "2031-04-25"),
    ("05/03/12", "%d/%m/%y", "2012-03-05"),
    ("2-17-84", "%m-%d-%y", "1984-02-17"),
    ("25-08-23", "%d-%m-%y", "2023-08-25"),
    ("25-08-23", "%y-%m-%d", "2025-08-23"),
    ("3/4/2020", "%m/%d/%Y", "2020-03-04"),
    ("25-01-19 02:52:07", "%d-%m-%y %H:%M:%S", "2019-01-25T02:52:07"),
    ("25-01-19 02:52:07", "%y-%m-%d %H:%M:%S", "2025-01-19T02:52:07"),
    ("25-01-19", "%d-%m-%y", "2019-01-25"),
    ("31/04/20", "%y/%m/%d", "2031-04-20"),
    ("15/03/19", "%d/%m/%y", "2019-03-15"),
    ("15/03/19", "%y/%m/%d", "2015-03-19"),
]

# Values only one place can read: the other reading strptime refuses. The first kind decide
# (no day 98, 99, 85, 70, no month 17); 25/04/31 and 31/04/20 fail only by the calendar.
ONE_PLACE_ONLY = [
    ("98/12/31", "%d/%m/%y", "no day 98"),
    ("31.12.98", "%y.%m.%d", "no day 98"),
    ("99-01-31", "%d-%m-%y", "no day 99"),
    ("99/12/31", "%d/%m/%y", "no day 99"),
    ("15/03/85", "%y/%m/%d", "no day 85"),
    ("25/04/31", "%y/%m/%d", "April has 30 days (calendar.monthrange(2025, 4))"),
    ("2-17-84", "%y-%m-%d", "no month 17"),
    ("31-12-70", "%y-%m-%d", "no day 70"),
    ("31/04/20", "%d/%m/%y", "April has 30 days"),
    ("31/04/20", "%m/%d/%y", "no month 31"),
]


def test_year_place_rows_do_not_repeat() -> None:
    keys = [(r[0], r[1]) for r in YEAR_PLACE_ROWS]
    assert len(keys) == len(set(keys))
    assert len({r[:2] for r in STRPTIME_READINGS}) == len(STRPTIME_READINGS)
    assert len({r[:2] for r in ONE_PLACE_ONLY}) == len(ONE_PLACE_ONLY)


@pytest.mark.parametrize(("text", "fmt", "iso"), STRPTIME_READINGS)
def test_year_place_readings_by_strptime(text: str, fmt: str, iso: str) -> None:
    got = dt.datetime.strptime(text, fmt)
    assert (got.isoformat() if "T" in iso else got.date().isoformat()) == iso


@pytest.mark.parametrize(("text", "fmt", "why"), ONE_PLACE_ONLY)
def test_deciding_values_have_one_place_only(text: str, fmt: str, why: str) -> None:
    assert calendar.monthrange(2025, 4)[1] == 30
    with pytest.raises(ValueError):
        dt.datetime.strptime(text, fmt)


def _named(iso: str) -> str:
    """ "1950-07-05T07:04:00" as the engine names a day in a reason: "5 July 1950"."""
    d = dt.date.fromisoformat(iso[:10])
    return f"{d.day} {calendar.month_name[d.month]} {d.year}"


@pytest.mark.parametrize(
    ("values", "i", "state", "readings", "why"),
    YEAR_PLACE_ROWS,
    ids=[f"{r[0][r[1]]}-{r[4]}" for r in YEAR_PLACE_ROWS],
)
def test_two_digit_year_place(
    values: tuple[str, ...], i: int, state: str, readings: tuple[str, ...], why: str
) -> None:
    c = col(list(values))
    parsed = parse_column(c, scan_column(c, reference_year=2026).best.spec)
    got = iso_text(parsed.value, parsed.offset_min, parsed.has_time)[i]
    assert CellState(int(parsed.state[i])).name == state, f"{why}: {got or parsed.reason[i]}"
    if state == "PARSED":
        assert got.removesuffix("+00:00") == readings[0], why
    elif state == "FAILED":
        assert all(r in parsed.reason[i] for r in readings), (why, parsed.reason[i])
    else:
        for r in readings:
            assert r in parsed.reason[i] or _named(r) in parsed.reason[i], (why, parsed.reason[i])


def test_reported_column_with_an_epoch_number_cell() -> None:
    # As found by the round trip: the epoch is a number cell. 2145830400 s is
    # 2037-12-31T00:00:00Z (datetime.fromtimestamp(2145830400, UTC)).
    df = pd.DataFrame({"c": pd.Series(list(BUG[:3]) + [2145830400], dtype=object)})
    column = RawTable.from_dataframe(df).columns[0]
    best = scan_column(column, reference_year=2026).best
    parsed = parse_column(column, best.spec)
    states = [CellState(int(s)).name for s in parsed.state]
    assert states == ["PARSED", "AMBIGUOUS", "AMBIGUOUS", "PARSED"], parsed.reason
    assert "2018-04-25T20:57:57" in parsed.reason[2] and "2025-04-18T20:57:57" in parsed.reason[2]
    epoch = dt.datetime.fromtimestamp(2145830400, dt.UTC).replace(tzinfo=None)
    assert parsed.value[3] == np.datetime64(epoch, "us")
    assert any("could stand first (YY/MM/DD) or last" in w for w in best.warnings)
    assert best.decisions["day_order"] != "evidence"


def test_a_conflicting_year_place_says_why() -> None:
    # 2-17-84 shows the year last (no month 17) and the month first; 25-08-23 read year last
    # would be day first. Counts by hand: 1 value year-last only, 1 value against the order.
    best = scan_column(col(["2-17-84", "25-08-23", "12/25/2023"]), reference_year=2026).best
    assert any(
        w.startswith(
            "two-digit years stand last (D-M-YY or M-D-YY) in 1 values, but 1 values read "
            "that way go against the column's month-first order"
        )
        for w in best.warnings
    ), best.warnings


def test_a_tied_number_reading_still_competes_with_an_implausible_earlier_one() -> None:
    # 916125804 is epoch seconds (1999-01-12T07:23:24Z); "10122021" as epoch seconds is
    # 1970-04-28T03:40:21Z, outside the epoch years, and as DDMMYYYY 2021-12-10 or MMDDYYYY
    # 2021-10-12, which tie. None of the three is taken (found by the round trip).
    # References: datetime.fromtimestamp(…, UTC) and datetime.strptime("%d%m%Y" / "%m%d%Y").
    assert dt.datetime.fromtimestamp(10122021, dt.UTC).isoformat() == "1970-04-28T03:40:21+00:00"
    assert dt.datetime.strptime("10122021", "%d%m%Y").date().isoformat() == "2021-12-10"
    assert dt.datetime.strptime("10122021", "%m%d%Y").date().isoformat() == "2021-10-12"
    c = col(["10122021", 916125804], text=False)
    parsed = parse_column(c, scan_column(c, reference_year=2026).best.spec)
    assert parsed.state[0] == CellState.AMBIGUOUS, parsed.value[0]
    for reading in ("1970-04-28T03:40:21+00:00", "2021-12-10", "2021-10-12"):
        assert reading in parsed.reason[0], parsed.reason[0]
    epoch = dt.datetime.fromtimestamp(916125804, dt.UTC).replace(tzinfo=None)
    assert parsed.value[1] == np.datetime64(epoch, "us")


def test_a_number_outside_plausible_years_with_another_reading_is_ambiguous() -> None:
    # Among epoch seconds, "21001121" is 1970-09-01T01:38:41Z (epoch) or 2100-11-21
    # (YYYYMMDD, datetime.strptime "%Y%m%d"): neither is taken silently.
    values: list[object] = ["21001121", 1551073921, 1600000000, "25/3/2014"]
    arr = np.empty(4, dtype=object)
    arr[:] = values
    c = RawColumn("c", arr, kinds_of(arr))
    best = scan_column(c, reference_year=2026).best
    assert "epoch-s" in best.spec.patterns and "compact-ymd" in best.spec.alternates
    parsed = parse_column(c, best.spec)
    assert parsed.state[0] == CellState.AMBIGUOUS
    assert "1970-09-01T01:38:41+00:00" in parsed.reason[0] and "2100-11-21" in parsed.reason[0]
    # 1551073921 s = 2019-02-25T05:52:01Z (datetime.fromtimestamp(…, UTC))
    assert parsed.value[1] == np.datetime64("2019-02-25T05:52:01", "us")


def test_spec_with_plausible_years_round_trips_through_json() -> None:
    import json

    from datemend.core.spec import ParseSpec

    spec = ParseSpec(
        patterns=("serial",), plausible=(("serial", 1920, 2076),), alternates=("epoch-s",)
    )
    back = ParseSpec.from_dict(json.loads(json.dumps(spec.to_dict())))
    assert back == spec and hash(back) == hash(spec)


# A four-digit whole number among serials is most likely a year written alone: its serial
# reading (1899-12-30 + N days, ISO/IEC 29500 §18.17.4, by datetime arithmetic) lands in
# 1902–1908, outside the column's plausible years, so it is not taken silently.
YEAR_ALONE_ROWS = [
    (["2024", "45000", "44000"], "text", "1905-07-16", "2024 alone; 1899-12-30 + 2024 days"),
    ([2024, 45000, 44000], "number", "1905-07-16", "a number cell 2024 among serial cells"),
    (["1999", "13/02/2020", "14/03/2021"], "text", "1905-06-21", "a year beside D/M/YYYY text"),
    ([1987.0, 45000.25], "float", "1905-06-09", "a float cell 1987.0: 1899-12-30 + 1987 days"),
]


def test_year_alone_rows_do_not_repeat() -> None:
    keys = [repr(r[0]) for r in YEAR_ALONE_ROWS]
    assert len(keys) == len(set(keys))


@pytest.mark.parametrize(
    ("values", "kind", "serial_iso", "why"), YEAR_ALONE_ROWS, ids=[r[3] for r in YEAR_ALONE_ROWS]
)
def test_a_year_alone_among_serials_is_not_a_1905_date(
    values: list[object], kind: str, serial_iso: str, why: str
) -> None:
    c = col(values, name="Joined", text=kind == "text")
    best = scan_column(c, reference_year=2026).best
    parsed = parse_column(c, best.spec)
    assert parsed.state[0] == CellState.AMBIGUOUS, why
    year = str(int(float(values[0])))
    assert serial_iso in parsed.reason[0] and f"the year {year} alone" in parsed.reason[0]
    # The dates beside it keep their reading (45000 → 2023-03-15 by date arithmetic).
    assert (parsed.state[1:] == CellState.PARSED).all()


# Two-digit years where the POSIX rule (69–99 → 1900s, 00–68 → 2000s; REFERENCES.md, ISO C
# strptime) and the past-events rule (latest year not after 2026) differ: years 27–68.
CENTURY_ROWS = [
    ("Renewal due", "30/06/30", "2030-06-30", "a due date is ahead: POSIX, by the column name"),
    ("Expires", "31/12/45", "2045-12-31", "an expiry date is ahead: POSIX, by the column name"),
    ("Registered", "25/12/30", "1930-12-25", "registrations are past events: 1930"),
    ("Code", "25/12/30", "AMBIGUOUS", "no hint: 1930 or 2030, nothing decides"),
]


def test_century_rows_do_not_repeat() -> None:
    keys = [(r[0], r[1]) for r in CENTURY_ROWS]
    assert len(keys) == len(set(keys))


@pytest.mark.parametrize(
    ("name", "text", "want", "why"), CENTURY_ROWS, ids=[r[3] for r in CENTURY_ROWS]
)
def test_two_digit_year_century_is_never_a_silent_guess(
    name: str, text: str, want: str, why: str
) -> None:
    # 13/4/85 shows the year is last and the day first; it is 1985 under both rules.
    c = col(["13/4/85", text], name=name)
    best = scan_column(c, reference_year=2026).best
    parsed = parse_column(c, best.spec)
    assert parsed.value[0] == np.datetime64("1985-04-13", "us")
    if want == "AMBIGUOUS":
        assert parsed.state[1] == CellState.AMBIGUOUS, why
        assert "1930" in parsed.reason[1] and "2030" in parsed.reason[1], parsed.reason[1]
    else:
        assert parsed.state[1] == CellState.PARSED, f"{why}: {parsed.reason[1]}"
        assert parsed.value[1] == np.datetime64(want, "us"), why


def test_plausible_years_include_both_end_years_and_nothing_past_them() -> None:
    # YYYYMMDD texts inside 1920–2076 are taken; one a day outside is also read as epoch
    # seconds (8 digits, 1970: datetime.fromtimestamp), so it is AMBIGUOUS, never taken.
    from datemend.core.spec import ParseSpec

    texts = ["19191231", "19200101", "20761231", "20770101"]
    spec = ParseSpec(
        patterns=("compact-ymd",),
        plausible=(("compact-ymd", 1920, 2076),),
        alternates=("epoch-s",),
    )
    parsed = parse_column(RawColumn("c", np.array(texts, dtype=object), kinds_of(texts)), spec)
    assert parsed.state.tolist() == [
        CellState.AMBIGUOUS, CellState.PARSED, CellState.PARSED, CellState.AMBIGUOUS
    ]  # fmt: skip
    assert parsed.value[1] == np.datetime64("1920-01-01", "us")
    assert parsed.value[2] == np.datetime64("2076-12-31", "us")
    epoch = dt.datetime.fromtimestamp(19191231, dt.UTC).strftime("%Y-%m-%dT%H:%M:%S")
    assert epoch in parsed.reason[0] and "1919-12-31" in parsed.reason[0]
