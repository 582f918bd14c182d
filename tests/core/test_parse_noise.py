"""Golden table: noise around values, blank tokens, zone conversion, mixed columns.

Expected dates by hand; zone conversions checked against Python's ``zoneinfo`` (with tzdata).
"""

from __future__ import annotations

import datetime as dt
from zoneinfo import ZoneInfo

import numpy as np
import pytest
from _engine_kit import read_with

from datemend.core.clean import NAIVE, CellState
from datemend.core.parse import parse_column, parse_series
from datemend.core.spec import ParseSpec
from datemend.core.table import RawColumn, kinds_of

SPEC = ParseSpec(
    patterns=("iso-date", "num-slash", "name-dmy", "serial"),
    day_order="dmy",
    blank_tokens=("N/A", "unknown", "-"),
)


def read(values: list[str], spec: ParseSpec = SPEC) -> list[tuple[str, str]]:
    return read_with(values, spec)


ROWS = [
    ("\u00a02024-03-01\u00a0", "2024-03-01", "no-break spaces around"),
    ("  2024-03-01  ", "2024-03-01", "spaces around"),
    ('"2024-03-01"', "2024-03-01", "double quotes"),
    ("'2024-03-01'", "2024-03-01", "single quotes"),
    ("(2024-03-01)", "2024-03-01", "brackets"),
    ("[2024-03-01]", "2024-03-01", "square brackets"),
    ("2024-03-01,", "2024-03-01", "trailing comma"),
    ("2024-03-01.", "2024-03-01", "trailing period"),
    ("1/3/2024;", "2024-03-01", "trailing semicolon"),
    ("12  April   2024", "2024-04-12", "doubled spaces"),
    ("12\tApril 2024", "2024-04-12", "a tab"),
    ("2024-03-01 UTC", "2024-03-01", "a UTC word after a date with no time is noise"),
    ("2024-03-01Z", "2024-03-01", "a Z after a date with no time is noise"),
    ("44927.0", "2023-01-01", "serial stored as text with .0"),
    ("N/A", "BLANK: treated as blank", "blank token, as written"),
    ("n/a", "BLANK: treated as blank", "blank tokens are case-folded"),
    (" Unknown ", "BLANK: treated as blank", "and trimmed"),
    ("-", "BLANK: treated as blank", "a dash token"),
    ('""', "FAILED: only punctuation", "only quotes: not empty, so not blank"),
    ("TBD", "FAILED: no pattern", "not a blank token in this spec: it fails, visibly"),
    # Words around a date change what it means: read nothing rather than a guess.
    ("12/03/2024 (approx)", "FAILED: no pattern", "an approximate date is not that day"),
    ("c. 1990", "FAILED: no pattern", "circa a year: no day to give"),
    ("2024-03-12?", "FAILED: no pattern", "a doubted date stays unread"),
]


def test_no_input_repeats() -> None:
    inputs = [r[0] for r in ROWS]
    assert len(inputs) == len(set(inputs))


@pytest.mark.parametrize(("text", "expected", "why"), ROWS, ids=[repr(r[0]) for r in ROWS])
def test_noise_table(text: str, expected: str, why: str) -> None:
    ((state, got),) = read([text])
    if expected.split(":")[0] in ("BLANK", "FAILED"):
        want, words = expected.split(": ", 1)
        assert state == want, f"{text!r}: {why}; got {state} {got}"
        assert words in got, got
    else:
        assert (state, got) == ("PARSED", expected), why


def test_mixed_column_gives_each_cell_its_pattern() -> None:
    arr = np.array(["13/4/2024", "2024-04-13", "13 April 2024", "45395"], dtype=object)
    col = parse_column(RawColumn("c", arr, kinds_of(arr, text_only=True)), SPEC)
    assert [col.patterns[p] for p in col.pattern] == ["num-slash", "iso-date", "name-dmy", "serial"]
    # 45395 = date(1899,12,30) + 45395 days = 2024-04-13 (datetime arithmetic)
    assert set(col.value.tolist()) == {dt.datetime(2024, 4, 13)}


def test_zone_utc_moves_aware_values_only() -> None:
    spec = ParseSpec(patterns=("iso-date",), zone="UTC")
    got = read(["2024-03-01T10:00:00+02:00", "2024-03-01T10:00:00", "2024-03-01"], spec)
    assert got == [
        ("PARSED", "2024-03-01T08:00:00+00:00"),
        ("PARSED", "2024-03-01T10:00:00"),
        ("PARSED", "2024-03-01"),
    ]


