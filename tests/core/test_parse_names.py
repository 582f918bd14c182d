"""Golden table: month names and abbreviations (seven languages), weekdays, ordinal suffixes,
RFC 5322 date-times. Expected values by hand; RFC 5322 rows from its Appendix A examples; the
last test writes dates with babel (Unicode CLDR) and checks them against Python's ``date``."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest
from _engine_kit import read_with
from babel.dates import format_date

from datemend.core.parse import parse_column
from datemend.core.spec import ParseSpec
from datemend.core.table import RawColumn, kinds_of

ALL = ("en", "fr", "de", "es", "it", "pt", "nl")
NAMES = ParseSpec(patterns=("rfc5322", "name-dmy", "name-mdy", "name-ymd", "asctime"), locales=ALL)


def read(values: list[str], spec: ParseSpec = NAMES) -> list[tuple[str, str]]:
    return read_with(values, spec)


ROWS = [
    ("12 April 1985", "1985-04-12", "en wide"),
    ("12 apr 1985", "1985-04-12", "en abbreviated, lower case"),
    ("12-APR-85", "1985-04-12", "upper case, dashes, two-digit year (POSIX: 85 → 1985)"),
    ("12Apr1985", "1985-04-12", "no separators"),
    ("April 12, 1985", "1985-04-12", "month first with comma"),
    ("Apr. 12th, 1985", "1985-04-12", "abbreviation dot and ordinal suffix"),
    ("1st March 2024", "2024-03-01", "English ordinal st"),
    ("2nd March 2024", "2024-03-02", "English ordinal nd"),
    ("3rd March 2024", "2024-03-03", "English ordinal rd"),
    ("the 21st of March 2024", "2024-03-21", "filler words 'the', 'of'"),
    ("Sept 9, 2024", "2024-09-09", "British 'Sept' (CLDR en_GB abbreviation)"),
    ("Friday, 12 April 1985", "1985-04-12", "weekday that matches (12 April 1985 was a Friday)"),
    ("Fri 12 Apr 1985", "1985-04-12", "abbreviated weekday"),
    ("Tues, 2 April 2024", "2024-04-02", "a prefix of CLDR's 'Tuesday' (2 April 2024: a Tuesday)"),
    ("Thurs 4 Apr 2024", "2024-04-04", "a prefix of CLDR's 'Thursday'"),
    ("4 Septem 2024", "2024-09-04", "a prefix of CLDR's 'September'"),
    ("Thursday, 12 April 1985", "FAILED: it says Thursday", "weekday contradicts the date"),
    ("1985 Apr 12", "1985-04-12", "year first"),
    ("1985-apr-12", "1985-04-12", "year first with dashes"),
    ("12 April 1985 10:30 pm", "1985-04-12T22:30:00", "with a 12-hour time"),
    ("31 April 1985", "FAILED: 31 April 1985 does not exist", "impossible, named month"),
    ("12 Foo 1985", "FAILED: no pattern", "not a month name"),
    ("1er janvier 2024", "2024-01-01", "fr ordinal 1er"),
    ("le 3 févr. 2024", "2024-02-03", "fr abbreviation with accent and dot"),
    ("3 FEVR 2024", "2024-02-03", "fr abbreviation, upper case, accent stripped"),
    ("mardi 2 avril 2024", "2024-04-02", "fr weekday (2 April 2024 was a Tuesday)"),
    ("12. März 2024", "2024-03-12", "de ordinal dot"),
    ("12. Maerz 2024", "FAILED: no pattern", "transliteration is not a CLDR name"),
    ("Montag, 1. Juli 2024", "2024-07-01", "de weekday"),
    ("12 de abril de 1985", "1985-04-12", "es/pt 'de' fillers"),
    ("1º de mayo de 2024", "2024-05-01", "es ordinal º"),
    ("miércoles, 1 de mayo de 2024", "2024-05-01", "es weekday with accent"),
    ("12 aprile 1985", "1985-04-12", "it wide"),
    ("1º maggio 2024", "2024-05-01", "it ordinal"),
    ("12 de abril de 1985 ", "1985-04-12", "trailing space"),
    ("quinta-feira, 2 de maio de 2024", "2024-05-02", "pt weekday with hyphen"),
    ("3 dez 2024", "2024-12-03", "pt abbreviation"),
    ("8ste maart 2024", "2024-03-08", "nl ordinal ste"),
    ("12 mrt 2024", "2024-03-12", "nl abbreviation"),
    ("12 April 2024 at 10:30", "2024-04-12T10:30:00", "en 'at' before the time"),
    ("12 avril 2024 à 10:30", "2024-04-12T10:30:00", "fr 'à' before the time"),
    ("12. April 2024 um 10:30", "2024-04-12T10:30:00", "de 'um' before the time"),
    ("12 de abril de 2024 a las 10:30", "2024-04-12T10:30:00", "es 'a las' before the time"),
    ("Fri, 21 Nov 1997 09:55:06 -0600", "1997-11-21T09:55:06-06:00", "RFC 5322 App. A.1.1"),
    ("Tue, 1 Jul 2003 10:52:37 +0200", "2003-07-01T10:52:37+02:00", "RFC 5322 App. A.3"),
    ("Thu, 13 Feb 1969 23:32:54 -0330", "1969-02-13T23:32:54-03:30", "RFC 5322 App. A.5"),
    ("21 Nov 97 09:55:06 GMT", "1997-11-21T09:55:06+00:00", "RFC 5322 App. A.5 obsolete form"),
    ("21 Nov 1997 09:55:06 EST", "1997-11-21T09:55:06-05:00", "RFC 5322 §4.3: EST is -0500"),
    ("21 Nov 1997 09:55:06 PDT", "1997-11-21T09:55:06-07:00", "RFC 5322 §4.3: PDT is -0700"),
    ("21 Nov 1997 09:55 CDT", "1997-11-21T09:55:00-05:00", "RFC 5322 §4.3: CDT is -0500"),
    ("Fri Apr 12 10:30:00 1985", "1985-04-12T10:30:00", "ISO C asctime form, year last"),
    ("Fri Apr 12 10:30:00 UTC 1985", "1985-04-12T10:30:00+00:00", "Unix date(1) form with UTC"),
    ("Sat, 21 Nov 1997 09:55:06 -0600", "FAILED: it says Saturday", "21 Nov 1997 was a Friday"),
]


def test_no_input_repeats() -> None:
    inputs = [r[0] for r in ROWS]
    assert len(inputs) == len(set(inputs))


@pytest.mark.parametrize(("text", "expected", "why"), ROWS, ids=[r[0] for r in ROWS])
def test_names_table(text: str, expected: str, why: str) -> None:
    ((state, got),) = read([text])
    if expected.startswith("FAILED: "):
        assert state == "FAILED", f"{text}: {why}; got {got}"
        assert expected[8:] in got, got
    else:
        assert (state, got) == ("PARSED", expected), why


def test_rfc5322_instants() -> None:
    # RFC 5322 Appendix A gives these as seconds since the epoch (POSIX), via our utc().
    arr = np.array(
        ["Fri, 21 Nov 1997 09:55:06 -0600", "Thu, 13 Feb 1969 23:32:54 -0330"], dtype=object
    )
    col = parse_column(RawColumn("c", arr, kinds_of(arr, text_only=True)), NAMES)
    secs = (col.utc() - np.datetime64("1970-01-01T00:00:00", "us")) // np.timedelta64(1, "s")
    assert secs.tolist() == [880127706, -27723426]


@pytest.mark.parametrize("locale", ALL)
def test_babel_written_dates_read_back(locale: str) -> None:
    # Reference: babel.dates.format_date (CLDR) writes them; Python's date is the truth.
    days = [dt.date(2001, m, 3 + 2 * m) for m in range(1, 13)]
    texts = [format_date(d, "d MMMM y", locale=locale) for d in days]
    texts += [format_date(d, "EEE d MMM y", locale=locale) for d in days]
    spec = ParseSpec(patterns=("name-dmy",), locales=(locale,))
    assert read(texts, spec) == [("PARSED", d.isoformat()) for d in days + days]


def test_locale_limits_the_names_read() -> None:
    # "avril" is French; with English only it is no month.
    got = read(["12 avril 2024"], ParseSpec(patterns=("name-dmy",), locales=("en",)))
    assert got[0][0] == "FAILED"
