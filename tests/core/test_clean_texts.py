"""Which texts need nothing but lower case is found without RE2 for the plain form (digits and
separators); the answer must be RE2's own over the whole ``_CLEAN`` expression (the reference:
``pyarrow.compute.match_substring_regex``), and the ASCII lower-casing must be Arrow's UTF-8
one, for every kind of text, sliced arrays and nulls among them."""

from __future__ import annotations

import random

import pyarrow as pa
import pyarrow.compute as pc
import pytest

from datemend.core.parse import _CLEAN, _clean, lower_case, normalise

_EDGES = [
    "",
    "1",
    "12",
    "1/",
    "/1",
    "1/2",
    "2024-03-05",
    "3/14/2024",
    "14.03.2024",
    "12:30",
    "1-",
    "-1",
    "0",
    "00",
    "2024-03-05t10:20",
    "2024-03-05 10:20:30.5+02:00",
    "2024-03-05t10:20z",
    "2024-03-05t10:20x",
    "2024-03-05 ",
    " 2024-03-05",
    "3/14/2024 ",
    "١٢/٣/٢٠٢٤",  # Arabic-Indic digits: no ASCII digit, not plain
    "3／14／2024",  # full-width slashes
    "3/14/2024é",
    "é3/14/2024",
    "n/a",
    "march 3",
    "3,5",
    "9" * 40,
    ":",
    "::",
    "1:",
    "5.",
]


def _random_texts(seed: int, n: int = 5000) -> list[str | None]:
    rng = random.Random(seed)
    alphabet = "0123456789/.:- tTzZ+,aé٣\u00a0"
    out: list[str | None] = []
    for _ in range(n):
        if rng.random() < 0.02:
            out.append(None)
        elif rng.random() < 0.3:
            y, m, d = rng.randint(1000, 9999), rng.randint(1, 12), rng.randint(1, 28)
            out.append(rng.choice([f"{y}-{m:02d}-{d:02d}", f"{m}/{d}/{y}", f"{d}.{m}.{y}"]))
        else:
            out.append("".join(rng.choices(alphabet, k=rng.randint(0, 12))))
    return out


def _re2(texts: pa.Array) -> list[bool]:
    return pc.match_substring_regex(texts, _CLEAN).fill_null(False).to_pylist()


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_clean_equals_re2_over_the_whole_expression(seed):
    texts = [t for t in _random_texts(seed) if t is not None] + _EDGES
    arr = pc.utf8_lower(pa.array(texts, pa.string()))
    got = _clean(arr)
    assert got.tolist() == _re2(arr)
    assert 0 < got.sum() < len(texts)  # both answers occur


def test_clean_of_sliced_arrays_nulls_and_empty_ones():
    arr = pc.utf8_lower(pa.array(_random_texts(4) + _EDGES, pa.string()))
    assert _clean(arr).tolist() == _re2(arr)  # nulls: RE2 over all, never clean
    body = pc.utf8_lower(pa.array([t for t in _random_texts(5) if t is not None]))
    for part in (body.slice(7, 900), body.slice(0, 0), body.slice(len(body) - 3)):
        assert _clean(part).tolist() == _re2(part)
    empties = pa.array(["", "", ""])
    assert _clean(empties).tolist() == [False, False, False]
    large = pa.array(["3/14/2024", "x"], pa.large_string())
    assert _clean(large).tolist() == [True, False]


def test_lower_case_equals_utf8_lower():
    for texts in (["ABC 3/14/2024", "Mar", "", "TbD"], ["Éte", "MÄRZ", "abc"], _EDGES):
        arr = pa.array(texts, pa.string())
        assert lower_case(arr).equals(pc.utf8_lower(arr))
    with_null = pa.array(["A", None, "B"])
    assert lower_case(with_null).to_pylist() == ["a", None, "b"]


def test_normalise_puts_each_fixed_text_in_its_place():
    # reference: each text normalised alone (one text cannot be mistaken for another)
    texts = ["3/14/2024", "  N/A ", "(12 March 2024)", "2024-03-05", "1st of May, 2020", "x"]
    arr = pa.array(texts * 20, pa.string())
    whole = normalise(arr).to_pylist()
    alone = [normalise(pa.array([t])).to_pylist()[0] for t in texts]
    assert whole == alone * 20
    assert alone[1] == "n/a" and alone[2] == "12 march 2024"  # noise trimmed (module doc)
