"""The distinct texts of a column and each cell's code, as the engine hashes them (Arrow for
text cells, float64 or Python objects for number cells), against a plain Python reference:
a dict keyed by the cell's text in order of first appearance (text cells and number cells
numbered apart, texts first, as the engine numbers them)."""

from __future__ import annotations

import random

import numpy as np
import pytest

from datemend.core.parse import distinct_texts
from datemend.core.table import CellKind, RawColumn, kinds_of


def _reference(values: list[object], kinds: np.ndarray):
    def text(v: object) -> str:
        if isinstance(v, float):
            return str(int(v)) if v.is_integer() else repr(v)
        return str(v)

    texts: dict[str, int] = {}
    numbers: dict[str, int] = {}
    rows, keys = [], []
    for i, (v, k) in enumerate(zip(values, kinds, strict=True)):
        if k in (CellKind.TEXT, CellKind.ERROR):
            texts.setdefault(v, len(texts))
            rows.append(i)
            keys.append(("t", v))
        elif k in (CellKind.INT, CellKind.FLOAT):
            numbers.setdefault(text(v), len(numbers))
            rows.append(i)
            keys.append(("n", text(v)))
    uniq = [*texts, *numbers]
    codes = [texts[v] if s == "t" else len(texts) + numbers[v] for s, v in keys]
    return rows, codes, uniq


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_distinct_texts_match_a_python_reference(seed):
    rng = random.Random(seed)
    pool: list[object] = ["3/4/2024", "2024-03-04", "n/a", "x", " 3/4/2024", "", None,
                          45000, 45000.0, 45000.5, 7, -0.0, 0, 2.5]  # fmt: skip
    values = [rng.choice(pool) for _ in range(3000)]
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    kinds = kinds_of(arr)
    rows, codes, uniq = distinct_texts(RawColumn("c", arr, kinds))
    want_rows, want_codes, want_uniq = _reference(values, kinds)
    assert rows.tolist() == want_rows
    assert codes.tolist() == want_codes
    assert list(uniq) == want_uniq
