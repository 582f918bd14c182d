"""Arrow's hashing of a column's text cells, in one go or in parts on a helper thread
(``core.encode``), against a plain Python reference: a dict keyed by the text, in order of
first appearance. The parts must give exactly what one hashing of the whole gives."""

from __future__ import annotations

import random
import threading

import numpy as np
import pytest

from datemend.core import encode
from datemend.core.parse import distinct_texts
from datemend.core.table import CellKind, RawColumn, count_kinds, kinds_of

POOL = ["3/4/2024", "2024-03-04", "n/a", "", " 3/4/2024", "12. März 2024", "٣/٤/٢٠٢٤", "x" * 40]


def _column(n: int, seed: int, dates: int | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Texts (some repeated, some new) with number cells between them, which are skipped.
    ``dates``: how many distinct dates the date texts are drawn from (None: any of 13,776;
    0: each is seen once); with a few, 3% of the cells are texts seen once, anywhere."""
    rng = random.Random(seed)
    values = np.empty(n, dtype=object)
    skip = np.zeros(n, dtype=bool)
    few = [f"{1 + j % 12}/{1 + j // 12 % 28}/{1990 + j // 336}" for j in range(dates or 0)]
    for i in range(n):
        r = rng.random()
        if r < 0.1:
            values[i], skip[i] = rng.randint(1, 60000), True
        elif r < 0.5:
            values[i] = rng.choice(POOL)
        elif dates == 0 or (few and r < 0.53):
            values[i] = f"once {i}"
        elif few:
            values[i] = rng.choice(few)
        else:
            values[i] = f"{rng.randint(1, 12)}/{rng.randint(1, 28)}/{rng.randint(1990, 2030)}"
    return values, skip


def _reference(values: np.ndarray, skip: np.ndarray) -> tuple[list[int], list[str]]:
    seen: dict[str, int] = {}
    codes = [-1 if s else seen.setdefault(v, len(seen)) for v, s in zip(values, skip, strict=True)]
    return codes, list(seen)


@pytest.mark.parametrize(
    "parts", [(1.0,), encode.PARTS, (0.5, 0.5), (0.1,) * 10, (0.0, 0.999, 0.0, 0.001)]
)
def test_parts_give_what_one_hashing_gives(parts):
    values, skip = _column(20_000, seed=len(parts))
    got = encode.start_encoding(values, skip, parts=parts)()
    assert got is not None
    codes, objects, arrow = got
    want_codes, want_texts = _reference(values, skip)
    assert codes.dtype == np.int32
    assert codes.tolist() == want_codes
    assert list(objects) == want_texts
    assert arrow.to_pylist() == want_texts
    codes[0] = 7  # the caller may write the codes (distinct_texts does)


@pytest.mark.parametrize(
    ("dates", "probed"), [(200, True), (0, False)], ids=["repeating", "mostly-distinct"]
)
@pytest.mark.parametrize("parts", [encode.PARTS, (0.1,) * 10, (0.3, 0.0, 0.7)])
def test_later_parts_are_looked_up_when_the_texts_repeat(monkeypatch, dates, probed, parts):
    # the first part's distinct texts are at most half its text cells: the later parts are
    # looked up among the texts seen so far (the cells not found hashed anew); otherwise each
    # part is hashed alone and the parts joined. Either way: what one hashing gives.
    made = []
    real = encode._Probe.__init__

    def spy(self, *a):
        made.append(True)
        real(self, *a)

    monkeypatch.setattr(encode._Probe, "__init__", spy)
    values, skip = _column(20_000, seed=7, dates=dates)
    got = encode.start_encoding(values, skip, parts=parts)()
    assert got is not None
    assert bool(made) == probed
    codes, objects, arrow = got
    want_codes, want_texts = _reference(values, skip)
    assert codes.tolist() == want_codes
    assert list(objects) == want_texts
    assert arrow.to_pylist() == want_texts
    if probed:  # texts first seen in a later part are among them, in their place
        assert any(t.startswith("once ") for t in want_texts[len(want_texts) // 2 :])


@pytest.mark.parametrize("bad_at", [10, 9_000, 19_999])
@pytest.mark.parametrize("bad", [None, 5.5, ("3/4/2024",)])
def test_a_cell_arrow_cannot_take_as_text_gives_none_and_the_helper_ends(bad_at, bad):
    values, skip = _column(20_000, seed=3)
    values[bad_at], skip[bad_at] = bad, False  # a text cell that is no str
    before = threading.active_count()
    assert encode.start_encoding(values, skip, parts=encode.PARTS)() is None
    assert encode.start_encoding(values, skip, parts=(1.0,))() is None
    assert threading.active_count() == before


def test_a_big_column_is_hashed_in_parts_and_its_distinct_texts_match(monkeypatch):
    monkeypatch.setattr(encode, "OVERLAP_FROM", 1_000)
    monkeypatch.setattr(encode, "_cores", lambda: 2)
    started = []
    real = encode._Overlapped.__init__

    def spy(self, *a, **k):
        started.append(True)
        real(self, *a, **k)

    monkeypatch.setattr(encode._Overlapped, "__init__", spy)
    values, _ = _column(5_000, seed=9)
    kinds = kinds_of(values)  # "" is an empty cell, numbers are number cells
    rows, codes, uniq = distinct_texts(RawColumn("c", values, kinds))
    assert started, "the overlapped path was not taken"
    texts: dict[str, int] = {}
    numbers: dict[str, int] = {}
    want_rows, want_codes = [], []
    for i, (v, k) in enumerate(zip(values, kinds, strict=True)):
        if k == CellKind.TEXT:
            want_rows.append(i)
            want_codes.append(texts.setdefault(v, len(texts)))
        elif k == CellKind.INT:
            want_rows.append(i)
            want_codes.append(-1 - numbers.setdefault(str(v), len(numbers)))
    want_codes = [c if c >= 0 else len(texts) - 1 - c for c in want_codes]
    assert rows.tolist() == want_rows
    assert codes.tolist() == want_codes
    assert list(uniq) == [*texts, *numbers]


@pytest.mark.parametrize("n", [0, 1, 2, 3, 1_001, 100_000])
def test_kinds_are_counted_as_a_counter_counts_them(n):
    rng = np.random.default_rng(n)
    kinds = rng.integers(0, len(CellKind), n).astype(np.int8)
    want = [int(np.sum(kinds == k)) for k in CellKind]  # one compare per kind
    got = count_kinds(kinds)
    assert got.dtype == np.int64
    assert got.tolist() == want
    assert count_kinds(kinds[1::2]).tolist() == [int(np.sum(kinds[1::2] == k)) for k in CellKind]


def test_an_error_while_converting_ends_the_helper_and_reaches_the_caller(monkeypatch):
    values, skip = _column(20_000, seed=4)
    real = encode._convert
    calls = []

    def failing(v, s):
        calls.append(len(v))
        if len(calls) == 2:
            raise MemoryError("no room for the second part")
        return real(v, s)

    monkeypatch.setattr(encode, "_convert", failing)
    before = threading.active_count()
    with pytest.raises(MemoryError, match="second part"):
        encode.start_encoding(values, skip, parts=encode.PARTS)
    assert len(calls) == 2
    assert threading.active_count() == before
