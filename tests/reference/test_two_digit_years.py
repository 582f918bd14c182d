"""Two-digit years: the POSIX rule, the "past" rule, and columns of past events.

Sources: POSIX strptime / ISO C / Python's ``time`` docs (``%y`` 69–99 → 1969–1999,
00–68 → 2000–2068), via ``datetime.strptime`` as reference library; python-dateutil's window of
[−50, +49] years around "today" (pinned here, since it moves with the clock). REFERENCES.md.
"""

from __future__ import annotations

import datetime as dt

import pytest
from dateutil import parser as du_parser

from ._refkit import CellState, as_us, assert_unique, run

# (value M/D/YY, why) — expected from datetime.strptime(value, "%m/%d/%y") (POSIX rule).
POSIX_ROWS = [
    ("1/13/69", "69 is the first year of the 1900s under POSIX"),
    ("12/31/68", "68 is the last year of the 2000s under POSIX"),
    ("3/15/99", "99 → 1999"),
    ("7/4/00", "00 → 2000"),
    ("2/28/45", "45 → 2045"),
    ("10/30/70", "70 → 1970"),
]
# Column with a first field above 12 (1/13/69 has 13 second): month first, decided by evidence.


class PinnedInfo(du_parser.parserinfo):
    """dateutil's parserinfo with "today" pinned to 2026, so the window does not move."""

    def __init__(self) -> None:
        super().__init__()
        self._year = 2026
        self._century = 2000


def test_table_has_no_repeated_input() -> None:
    assert_unique(POSIX_ROWS)


@pytest.mark.parametrize(("value", "why"), POSIX_ROWS, ids=[r[0] for r in POSIX_ROWS])
def test_posix_rule(value: str, why: str) -> None:
    # POSIX %y via datetime.strptime (reference library).
    expected = dt.datetime.strptime(value, "%m/%d/%y")
    r = run([value, *[v for v, _ in POSIX_ROWS if v != value]], century="posix")
    assert r.spec is not None
    assert r.state(0) == CellState.PARSED, why + " — " + r.describe(0)
    assert r.value(0) == as_us(expected), why + " — " + r.describe(0)


def test_scan_states_the_century_rule() -> None:
    # Issue 3 point 5: say which century rule was used for a column. This column's name gives no
    # hint of past or future events and "2/28/45" reads 2045 by POSIX but 1945 as a past event,
    # so the engine may only say "undecided" — and must then say why, keep that cell unresolved,
    # and offer both rules as readings.
    r = run([v for v, _ in POSIX_ROWS])
    best = r.report.best
    assert best is not None
    how = best.decisions.get("century")
    assert how in {"evidence", "preference", "default", "undecided"}, best.decisions
    if how == "undecided":
        assert any("two-digit" in w for w in best.warnings), best.warnings
        assert best.ambiguous >= 1
        offered = {s.spec.century for s in r.report.suggestions}
        assert {"posix", "past"} <= offered, offered


@pytest.mark.parametrize(
    ("yy", "pivot", "expected"),
    [
        ("05", 2026, 2005),
        ("26", 2026, 2026),
        ("27", 2026, 1927),
        ("99", 2026, 1999),
        ("00", 1999, 1900),
        ("68", 2026, 1968),
    ],
)
def test_past_rule(yy: str, pivot: int, expected: int) -> None:
    # ParseSpec "past" rule (spec.py): the latest year not after pivot_year ending in those digits.
    # Expected worked out by hand.
    values = [f"1/13/{yy}", "12/25/80", "6/30/90"]
    r = run(values, century="past", pivot_year=pivot)
    assert r.state(0) == CellState.PARSED, r.describe(0)
    assert r.value(0) == as_us(dt.datetime(expected, 1, 13)), r.describe(0)


def test_dates_of_birth_never_in_the_future() -> None:
    # Issue 3 point 5: never silently put a past-event column in the future; offer the rule that
    # does not. Under POSIX, 52 and 61 would be 2052 and 2061: impossible birth dates in 2026.
    values = ["3/14/52", "11/2/61", "7/30/88", "1/13/05", "9/9/47", "12/1/99"]
    r = run(values, name="Date of birth", reference_year=2026)
    assert r.parsed is not None and r.report.best is not None
    limit = as_us(dt.datetime(2027, 1, 1))
    future = [
        i for i in range(len(values)) if r.state(i) == CellState.PARSED and r.value(i) >= limit
    ]
    if future:
        # Allowed only if the best suggestion says so and another suggestion has the past rule.
        assert r.report.best.warnings, "future birth dates without a warning: " + str(
            [r.describe(i) for i in future]
        )
        past = [s for s in r.report.suggestions if s.spec.century == "past"]
        assert past, "no suggestion offers the rule that keeps dates in the past"
    # Whatever was chosen, no value is silently moved off its two digits.
    for i, v in enumerate(values):
        if r.state(i) == CellState.PARSED:
            year = int(str(r.value(i))[:4])
            assert year % 100 == int(v.rsplit("/", 1)[1]), r.describe(i)


def test_past_rule_on_dates_of_birth_gives_no_future_dates() -> None:
    # With the "past" rule at 2026 (spec.py), every birth date is at most 2026; expected by hand.
    values = ["3/14/52", "11/2/61", "7/30/88", "1/13/05", "9/9/47", "12/1/99"]
    expected = [1952, 1961, 1988, 2005, 1947, 1999]
    r = run(values, name="Date of birth", reference_year=2026, century="past", pivot_year=2026)
    for i, (v, y) in enumerate(zip(values, expected)):
        m, d, _ = v.split("/")
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(dt.datetime(y, int(m), int(d))), r.describe(i)


def test_engine_does_not_move_with_the_clock_as_dateutil_does() -> None:
    # dateutil places a two-digit year within [−50, +49] years of today (REFERENCES.md). With
    # today pinned to 2026, "70" is 2070 for dateutil but 1970 under POSIX (datetime.strptime).
    info = PinnedInfo()
    assert du_parser.parse("1/13/70", parserinfo=info).year == 2070
    assert du_parser.parse("1/13/76", parserinfo=info).year == 1976
    assert dt.datetime.strptime("1/13/70", "%m/%d/%y").year == 1970
    r = run(["1/13/70", "12/25/80", "6/30/90"], century="posix")
    assert r.value(0) == as_us(dt.datetime(1970, 1, 13)), r.describe(0)
