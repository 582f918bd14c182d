"""Shapes of digit groups between one separator are read by a quick match and a split instead
of RE2's submatch extraction, their groups read as numbers at once; the result must be what
``pyarrow.compute.extract_regex`` (the reference: RE2's own extraction) gives, each group read
by Python's ``int`` and ``len``, on every such shape of the engine."""

from __future__ import annotations

import random

import pyarrow as pa
import pyarrow.compute as pc
import pytest

from datemend.core.fields import _DigitGroups, _extract_matched, _split_plan
from datemend.core.patterns import PATTERNS, pattern


def _shapes() -> list[str]:
    out = []
    for pid in PATTERNS:
        p = pattern(pid)
        out += [rx for rx in (p.simple, p.shape) if rx and _split_plan(rx) is not None]
    return out


def _texts(seed: int, n: int = 4000) -> pa.Array:
    """Digit groups of 1–5 digits between separators, mostly one separator per text, some
    mixed, doubled or missing, with letters and nulls among them."""
    rng = random.Random(seed)
    seps = ["/", "-", ".", " "]
    out: list[str | None] = []
    for _ in range(n):
        sep = rng.choice(seps)
        groups = ["".join(rng.choices("0123456789", k=rng.choice([1, 2, 2, 4, 3, 5])))]
        for _ in range(rng.choice([1, 2, 2, 2, 3])):
            glue = sep if rng.random() < 0.9 else rng.choice([*seps, "//", "", "a"])
            groups.append(glue + "".join(rng.choices("0123456789", k=rng.choice([1, 2, 4]))))
        text = "".join(groups)
        out.append(None if rng.random() < 0.02 else text)
    return pa.array(out, pa.string())


def test_the_engine_has_split_shapes_and_others():
    shapes = _shapes()
    assert len(shapes) >= 8  # numeric day/month/year shapes with four separators
    assert _split_plan(pattern("iso-date").shape) is None  # times and zones: RE2 extracts
    assert _split_plan(pattern("compact-dmy").shape) is None  # no separator
    assert _split_plan(r"^(?P<a>\d{2})[/-](?P<b>\d{2})$") is None  # a class, not one character
    assert _split_plan(r"^(?P<a>\d{2})\.(?P<b>\d{2})$") == (".", ("a", "b"))
    assert _split_plan(pattern("serial").simple) == ("", ("i",))  # one group: the whole text
    assert _split_plan(pattern("serial").shape) is None  # an optional fraction: RE2 extracts
    assert _split_plan(r"^(?P<a>\d{2})(?P<b>\d{2})$") is None  # no separator between groups


@pytest.mark.parametrize("seed", [11, 12, 13])
def test_split_extraction_equals_re2_extraction(seed):
    texts = _texts(seed)
    for rx in _shapes():
        ok, got = _extract_matched(texts, rx)
        want = pc.extract_regex(texts, rx)
        valid = want.is_valid().to_numpy(zero_copy_only=False)
        assert ok.tolist() == valid.tolist(), rx
        assert valid.any(), rx  # the texts reach it
        assert isinstance(got, _DigitGroups), rx
        for name in (f.name for f in want.type):
            texts_of = want.filter(pa.array(valid)).field(name).to_pylist()
            assert got.groups[name].ints.tolist() == [int(t) for t in texts_of], rx
            assert got.groups[name].lens.tolist() == [len(t) for t in texts_of], rx


def test_a_handful_of_texts_is_read_in_python_alike():
    # at most fields.SMALL texts: the struct of texts, by Python's re
    texts = pa.array(["3/14/2024", "03/4/24", "3/14", "3-14-2024", None, "12/31/1999x", "1/1/99"])
    rx = pattern("num-slash").simple
    ok, got = _extract_matched(texts, rx)
    want = pc.extract_regex(texts, rx)
    assert ok.tolist() == want.is_valid().to_numpy(zero_copy_only=False).tolist()
    assert ok.any() and not ok.all()
    assert got.equals(want.filter(want.is_valid()))


def _timed_texts(seed: int, n: int = 3000) -> pa.Array:
    """Dates of every numeric and ISO shape, some with a time and a zone after them."""
    rng = random.Random(seed)
    out = []
    for _ in range(n):
        y, m, d = rng.randint(1900, 2099), rng.randint(1, 12), rng.randint(1, 28)
        date = rng.choice(
            [f"{y}-{m:02d}-{d:02d}", f"{m}/{d}/{y}", f"{d}.{m}.{y % 100:02d}", f"{y}/{m}/{d}",
             f"{y % 100:02d}-{m}-{d}", f"{d} {m} {y}", f"{y}-w{m:02d}-{d % 7 + 1}"]
        )  # fmt: skip
        tail = rng.choice(["", "", f"t{m:02d}:{d:02d}", f" {m}:{d:02d} pm", f" {m:02d}:00z",
                           "t10:00:00.5+02:00", " utc", "x"])  # fmt: skip
        out.append(date + tail)
    return pa.array(out, pa.string())


@pytest.mark.parametrize("seed", [21, 22])
def test_a_text_of_the_full_shape_begins_as_the_simple_shape(seed):
    # the reader tries the full shape (time and zone) only on texts that begin as the simple
    # shape followed by a non-digit (or the end); RE2 itself (pyarrow.compute) says which
    # texts the full shape matches
    from datemend.core.fields import _begins

    texts = _timed_texts(seed)
    tried = 0
    for pid in PATTERNS:
        p = pattern(pid)
        if not p.simple:
            continue
        full = pc.match_substring_regex(texts, p.shape).to_numpy(zero_copy_only=False)
        begins = _begins(texts, p.simple[:-1] + r"(?:\D|$)")
        assert not (full & ~begins).any(), pid
        small = texts.slice(0, 40)  # the Python path for a handful of texts
        assert (_begins(small, p.simple[:-1] + r"(?:\D|$)") == begins[:40]).all(), pid
        tried += int(full.sum() > 0)
    assert tried >= 6
