"""Unix time against POSIX (XBD §4.16 "Seconds Since the Epoch").

Sources: POSIX.1 XBD "Seconds Since the Epoch" (the formula below, value from memory of the
standard's text) and the check values gathered in shared/docs/REFERENCES.md; Python's
``datetime.fromtimestamp(v, UTC)`` as a reference library.
"""

from __future__ import annotations

import datetime as dt

import pytest

from datemend.core.table import CellKind

from ._refkit import CellState, as_us, assert_unique, run

# (seconds, expected UTC, why) — REFERENCES.md (POSIX).
EPOCHS = [
    (1000000000, dt.datetime(2001, 9, 9, 1, 46, 40), "one billion seconds"),
    (1234567890, dt.datetime(2009, 2, 13, 23, 31, 30), "1234567890"),
    (2147483647, dt.datetime(2038, 1, 19, 3, 14, 7), "largest signed 32-bit value"),
]
# More values of a realistic export (2015..2024), so a column decides its pattern.
FILLERS = [1420070400, 1577836800, 1704067200, 1600000000, 1500000000]


def posix_seconds(t: dt.datetime) -> int:
    """POSIX XBD "Seconds Since the Epoch" formula (every day exactly 86,400 s)."""
    year = t.year - 1900
    yday = t.timetuple().tm_yday - 1
    return (
        t.second
        + t.minute * 60
        + t.hour * 3600
        + yday * 86400
        + (year - 70) * 31536000
        + ((year - 69) // 4) * 86400
        - ((year - 1) // 100) * 86400
        + ((year + 299) // 400) * 86400
    )


def test_table_has_no_repeated_input() -> None:
    assert_unique(EPOCHS)


@pytest.mark.parametrize(("seconds", "expected", "why"), EPOCHS, ids=[r[2] for r in EPOCHS])
def test_reference_values_agree(seconds: int, expected: dt.datetime, why: str) -> None:
    # Published values against the POSIX formula and datetime.fromtimestamp (reference library).
    assert posix_seconds(expected) == seconds, why
    assert dt.datetime.fromtimestamp(seconds, dt.UTC).replace(tzinfo=None) == expected, why


def _check(r, i: int, expected: dt.datetime) -> None:  # type: ignore[no-untyped-def]
    assert r.state(i) == CellState.PARSED, r.describe(i)
    # Epoch values are UTC instants: either aware at +00:00 or naive UTC wall clock.
    assert r.offset(i) in (0, -(2**31)), r.describe(i)
    assert r.utc(i) == as_us(expected), r.describe(i)


@pytest.mark.parametrize("kind", [CellKind.INT, CellKind.TEXT], ids=["number cells", "CSV text"])
def test_epoch_seconds(kind: CellKind) -> None:
    # POSIX: seconds since 1970-01-01T00:00:00Z.
    numbers = [s for s, *_ in EPOCHS] + FILLERS
    values = numbers if kind == CellKind.INT else [str(n) for n in numbers]
    r = run(values, kinds=[kind] * len(values))
    for i, n in enumerate(numbers):
        want = dt.datetime.fromtimestamp(n, dt.UTC).replace(tzinfo=None)
        _check(r, i, want)


@pytest.mark.parametrize("kind", [CellKind.INT, CellKind.TEXT], ids=["number cells", "CSV text"])
def test_epoch_milliseconds(kind: CellKind) -> None:
    # POSIX seconds × 1000 (milliseconds, as many systems export); the extra digits are the
    # fraction of a second.
    numbers = [s * 1000 for s, *_ in EPOCHS] + [f * 1000 + 250 for f in FILLERS]
    values = numbers if kind == CellKind.INT else [str(n) for n in numbers]
    r = run(values, kinds=[kind] * len(values))
    for i, n in enumerate(numbers):
        want = dt.datetime(1970, 1, 1) + dt.timedelta(milliseconds=n)
        _check(r, i, want)


def test_day_is_86400_seconds_across_a_leap_second() -> None:
    # POSIX: no leap seconds are counted, so 1990-12-31T23:59:59Z is 662687999 and
    # 1991-01-01T00:00:00Z is 662688000 (formula above), though a leap second fell between.
    a = dt.datetime(1990, 12, 31, 23, 59, 59)
    b = dt.datetime(1991, 1, 1)
    assert posix_seconds(b) - posix_seconds(a) == 1
    values = [posix_seconds(a), posix_seconds(b), *FILLERS]
    r = run(values, kinds=[CellKind.INT] * len(values))
    _check(r, 0, a)
    _check(r, 1, b)


def test_an_id_column_is_not_taken_for_epoch_dates() -> None:
    # Issue 3 point 2: plausibility bounds, so an ID or amount column is not taken for dates.
    # Small consecutive integers would be 1970-01-01 seconds: no export means that
    # (common practice, no source).
    ids = list(range(1001, 1101))
    r = run(ids, kinds=[CellKind.INT] * len(ids), name="member id")
    assert not r.report.is_date, r.report


def test_before_the_epoch() -> None:
    # RFC 5322 App. A.3 gives −27723426 for 1969-02-14T03:02:54Z (Thu, 13 Feb 1969 23:32:54
    # −0330); POSIX seconds count back from 1970 the same way. Read so, or flagged — never wrapped.
    values = [-27723426, *FILLERS]
    r = run(values, kinds=[CellKind.INT] * len(values))
    want = dt.datetime(1969, 2, 14, 3, 2, 54)
    assert posix_seconds(want) == -27723426
    if r.state(0) == CellState.PARSED:
        assert r.utc(0) == as_us(want), r.describe(0)
    else:
        assert r.reason(0), r.describe(0)


def test_after_year_9999_is_flagged() -> None:
    # POSIX formula: 253402300800 s is 10000-01-01T00:00:00Z, past what datetime holds; in a
    # column of milliseconds that is 253402300800000, which no reading makes a date.
    assert posix_seconds(dt.datetime(9999, 12, 31, 23, 59, 59)) == 253402300799
    values = [253402300800000, *[f * 1000 for f in FILLERS]]
    r = run(values, kinds=[CellKind.INT] * len(values))
    assert r.parsed is not None
    assert r.state(0) != CellState.PARSED, r.describe(0)
    assert r.reason(0), r.describe(0)
