"""RFC 3339 (Date and Time on the Internet: Timestamps), §5.8 examples.

Source: RFC 3339 §5.8, as gathered in shared/docs/REFERENCES.md. Epoch values checked with
Python's datetime (reference library).
"""

from __future__ import annotations

import datetime as dt

import pytest

from ._refkit import CellState, as_us, assert_unique, run

EPOCH = dt.datetime(1970, 1, 1, tzinfo=dt.UTC)

# (value, wall clock as written, offset minutes, UTC instant, why) — RFC 3339 §5.8.
EXAMPLES = [
    (
        "1985-04-12T23:20:50.52Z",
        dt.datetime(1985, 4, 12, 23, 20, 50, 520000),
        0,
        EPOCH + dt.timedelta(seconds=482196050, microseconds=520000),
        "§5.8: 23:20:50.52 UTC on 12 April 1985 (482196050.52 s since the epoch)",
    ),
    (
        "1996-12-19T16:39:57-08:00",
        dt.datetime(1996, 12, 19, 16, 39, 57),
        -480,
        EPOCH + dt.timedelta(seconds=851042397),
        "§5.8: 16:39:57 on 19 Dec 1996, 8 hours behind UTC = 1996-12-20T00:39:57Z",
    ),
    (
        "1937-01-01T12:00:27.87+00:20",
        dt.datetime(1937, 1, 1, 12, 0, 27, 870000),
        20,
        dt.datetime(1937, 1, 1, 11, 40, 27, 870000, tzinfo=dt.UTC),
        "§5.8: Netherlands time 1937, an offset of twenty minutes is legal",
    ),
]


def test_table_has_no_repeated_input() -> None:
    assert_unique(EXAMPLES)


@pytest.mark.parametrize(
    ("value", "wall", "offset", "instant", "why"), EXAMPLES, ids=[r[0] for r in EXAMPLES]
)
def test_reference_instants_agree_with_datetime(
    value: str, wall: dt.datetime, offset: int, instant: dt.datetime, why: str
) -> None:
    # The published values against Python's datetime.fromisoformat (reference library).
    ref = dt.datetime.fromisoformat(value.replace("Z", "+00:00"))
    assert ref == instant, why
    assert ref.utcoffset() == dt.timedelta(minutes=offset)


def test_epoch_seconds_of_the_examples() -> None:
    # RFC 3339 §5.8 / REFERENCES.md: 482196050.52 and 851042397 seconds since the epoch.
    assert (EXAMPLES[0][3] - EPOCH).total_seconds() == pytest.approx(482196050.52)
    assert (EXAMPLES[1][3] - EPOCH).total_seconds() == 851042397
    assert EXAMPLES[1][3] == dt.datetime(1996, 12, 20, 0, 39, 57, tzinfo=dt.UTC)


def test_section_5_8_examples_in_one_column() -> None:
    # RFC 3339 §5.8: all three examples together (a column of aware values with three offsets).
    r = run([e[0] for e in EXAMPLES])
    for i, (_, wall, offset, instant, why) in enumerate(EXAMPLES):
        assert r.state(i) == CellState.PARSED, why + " — " + r.describe(i)
        assert r.value(i) == as_us(wall), "the wall clock as written: " + r.describe(i)
        assert r.offset(i) == offset, why + " — " + r.describe(i)
        assert r.utc(i) == as_us(instant), why + " — " + r.describe(i)


def test_leap_second_is_reported_not_shifted() -> None:
    # RFC 3339 §5.8: 1990-12-31T23:59:60Z is a leap second. Python's datetime cannot hold second
    # 60; the tool must report the cell, not crash and not move it to 23:59:59 or 00:00:00.
    with pytest.raises(ValueError):
        dt.datetime(1990, 12, 31, 23, 59, 60)
    values = ["1990-12-31T23:59:60Z", "1990-12-31T23:59:59Z", "1991-01-01T00:00:00Z"]
    r = run(values)
    assert r.parsed is not None
    assert r.state(0) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(0)
    assert isinstance(r.reason(0), str) and r.reason(0), r.describe(0)
    for i, want in ((1, dt.datetime(1990, 12, 31, 23, 59, 59)), (2, dt.datetime(1991, 1, 1))):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.utc(i) == as_us(want), r.describe(i)


def test_leap_second_with_an_offset() -> None:
    # RFC 3339 §5.7 (value from memory): a leap second may be written in local time, e.g.
    # 1990-12-31T15:59:60-08:00 is the same leap second; again reported, not shifted.
    values = ["1990-12-31T15:59:60-08:00", "1996-12-19T16:39:57-08:00"]
    r = run(values)
    assert r.parsed is not None
    assert r.state(0) in (CellState.FAILED, CellState.AMBIGUOUS), r.describe(0)
    assert r.reason(0), r.describe(0)
    assert r.state(1) == CellState.PARSED, r.describe(1)


@pytest.mark.parametrize(
    "value",
    ["1985-04-12t23:20:50.52z", "1985-04-12 23:20:50.52Z"],
    ids=["lower-case t and z", "space separator"],
)
def test_section_5_6_notes(value: str) -> None:
    # RFC 3339 §5.6 notes (value from memory): "T" and "Z" may be written lower case, and a space
    # may separate date and time for readability. Same instant as the first §5.8 example.
    r = run([value, "1996-12-19T16:39:57-08:00", "2001-09-09T01:46:40Z"])
    assert r.state(0) == CellState.PARSED, r.describe(0)
    assert r.offset(0) == 0, r.describe(0)
    assert r.utc(0) == as_us(EXAMPLES[0][3]), r.describe(0)


def test_unknown_local_offset() -> None:
    # RFC 3339 §4.3 (value from memory): "-00:00" says the time is in UTC but the local offset is
    # unknown; the instant is the same as with "Z". Read as that instant, or flagged with a reason.
    values = ["1985-04-12T23:20:50.52-00:00", "1996-12-19T16:39:57-08:00", "2001-09-09T01:46:40Z"]
    r = run(values)
    if r.state(0) == CellState.PARSED:
        assert r.utc(0) == as_us(EXAMPLES[0][3]), r.describe(0)
    else:
        assert r.reason(0), r.describe(0)
