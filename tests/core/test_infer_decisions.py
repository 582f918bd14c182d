"""Scan decisions: day/month order by evidence or preference, century rules, date system,
zones, rival number readings — and the sentences that say why. Counts in the expected
sentences are counted by hand from the columns below."""

from __future__ import annotations

import numpy as np
import pytest

from datemend.core.clean import CellState
from datemend.core.infer import scan_column
from datemend.core.parse import parse_column
from datemend.core.table import RawColumn, SourceFacts, kinds_of


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


# Where a two-digit year stands, decided column-wide by a value only one place can read.
# Expected dates by hand, checked with dateutil.parser.parse(v, yearfirst=...) where noted.
YEAR_PLACE_ROWS = [
    (("98/12/31", "24/03/15"), 1, "2024-03-15", "98 is no day or month: year first (yearfirst)"),
    (("31.12.98", "24.03.15"), 1, "2015-03-24", "98 last shows the year last, 24 is the day"),
    (("13/04/2021", "24/03/15"), 1, "2015-03-24", "a four-digit year last decides the column"),
    (("99-01-31", "05-06-07"), 1, "2005-06-07", "99 first: YY-MM-DD (dateutil yearfirst)"),
    (("24/03/15", "23/12/01"), 0, "AMBIGUOUS", "nothing shows the place: both readings kept"),
    (("3/4/24", "5/6/23"), 0, "AMBIGUOUS", "one-digit first field: day/month undecided"),
    (("1993/06/30", "16.4.1900", "25/6/16"), 2, "AMBIGUOUS", "year first and last both seen"),
    (("2024/03/15", "15/03/24"), 1, "2015-03-24", "the column writes YYYY/MM/DD: year first"),
]


def test_year_place_rows_do_not_repeat() -> None:
    keys = [r[0] for r in YEAR_PLACE_ROWS]
    assert len(keys) == len(set(keys))


@pytest.mark.parametrize(
    ("values", "i", "want", "why"), YEAR_PLACE_ROWS, ids=[r[3] for r in YEAR_PLACE_ROWS]
)
def test_two_digit_year_place(values: tuple[str, ...], i: int, want: str, why: str) -> None:
    c = col(list(values))
    parsed = parse_column(c, scan_column(c, reference_year=2026).best.spec)
    if want == "AMBIGUOUS":
        assert parsed.state[i] == CellState.AMBIGUOUS, why
        assert parsed.reason[i], why
    else:
        assert parsed.state[i] == CellState.PARSED, f"{why}: {parsed.reason[i]}"
        assert parsed.value[i] == np.datetime64(want, "us"), why


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
