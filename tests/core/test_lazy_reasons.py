"""A parse without reasons (the scan's, ``parse_texts(..., explain=False)``) writes its reason
sentences when first asked for; they must be the sentences a parse with reasons gives, row for
row, and asking for some rows first must not change the others.

Both sides are the engine's own paths, so this is an equivalence check, not a reference check:
the sentences themselves are checked against ``calendar`` in test_fields_reasons.py.
"""

from __future__ import annotations

import random

import numpy as np
import pytest

from datemend.core.clean import CellState
from datemend.core.infer import scan_column
from datemend.core.parse import _apply_zone, distinct_texts, parse_column, parse_texts
from datemend.core.spec import ParseSpec
from datemend.core.table import RawColumn, kinds_of

MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"]


def _mixed(seed: int, n: int = 400) -> list[str]:
    """Texts of many shapes, with impossible dates, undecided ones and junk among them."""
    rng = random.Random(seed)
    out = []
    for _ in range(n):
        y, m, d = rng.randint(1930, 2030), rng.randint(0, 13), rng.randint(0, 32)
        shape = rng.randrange(12)
        if shape == 0:
            out.append(f"{y}-{m:02d}-{d:02d}")
        elif shape == 1:
            out.append(f"{d}/{m}/{y}")
        elif shape == 2:
            out.append(f"{m}/{d}/{y % 100:02d}")
        elif shape == 3:
            out.append(f"{y % 100:02d}{m:02d}{d:02d}")
        elif shape == 4:
            out.append(str(rng.randint(1, 80000)))  # serial-like
        elif shape == 5:
            out.append(str(rng.randint(0, 2_000_000_000)))  # epoch-like
        elif shape == 6:
            out.append(f"{d} {MONTHS[(m - 1) % 12]} {y}")
        elif shape == 7:
            out.append(f"{y}-{m:02d}-{d:02d}T{rng.randint(0, 25):02d}:{rng.randint(0, 61):02d}")
        elif shape == 8:
            out.append(rng.choice(["n/a", "TBC", "?", "--", "soon", "12:30", "unknown"]))
        elif shape == 9:
            out.append(f"{d}.{m}.{y}")
        elif shape == 10:
            out.append(f"{y}{m:02d}{d:02d}")
        else:
            out.append(f"{y}-{m:02d}-{d:02d} 0{rng.randint(0, 3)}:30+0{rng.randint(0, 9)}:00")
    return out


COLUMNS = [
    (_mixed(1), "every shape mixed, impossible dates among them"),
    (_mixed(2, 60) + [f"{i:06d}" for i in range(100000, 100400)], "compact rivals, many failing"),
    ([f"{(i % 12) + 1}/{(i % 28) + 1}/{i % 100:02d}" for i in range(300)], "undecided day order"),
    ([str(100000 + i) for i in range(500)] + ["n/a"] * 3, "an ID column read as numbers"),
]


def _column(texts: list[str]) -> RawColumn:
    arr = np.array(texts, dtype=object)
    return RawColumn("c", arr, kinds_of(arr, text_only=True))


def _specs(col: RawColumn) -> list[ParseSpec]:
    rep = scan_column(col)
    specs = [s.spec for s in rep.suggestions]
    assert specs, "the scan suggested no reading: the check below would test nothing"
    return specs


def test_columns_do_not_repeat() -> None:
    names = [why for _, why in COLUMNS]
    assert len(set(names)) == len(names)
    assert len({tuple(t) for t, _ in COLUMNS}) == len(COLUMNS)


@pytest.mark.parametrize("texts, why", COLUMNS, ids=[w for _, w in COLUMNS])
def test_lazy_reasons_are_the_eager_ones(texts: list[str], why: str) -> None:
    col = _column(texts)
    _, _, uniques = distinct_texts(col)
    checked = 0
    for spec in _specs(col):
        eager = parse_texts(uniques, spec)
        lazy = parse_texts(uniques, spec, explain=False)
        assert np.array_equal(eager.state, lazy.state)
        assert np.array_equal(eager.pattern, lazy.pattern)
        unread = np.flatnonzero(eager.state != CellState.PARSED)
        some = unread[::3][:25]
        assert list(lazy.reason_of(some)) == list(eager.reason[some])
        assert list(lazy.reason) == list(eager.reason)
        checked += len(unread)
    assert checked > 0, why


def test_rows_asked_first_leave_the_others_right() -> None:
    col = _column(COLUMNS[0][0])
    _, _, uniques = distinct_texts(col)
    spec = _specs(col)[0]
    eager = parse_texts(uniques, spec)
    lazy = parse_texts(uniques, spec, explain=False)
    bad = np.flatnonzero(eager.state == CellState.FAILED)
    assert len(bad) >= 10
    lazy.reason_of(bad[:5])
    lazy.reason_of(bad[:5])  # asked again: nothing changes
    assert list(lazy.reason_of(bad)) == list(eager.reason[bad])
    assert list(lazy.reason) == list(eager.reason)


def test_zone_reasons_come_back_too() -> None:
    # 2024-03-31 01:30 does not exist in London (clocks went from 01:00 to 02:00 GMT→BST):
    # tz database, Europe/London rules
    texts = ["2024-03-31 01:30", "2024-03-31 03:30", "2024-13-01 10:00", "soon"]
    spec = ParseSpec(patterns=("iso-date",), zone="UTC", naive_zone="Europe/London")
    eager = parse_texts(np.array(texts, dtype=object), spec)
    _apply_zone(eager, spec)
    lazy = parse_texts(np.array(texts, dtype=object), spec, explain=False)
    _apply_zone(lazy, spec)
    assert eager.state[0] == CellState.FAILED and "clock change" in eager.reason[0]
    assert list(lazy.reason) == list(eager.reason)


@pytest.mark.parametrize("texts, why", COLUMNS, ids=[w for _, w in COLUMNS])
def test_parse_after_a_scan_gives_every_reason(texts: list[str], why: str) -> None:
    scanned = _column(texts)
    spec = scan_column(scanned).best.spec  # the scan keeps its lazy result for this spec
    after = parse_column(scanned, spec)
    fresh = parse_column(_column(texts), spec)  # a new column: parsed with reasons at once
    assert np.array_equal(after.state, fresh.state)
    assert list(after.reason) == list(fresh.reason)
    assert any(r is not None for r in fresh.reason), why
