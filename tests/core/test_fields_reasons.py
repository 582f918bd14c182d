"""Reason sentences written once per distinct combination of the values they name
(``fields._reasons``) are the same sentences, row for row, as one written per value.

Expected sentences are worked out by hand, with month lengths and leap years taken from
Python's ``calendar`` module (``calendar.monthrange``, ``calendar.isleap``).
"""

from __future__ import annotations

import calendar

import numpy as np
import pyarrow as pa
import pytest

from datemend.core.fields import _SHARE_FROM, _reasons, read_pattern
from datemend.core.parse import normalise
from datemend.core.patterns import pattern
from datemend.core.spec import ParseSpec

MONTHS = list(calendar.month_name)[1:]


def _expected_iso(text: str) -> str | None:
    """The reason for one impossible YYYY-MM-DD text, from ``calendar`` (None: a real day)."""
    y, m, d = (int(x) for x in text.split("-"))
    if not 1 <= m <= 12:
        return f"month {m} does not exist"
    if d < 1:
        return f"day {d} does not exist"
    if m == 2 and d == 29 and not calendar.isleap(y):
        return f"29 February {y} does not exist ({y} is not a leap year)"
    dim = calendar.monthrange(y, m)[1]
    if d > dim:
        return f"{d} {MONTHS[m - 1]} {y} does not exist ({MONTHS[m - 1]} has {dim} days)"
    return None


# (texts, why): each set holds more failing values than _SHARE_FROM, so sentences are shared.
CASES = [
    (
        [f"{y}-02-29" for y in range(1890, 1990)],
        "29 February across a century: leap years by calendar.isleap (1900 is none)",
    ),
    (
        [f"2021-{m:02d}-01" for m in range(13, 100)] * 2,
        "months 13-99, each twice: one sentence per month number",
    ),
    (
        [f"{2000 + i % 7}-{1 + i % 12:02d}-{28 + i % 5}" for i in range(400)],
        "days 28-32 in every month of seven years: month lengths by calendar.monthrange",
    ),
    (
        [f"2020-{1 + i % 12:02d}-00" for i in range(60)] + ["2020-13-00", "2020-04-31"] * 20,
        "day 0, and a month check that comes before the day check",
    ),
]


def test_no_case_repeats() -> None:
    keys = [tuple(texts) for texts, _ in CASES]
    assert len(set(keys)) == len(keys)


@pytest.mark.parametrize(("texts", "why"), CASES, ids=[why for _, why in CASES])
def test_shared_reasons_match_calendar(texts: list[str], why: str) -> None:
    spec = ParseSpec(patterns=("iso-date",))
    r = read_pattern(pattern("iso-date"), normalise(pa.array(texts)), spec)
    expected = [_expected_iso(t) for t in texts]
    assert sum(e is not None for e in expected) >= _SHARE_FROM, why
    assert list(r.reason) == expected, why
    assert list(r.ok) == [e is None for e in expected], why


def test_sharing_keeps_each_rows_own_values() -> None:
    # Two arrays named by the sentence; rows agreeing on one but not the other must differ.
    rng = np.random.default_rng(7)
    a = rng.integers(0, 5, 500)
    b = rng.integers(0, 5, 500)
    s = np.array(["x", "y", "z"], dtype=object)[rng.integers(0, 3, 500)]
    idx = np.flatnonzero(rng.random(500) < 0.6)
    got = _reasons(idx, lambda i: f"{a[i]}/{b[i]}/{s[i]}", (a, b, s))
    assert list(got) == [f"{a[i]}/{b[i]}/{s[i]}" for i in idx]  # one sentence per row, by hand


def test_constant_sentence_and_few_rows() -> None:
    idx = np.arange(100)
    assert list(_reasons(idx, lambda i: "same", ())) == ["same"] * 100
    few = np.arange(3)
    assert list(_reasons(few, lambda i: f"row {i}", None)) == ["row 0", "row 1", "row 2"]
