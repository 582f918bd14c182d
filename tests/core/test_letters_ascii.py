"""RE2's Unicode letter class ``\\pL`` is costly to compile (on every Arrow call), so over texts
that are all ASCII the engine writes it ``[A-Za-z]``. Reference for why the two agree there:
Unicode's General Category data (UnicodeData.txt): the only ASCII code points of category L
(Lu, Ll) are U+0041–U+005A and U+0061–U+007A. Python's ``unicodedata`` is the check below.
"""

from __future__ import annotations

import random
import string
import unicodedata

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc
import pytest

from datemend.core.fields import _ascii_letters, all_ascii, letters_for
from datemend.core.parse import normalise
from datemend.core.patterns import PATTERNS, pattern


def _regexes() -> list[str]:
    """Every RE2 regex of the engine that names ``\\pL``."""
    out = []
    for pid in PATTERNS:
        p = pattern(pid)
        out += [rx for rx in (p.shape, p.simple) if rx and r"\pL" in rx]
    out += [r"(\pL) (0?[1-9]|[12]\d|3[01])\. (\d)", r"(\pL)\.", r"(\pL),", r"[^\pL]+", r"\pL"]
    return out


def _ascii_texts(seed: int, n: int = 3000) -> pa.Array:
    rng = random.Random(seed)
    alphabet = string.printable + "    "
    words = ["mon", "tue", "march", "mar.", "1st", "12.", "jan,", "the", "de", "am", "p.m."]
    out = []
    for _ in range(n):
        parts = [
            rng.choice(words) if rng.random() < 0.5 else "".join(rng.choices(alphabet, k=3))
            for _ in range(rng.randint(1, 5))
        ]
        out.append(" ".join(parts).lower() if rng.random() < 0.7 else " ".join(parts))
    return pa.array(out, pa.string())


def test_ascii_letters_are_exactly_a_to_z():
    letters = [chr(c) for c in range(128) if unicodedata.category(chr(c)).startswith("L")]
    assert "".join(letters) == string.ascii_uppercase + string.ascii_lowercase


def test_every_letter_class_is_translated():
    for rx in _regexes():
        assert r"\pL" not in _ascii_letters(rx), rx


@pytest.mark.parametrize("seed", [1, 2])
def test_translated_regexes_match_alike_on_ascii_texts(seed):
    texts = _ascii_texts(seed)
    assert all_ascii(texts)
    for rx in _regexes():
        quick = _ascii_letters(rx)
        assert pc.match_substring_regex(texts, rx).equals(pc.match_substring_regex(texts, quick)), (
            rx
        )
        if "?P<" in rx:
            assert pc.extract_regex(texts, rx).equals(pc.extract_regex(texts, quick)), rx
        if rx.startswith("("):
            assert pc.replace_substring_regex(texts, rx, r"\1 ").equals(
                pc.replace_substring_regex(texts, quick, r"\1 ")
            ), rx
    split = pc.split_pattern_regex(texts, r"[^\pL]+")
    assert split.equals(pc.split_pattern_regex(texts, _ascii_letters(r"[^\pL]+")))


def test_texts_with_other_letters_keep_the_unicode_class():
    texts = pa.array(["12 mars 2024", "3 févr. 2024", "März 5"], pa.string())
    assert not all_ascii(texts)
    assert letters_for(r"(\pL)\.", texts) == r"(\pL)\."
    assert letters_for(r"(\pL)\.", texts.slice(0, 1)) == "([A-Za-z])\\."
    assert not all_ascii(pa.array([], pa.string()))


def test_normalise_agrees_with_and_without_the_shortcut():
    # one ASCII batch (shortcut taken) against the same texts normalised beside a non-ASCII one
    # (shortcut not taken): normalising is per text, so the ASCII texts must come out the same
    texts = _ascii_texts(3, 800)
    alone = normalise(texts)
    other = pa.array(["févr. 3, 2024", "σεπ. 3"], pa.string())  # dots after non-ASCII letters
    mixed = normalise(pa.concat_arrays([texts, other]))
    assert alone.equals(mixed.slice(0, len(texts)))
    # the module's rule: an abbreviation's dot after a letter goes, and a comma after a number
    assert mixed.slice(len(texts)).to_pylist() == ["févr 3 2024", "σεπ 3"]
    assert np.all(pc.utf8_length(alone).to_numpy() <= pc.utf8_length(texts).to_numpy())
