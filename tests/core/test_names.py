"""Month and weekday names come from Unicode CLDR through babel (the reference here)."""

from __future__ import annotations

import re

import babel.dates as bd
import pytest

from datemend.core import names

LANGS = list(names.LANGUAGES)


@pytest.mark.parametrize("lang", LANGS)
def test_every_cldr_month_name_maps_to_its_month(lang: str) -> None:
    table = names.month_lookup((lang,))
    for width in ("wide", "abbreviated"):
        for ctx in ("format", "stand-alone"):
            for num, name in bd.get_month_names(width, ctx, lang).items():
                assert table[name.casefold().rstrip(".")] == num, (lang, name)
                assert table[names.fold(name)] == num, (lang, name)


@pytest.mark.parametrize("lang", LANGS)
def test_every_cldr_weekday_name_maps_to_its_day(lang: str) -> None:
    table = names.weekday_lookup((lang,))
    for width in ("wide", "abbreviated"):
        for num, name in bd.get_day_names(width, "format", lang).items():
            assert table[names.fold(name)] == num, (lang, name)


FOLDS = [
    ("Févr.", "fevr", "accent and dot dropped, lower case"),
    ("MÄRZ", "marz", "upper case umlaut"),
    ("août", "aout", "circumflex"),
    ("Sept.", "sept", "trailing dot"),
]


def test_fold_rows_unique() -> None:
    assert len({r[0] for r in FOLDS}) == len(FOLDS)


@pytest.mark.parametrize(("raw", "want", "why"), FOLDS, ids=[r[0] for r in FOLDS])
def test_fold(raw: str, want: str, why: str) -> None:
    assert names.fold(raw) == want, why


def test_regional_variants_are_included() -> None:
    # CLDR en_GB writes September as "Sept"; pt_PT and pt share "dezembro".
    assert names.month_lookup(("en",))["sept"] == 9
    assert names.month_lookup(("pt",))["dezembro"] == 12


def test_a_token_naming_two_months_is_dropped() -> None:
    # No two CLDR months collide across these languages (checked here), so the clash rule has
    # nothing to drop; every language's set is a subset of the joint table.
    joint = names.month_lookup(tuple(LANGS))
    for lang in LANGS:
        for tok, num in names.month_lookup((lang,)).items():
            assert joint.get(tok) == num, (lang, tok)


ORDINALS = [
    ("1st", "1"),
    ("22nd", "22"),
    ("3rd", "3"),
    ("4th", "4"),
    ("1er", "1"),
    ("1re", "1"),
    ("2e", "2"),
    ("1º", "1"),
    ("1ª", "1"),
    ("8ste", "8"),
    ("2de", "2"),
]


def test_ordinal_rows_unique() -> None:
    assert len({r[0] for r in ORDINALS}) == len(ORDINALS)


@pytest.mark.parametrize(("raw", "want"), ORDINALS, ids=[r[0] for r in ORDINALS])
def test_ordinal_suffix_is_stripped(raw: str, want: str) -> None:
    # Python's re and pyarrow's RE2 agree on this expression; Python's re is used here.
    assert re.sub(names.ORDINAL_SUFFIX_RE, r"\1\2", raw + " ").strip() == want


def test_prefixes_of_long_names() -> None:
    # Prefixes of CLDR wide names (3+ letters): "Tues" of Tuesday, "Sept"/"Septem" of September.
    assert names.weekday_lookup(("en",))["tues"] == 1
    assert names.month_lookup(("en",))["septem"] == 9
    assert "ju" not in names.month_lookup(("en",))  # too short to be a prefix
