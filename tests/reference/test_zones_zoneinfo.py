"""Offsets and IANA zones (issue 3 point 8) against Python's zoneinfo with the tzdata package.

Source: the IANA time zone database as shipped by ``tzdata``, read through ``zoneinfo``
(reference library, PEP 615); gaps and repeats of local time follow PEP 495 (``fold``).
Converting a spec's aware values to a zone (``ParseSpec.zone``) and placing naive values in a
zone (``ParseSpec.naive_zone``) must give the instants zoneinfo gives; a naive time the zone skips
or repeats must be flagged, never shifted (issue 3: never silently wrong).
"""

from __future__ import annotations

import datetime as dt
from zoneinfo import ZoneInfo

import pytest

from ._refkit import CellState, as_us, assert_unique, run

AMS = ZoneInfo("Europe/Amsterdam")
NY = ZoneInfo("America/New_York")

# (value, zone, why) — RFC 3339 §5.8 instants and others moved to a zone; expected wall clock and
# offset from datetime.astimezone(ZoneInfo(zone)).
AWARE = [
    ("1996-12-19T16:39:57-08:00", "Europe/Amsterdam", "RFC 3339 §5.8 example into CET (winter)"),
    ("1985-04-12T23:20:50.52Z", "America/New_York", "RFC 3339 §5.8 example into EST (April 1985)"),
    ("2021-07-01T12:00:00+00:00", "Europe/Amsterdam", "summer time: +02:00"),
    ("2021-03-28T00:59:59Z", "Europe/Amsterdam", "one second before the spring change"),
    ("2021-03-28T01:00:00Z", "Europe/Amsterdam", "the instant of the spring change"),
    ("2021-10-31T00:30:00Z", "Europe/Amsterdam", "first 02:30 of the autumn repeat (+02:00)"),
    ("2021-10-31T01:30:00Z", "Europe/Amsterdam", "second 02:30 of the autumn repeat (+01:00)"),
    ("2024-02-29T23:30:00-05:00", "Asia/Kolkata", "leap day moved across midnight, +05:30"),
]


def test_table_has_no_repeated_input() -> None:
    assert_unique(AWARE)


@pytest.mark.parametrize(("value", "zone", "why"), AWARE, ids=[r[2] for r in AWARE])
def test_aware_values_moved_to_a_zone(value: str, zone: str, why: str) -> None:
    ref = dt.datetime.fromisoformat(value.replace("Z", "+00:00")).astimezone(ZoneInfo(zone))
    r = run([value, "2001-09-09T01:46:40Z", "1999-12-31T23:59:59+02:00"], zone=zone)
    assert r.state(0) == CellState.PARSED, why + " — " + r.describe(0)
    assert r.value(0) == as_us(ref.replace(tzinfo=None)), why + " — " + r.describe(0)
    assert r.offset(0) == int(ref.utcoffset().total_seconds() // 60), why + " — " + r.describe(0)


def test_aware_values_moved_to_utc() -> None:
    # zone="UTC": every aware value at offset 0, same instant (datetime.astimezone(UTC)).
    values = ["1996-12-19T16:39:57-08:00", "1937-01-01T12:00:27.87+00:20", "2001-09-09T01:46:40Z"]
    r = run(values, zone="UTC")
    for i, v in enumerate(values):
        ref = dt.datetime.fromisoformat(v.replace("Z", "+00:00")).astimezone(dt.UTC)
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.offset(i) == 0, r.describe(i)
        assert r.value(i) == as_us(ref), r.describe(i)


def test_naive_values_placed_in_their_zone() -> None:
    # Naive wall clocks written in Amsterdam, moved to UTC: zoneinfo gives the instants.
    values = ["2021-07-01 14:00", "2021-01-15 09:30", "2021-03-28 01:59", "2021-03-28 03:00"]
    r = run(values, zone="UTC", naive_zone="Europe/Amsterdam")
    for i, v in enumerate(values):
        ref = dt.datetime.fromisoformat(v).replace(tzinfo=AMS).astimezone(dt.UTC)
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.utc(i) == as_us(ref), r.describe(i)


def test_naive_time_in_a_gap_is_flagged() -> None:
    # PEP 495 / tzdata: Amsterdam skips 02:00–03:00 on 2021-03-28; 02:30 never happened there.
    # zoneinfo shows it: the time does not survive a round trip through UTC.
    gap = dt.datetime(2021, 3, 28, 2, 30, tzinfo=AMS)
    assert gap.astimezone(dt.UTC).astimezone(AMS).replace(tzinfo=None) != gap.replace(tzinfo=None)
    values = ["2021-03-28 02:30", "2021-07-01 14:00", "2021-01-15 09:30"]
    r = run(values, zone="UTC", naive_zone="Europe/Amsterdam")
    assert r.state(0) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(0)
    assert r.reason(0), r.describe(0)


def test_naive_time_in_a_repeat_is_flagged() -> None:
    # PEP 495 / tzdata: New York repeats 01:00–02:00 on 2021-11-07; 01:30 happened twice
    # (fold=0 at -04:00, fold=1 at -05:00), so its instant is not known.
    first = dt.datetime(2021, 11, 7, 1, 30, tzinfo=NY)
    second = first.replace(fold=1)
    assert first.utcoffset() != second.utcoffset()
    values = ["2021-11-07 01:30", "2021-07-01 14:00", "2021-01-15 09:30"]
    r = run(values, zone="UTC", naive_zone="America/New_York")
    assert r.state(0) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(0)
    assert r.reason(0), r.describe(0)


@pytest.mark.parametrize(
    ("zone", "naive_zone"),
    [("Asia/Tokyo", "America/Los_Angeles"), ("America/Los_Angeles", "Asia/Tokyo")],
)
def test_dates_without_time_are_not_moved(zone: str, naive_zone: str) -> None:
    # zones.py contract (a date names a day, not an instant); checked by hand: the day stays.
    # Moving midnight in Tokyo to Los Angeles would change the day itself (a birth date!).
    values = ["2021-07-01", "2021-01-15", "2021-12-31"]
    r = run(values, zone=zone, naive_zone=naive_zone)
    for i, v in enumerate(values):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(dt.date.fromisoformat(v)), r.describe(i)


def test_a_column_mixing_naive_and_aware_is_flagged() -> None:
    # Issue 3 point 8: a column mixing naive and aware values is flagged (a warning on the
    # suggestion); each value still keeps what it says (datetime.fromisoformat).
    values = ["2021-07-01T14:00:00", "2021-07-01T14:00:00+02:00", "2021-01-15T09:30:00Z"]
    r = run(values)
    assert r.report.best is not None
    assert r.report.best.warnings, r.report.best
    for i, v in enumerate(values):
        ref = dt.datetime.fromisoformat(v.replace("Z", "+00:00"))
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(ref.replace(tzinfo=None)), r.describe(i)