def test_zone_iana_matches_zoneinfo() -> None:
    spec = ParseSpec(patterns=("iso-date",), zone="Europe/Paris")
    texts = ["2024-03-31T00:30:00Z", "2024-03-31T01:30:00Z", "2024-10-27T00:30:00Z"]
    arr = np.array(texts, dtype=object)
    col = parse_column(RawColumn("c", arr, kinds_of(arr, text_only=True)), spec)
    for i, t in enumerate(texts):
        want = dt.datetime.fromisoformat(t).astimezone(ZoneInfo("Europe/Paris"))
        assert col.value[i] == np.datetime64(want.replace(tzinfo=None), "us")
        assert col.offset_min[i] == want.utcoffset() // dt.timedelta(minutes=1)


def test_naive_zone_gap_fails_with_a_reason() -> None:
    # 2024-03-31 02:30 does not exist in Europe/Paris (clocks jump 02:00 → 03:00; zoneinfo).
    spec = ParseSpec(patterns=("iso-date",), zone="UTC", naive_zone="Europe/Paris")
    got = read(["2024-03-31T02:30:00", "2024-03-31T04:30:00"], spec)
    assert got[0][0] == "FAILED" and "clock change" in got[0][1]
    want = dt.datetime(2024, 3, 31, 4, 30, tzinfo=ZoneInfo("Europe/Paris")).astimezone(dt.UTC)
    assert got[1] == ("PARSED", want.replace(tzinfo=None).isoformat() + "+00:00")


def test_out_of_nanosecond_range_survives_zone_moves() -> None:
    spec = ParseSpec(patterns=("iso-date",), zone="UTC")
    got = read(["1600-01-01T12:00:00+01:00", "9999-12-31T12:00:00-01:00"], spec)
    assert got == [
        ("PARSED", "1600-01-01T11:00:00+00:00"),
        ("PARSED", "9999-12-31T13:00:00+00:00"),
    ]


def test_parse_series_helper() -> None:
    import pandas as pd

    col = parse_series(pd.Series(["2024-03-01", None, "x"], name="d"), SPEC)
    assert col.state.tolist() == [CellState.PARSED, CellState.BLANK, CellState.FAILED]
    assert col.offset_min[0] == NAIVE


def test_dates_without_time_are_not_moved_by_zones() -> None:
    # A day is not an instant: only values with a time of day take naive_zone (by hand).
    spec = ParseSpec(patterns=("iso-date",), zone="America/Los_Angeles", naive_zone="Asia/Tokyo")
    got = read(["2021-07-01", "2021-07-01T09:00:00"], spec)
    assert got[0] == ("PARSED", "2021-07-01")
    want = dt.datetime(2021, 7, 1, 9, tzinfo=ZoneInfo("Asia/Tokyo")).astimezone(
        ZoneInfo("America/Los_Angeles")
    )
    assert got[1] == ("PARSED", want.replace(tzinfo=None).isoformat() + "-07:00")


def test_a_written_midnight_is_still_an_instant_for_zones() -> None:
    # 2021-07-01T00:00 in Tokyo is 2021-06-30T08:00 in Los Angeles (zoneinfo): a written
    # midnight moves like any other time, though alone it reads as a plain date.
    spec = ParseSpec(patterns=("iso-date",), zone="America/Los_Angeles", naive_zone="Asia/Tokyo")
    want = dt.datetime(2021, 7, 1, tzinfo=ZoneInfo("Asia/Tokyo")).astimezone(
        ZoneInfo("America/Los_Angeles")
    )
    got = read(["2021-07-01T00:00:00"], spec)
    assert got == [("PARSED", want.replace(tzinfo=None).isoformat() + "-07:00")]


GERMAN = ParseSpec(patterns=("name-dmy",), locales=("de",))


@pytest.mark.parametrize(
    ("text", "expected", "why"),
    [
        ("23. März 2025 10:00", "PARSED: 2025-03-23T10:00:00", "CLDR de long form: day dot"),
        ("25 märz 23. 9:36 pm", "FAILED: no pattern", "23. is a day (ordinal dot): YY Month D."),
    ],
    ids=["day dot first", "day dot last"],
)
def test_german_day_dot_says_which_field_is_the_day(text: str, expected: str, why: str) -> None:
    # babel format_date(date(1985, 4, 12), "long", locale="de") == "12. April 1985": the dot
    # marks the day. A dot after the last field makes that one the day, a form no pattern
    # reads, so it fails visibly instead of becoming 25 March 2023.
    ((state, got),) = read([text], GERMAN)
    want, words = expected.split(": ", 1)
    assert state == want, f"{why}; got {got}"
    assert words in got, why
