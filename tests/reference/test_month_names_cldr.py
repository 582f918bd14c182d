"""Month names and abbreviations of en fr de es it pt nl, from Unicode CLDR via babel.

Source: Unicode CLDR as shipped by babel (reference library): ``babel.dates.get_month_names``
(wide and abbreviated, format and stand-alone) and ``babel.dates.format_date``. Each value is
written by babel, never typed by hand, and must parse to the month babel named.
"""

from __future__ import annotations

import datetime as dt

import pytest
from babel.dates import format_date, get_day_names, get_month_names

from ._refkit import CellState, as_us, run

LOCALES = ["en", "fr", "de", "es", "it", "pt", "nl"]


def month_variants(locale: str) -> dict[str, int]:
    """Every distinct CLDR month name of a locale (wide, abbreviated; format, stand-alone)."""
    out: dict[str, int] = {}
    for width in ("wide", "abbreviated"):
        for context in ("format", "stand-alone"):
            for month, name in get_month_names(width, context, locale=locale).items():
                name = str(name)
                assert out.get(name, month) == month, f"{locale}: {name} names two months"
                out[name] = month
    return out


def day_for(month: int) -> int:
    return min(10 + month, 28)  # a different day per month, so a day error shows


@pytest.mark.parametrize("locale", LOCALES)
def test_every_cldr_month_name_in_day_month_year(locale: str) -> None:
    # "13 <name> 1985" for every distinct CLDR name of the month.
    names = month_variants(locale)
    values = [f"{day_for(m)} {name} 1985" for name, m in names.items()]
    assert len(set(values)) == len(values)
    r = run(values)
    bad = [
        r.describe(i)
        for i, (name, m) in enumerate(names.items())
        if r.state(i) != CellState.PARSED or r.value(i) != as_us(dt.date(1985, m, day_for(m)))
    ]
    assert not bad, f"{locale}: {len(bad)} of {len(values)} wrong: " + "; ".join(bad[:6])


@pytest.mark.parametrize("locale", LOCALES)
@pytest.mark.parametrize("shape", ["long", "d MMM y", "EEEE d MMMM y", "EEE, d MMM y"])
def test_babel_formatted_dates(locale: str, shape: str) -> None:
    # Dates written by babel.dates.format_date in each locale: its long format (e.g. "12 de abril
    # de 1985", "12. April 1985", "April 12, 1985"), abbreviated months, and with weekday names.
    dates = [dt.date(1985 + m, m, day_for(m)) for m in range(1, 13)]
    values = [format_date(d, shape, locale=locale) for d in dates]
    assert len(set(values)) == len(values)
    r = run(values)
    bad = [
        r.describe(i)
        for i, d in enumerate(dates)
        if r.state(i) != CellState.PARSED or r.value(i) != as_us(d)
    ]
    assert not bad, f"{locale} {shape!r}: {len(bad)} of 12 wrong: " + "; ".join(bad[:6])


@pytest.mark.parametrize("locale", LOCALES)
def test_any_case(locale: str) -> None:
    # Issue 3 point 2: month names in any case (str.upper/str.lower of babel's wide names), both
    # cases in one column as a careless export has them.
    wide = get_month_names("wide", locale=locale)
    rows = [
        (dt.date(2001 + k, m, day_for(m)), case)
        for m in range(1, 13)
        for k, case in enumerate(("upper", "lower"))
    ]
    values = [getattr(f"{d.day} {wide[d.month]} {d.year}", case)() for d, case in rows]
    assert len(set(values)) == len(values)
    r = run(values)
    bad = [
        r.describe(i)
        for i, (d, _) in enumerate(rows)
        if r.state(i) != CellState.PARSED or r.value(i) != as_us(d)
    ]
    assert not bad, f"{locale}: " + "; ".join(bad[:6])


def test_weekday_names_are_cldr() -> None:
    # Sanity of the reference: babel's weekday names cover seven days in each locale.
    for locale in LOCALES:
        assert len(get_day_names("wide", locale=locale)) == 7


SUFFIXED = [
    "April 12th, 1985",
    "12th April 1985",
    "1st May 1985",
    "May 2nd 1985",
    "3rd Jun 1985",
    "Friday, April 12, 1985",
    "Monday 21st October 2024",
    "22nd Oct 2024",
]


def test_english_ordinal_suffixes_and_weekdays() -> None:
    # Issue 3 point 2: ordinal suffixes and optional weekday names, in one English column;
    # expected from dateutil (reference library), which reads them all.
    from dateutil import parser as du_parser

    assert len(set(SUFFIXED)) == len(SUFFIXED)
    r = run(SUFFIXED)
    for i, v in enumerate(SUFFIXED):
        assert r.state(i) == CellState.PARSED, r.describe(i)
        assert r.value(i) == as_us(du_parser.parse(v)), r.describe(i)


def test_two_digit_year_before_a_month_name_is_not_guessed() -> None:
    # "25 märz 23." — German writes the day with a dot (CLDR via babel: format_date(..., "long",
    # locale="de") gives "12. April 1985"), so 23. is the day and 25 a two-digit year:
    # 2025-03-23. It also reads as 25 März 2023. Read it as 2025-03-23 or flag it — the column
    # below decides neither way (issue 3 point 4).
    assert format_date(dt.date(1985, 4, 12), "long", locale="de").startswith("12. ")
    values = ["20170604", "4/2/1947 4:07 AM", "25 märz 23. 9:36 pm", "25/12/2023"]
    r = run(values)
    assert r.parsed is not None
    if r.state(2) == CellState.PARSED:
        assert r.value(2) == as_us(dt.datetime(2025, 3, 23, 21, 36)), r.describe(2)
    else:
        assert r.reason(2), r.describe(2)
