"""Month and weekday names per language, taken from Unicode CLDR through babel.

No name is typed by hand: every token comes from babel's locale data (wide and abbreviated
widths, format and stand-alone contexts), for the languages in ``LANGUAGES`` and a few regional
variants of them (British English writes "Sept", European Portuguese differs from Brazilian).
Each name is also kept case-folded, without trailing dots and without accents, because exports
carry all of those ("févr.", "FEVR", "fevr").

A long name's prefixes of three letters or more are accepted too ("Tues", "Thurs", "Sept"),
unless a prefix would name two different months (or weekdays) in the chosen languages: such a
token reads nothing rather than one of them.

Ordinal suffixes (1st, 2nd, 1er, 1º, 8ste) are not names; ``ORDINAL_SUFFIX_RE`` strips them.
"""

from __future__ import annotations

import unicodedata
from functools import lru_cache

import babel.dates as _bd

__all__ = [
    "LANGUAGES",
    "ORDINAL_SUFFIX_RE",
    "fold",
    "month_lookup",
    "month_names",
    "weekday_lookup",
    "weekday_names",
]

#: Languages whose names the engine knows, with the CLDR locales read for each.
LANGUAGES: dict[str, tuple[str, ...]] = {
    "en": ("en", "en_GB", "en_AU"),
    "fr": ("fr", "fr_CA", "fr_BE"),
    "de": ("de", "de_AT", "de_CH"),
    "es": ("es", "es_MX", "es_AR"),
    "it": ("it",),
    "pt": ("pt", "pt_PT"),
    "nl": ("nl", "nl_BE"),
}

#: RE2/Python regex: a digit followed by an ordinal suffix (group 1 the digit, group 2 what
#: follows). English st/nd/rd/th, French er/re/e/ème/eme, Spanish, Italian, Portuguese º ª °
#: and o/a, Dutch ste/de/e. The suffix must end the token (space, comma or end).
ORDINAL_SUFFIX_RE = r"(\d)(?:st|nd|rd|th|er|re|ère|ème|eme|e|º|ª|°|o|a|ste|de)([ ,]|$)"

_WIDTHS = ("wide", "abbreviated")
_CONTEXTS = ("format", "stand-alone")


def fold(text: str) -> str:
    """Case-fold, drop trailing dots and accents: "Févr." → "fevr"."""
    t = text.casefold().strip().rstrip(".")
    decomposed = unicodedata.normalize("NFKD", t)
    return "".join(c for c in decomposed if not unicodedata.combining(c))


def _variants(name: str) -> set[str]:
    base = name.casefold().strip()
    out = {base, base.rstrip("."), fold(base)}
    return {v for v in out if v}


def month_names(language: str) -> dict[int, tuple[str, ...]]:
    """CLDR month names of one language, as written (no folding): {1: ("January", "Jan"), ...}."""
    found: dict[int, list[str]] = {m: [] for m in range(1, 13)}
    for loc in LANGUAGES[language]:
        for width in _WIDTHS:
            for ctx in _CONTEXTS:
                for num, name in _bd.get_month_names(width, ctx, loc).items():
                    if name not in found[num]:
                        found[num].append(name)
    return {k: tuple(v) for k, v in found.items()}


def weekday_names(language: str) -> dict[int, tuple[str, ...]]:
    """CLDR weekday names of one language, Monday = 0 (babel's numbering)."""
    found: dict[int, list[str]] = {d: [] for d in range(7)}
    for loc in LANGUAGES[language]:
        for width in _WIDTHS:
            for ctx in _CONTEXTS:
                for num, name in _bd.get_day_names(width, ctx, loc).items():
                    if name not in found[num]:
                        found[num].append(name)
    return {k: tuple(v) for k, v in found.items()}


def _with_prefixes(form: str) -> set[str]:
    """The name's variants and, for a long name, its prefixes of three letters or more: "Tues",
    "Thurs", "Sept", "Janv" shorten CLDR's wide names the way people do."""
    out = _variants(form)
    for v in list(out):
        if v.isalpha() and len(v) > 4:
            out |= {v[:k] for k in range(3, len(v))}
    return out


def _lookup(
    languages: tuple[str, ...], source: object
) -> tuple[dict[str, int], dict[str, tuple[str, ...]]]:
    table: dict[str, int] = {}
    where: dict[str, set[str]] = {}
    clash: set[str] = set()
    for lang in languages:
        names = source(lang)  # type: ignore[operator]
        for num, forms in names.items():
            for form in forms:
                for v in _with_prefixes(form):
                    if v in table and table[v] != num:
                        clash.add(v)
                    table.setdefault(v, num)
                    where.setdefault(v, set()).add(lang)
    # A token naming two different months (or weekdays) in the chosen languages reads nothing:
    # guessing one would be a silent choice.
    for v in clash:
        table.pop(v, None)
    return table, {k: tuple(sorted(v)) for k, v in where.items()}


@lru_cache(maxsize=64)
def month_lookup(languages: tuple[str, ...] = ("en",)) -> dict[str, int]:
    """Folded token → month number 1–12 for the given languages."""
    return _lookup(tuple(languages), month_names)[0]


@lru_cache(maxsize=64)
def weekday_lookup(languages: tuple[str, ...] = ("en",)) -> dict[str, int]:
    """Folded token → weekday number, Monday = 0, for the given languages."""
    return _lookup(tuple(languages), weekday_names)[0]


@lru_cache(maxsize=8)
def month_languages() -> dict[str, tuple[str, ...]]:
    """Folded month token → the languages that use it (for telling which languages a column
    is written in)."""
    return _lookup(tuple(LANGUAGES), month_names)[1]
