"""RFC 5322 (Internet Message Format) date-times, Appendix A examples.

Source: RFC 5322 Appendix A, as gathered in shared/docs/REFERENCES.md; Python's
``email.utils.parsedate_to_datetime`` as a reference library. Where the stdlib differs from the
RFC (two-digit years 50–68) the test says so.
"""

from __future__ import annotations

import datetime as dt
import email.utils

import pytest

from ._refkit import CellState, as_us, assert_unique, run

EPOCH = dt.datetime(1970, 1, 1, tzinfo=dt.UTC)

# (value, epoch seconds, offset minutes, why) — RFC 5322 Appendix A.
APPENDIX_A = [
    ("Fri, 21 Nov 1997 09:55:06 -0600", 880127706, -360, "App. A.1.1 message date"),
    ("Tue, 1 Jul 2003 10:52:37 +0200", 1057049557, 120, "App. A.2 reply date"),
    ("Thu, 13 Feb 1969 23:32:54 -0330", -27723426, -210, "App. A.3 before the epoch, -03:30"),
]


def test_table_has_no_repeated_input() -> None:
    assert_unique(APPENDIX_A)


@pytest.mark.parametrize(
    ("value", "epoch", "offset", "why"), APPENDIX_A, ids=[r[0] for r in APPENDIX_A]
)
def test_appendix_a_agrees_with_stdlib(value: str, epoch: int, offset: int, why: str) -> None:
    # The published values against email.utils (reference library).
    ref = email.utils.parsedate_to_datetime(value)
    assert int(ref.timestamp()) == epoch, why
    assert ref.utcoffset() == dt.timedelta(minutes=offset), why


def test_appendix_a_in_one_column() -> None:
    # RFC 5322 Appendix A: all three message dates in one column.
    r = run([v for v, *_ in APPENDIX_A])
    for i, (value, epoch, offset, why) in enumerate(APPENDIX_A):
        wall = email.utils.parsedate_to_datetime(value).replace(tzinfo=None)
        assert r.state(i) == CellState.PARSED, why + " — " + r.describe(i)
        assert r.value(i) == as_us(wall), why + " — " + r.describe(i)
        assert r.offset(i) == offset, why + " — " + r.describe(i)
        assert r.utc(i) == as_us(EPOCH + dt.timedelta(seconds=epoch)), why + " — " + r.describe(i)


@pytest.mark.parametrize(
    ("value", "offset"),
    [
        ("Fri, 21 Nov 1997 09:55:06 GMT", 0),
        ("Fri, 21 Nov 1997 09:55:06 UT", 0),
        ("Fri, 21 Nov 1997 09:55:06 EST", -300),
        ("Fri, 21 Nov 1997 09:55:06 PDT", -420),
    ],
)
def test_obsolete_zone_names(value: str, offset: int) -> None:
    # RFC 5322 §4.3 obs-zone (value from memory): UT/GMT are +0000, EST -0500, PDT -0700;
    # email.utils agrees (reference library, checked here).
    assert email.utils.parsedate_to_datetime(value).utcoffset() == dt.timedelta(minutes=offset)
    r = run([value, *[v for v, *_ in APPENDIX_A]])
    assert r.parsed is not None
    if r.state(0) == CellState.PARSED:
        assert r.offset(0) == offset, r.describe(0)
        assert r.value(0) == as_us(dt.datetime(1997, 11, 21, 9, 55, 6)), r.describe(0)
    else:  # not reading an obsolete zone is acceptable if it says why
        assert r.reason(0), r.describe(0)


def test_obsolete_two_digit_year_form() -> None:
    # RFC 5322 §4.3 obsolete syntax: "21 Nov 97 09:55:06 GMT". The RFC maps two-digit years
    # 50–99 to 19xx and 00–49 to 20xx (REFERENCES.md marks that unverified; value from memory).
    # Python's email.utils uses the POSIX rule instead (69–99 → 19xx), so "55" differs.
    assert email.utils.parsedate_to_datetime("21 Nov 97 09:55:06 GMT").year == 1997
    assert email.utils.parsedate_to_datetime("21 Nov 55 09:55:06 GMT").year == 2055  # POSIX
    values = ["21 Nov 97 09:55:06 GMT", "1 Jul 03 10:52:37 GMT", "13 Feb 98 23:32:54 GMT"]
    r = run(values)
    assert r.parsed is not None and r.spec is not None
    # The century rule used must be stated in the suggestion.
    assert "century" in r.report.best.decisions, r.report.best
    expected = [
        dt.datetime(1997, 11, 21, 9, 55, 6),
        dt.datetime(2003, 7, 1, 10, 52, 37),
        dt.datetime(1998, 2, 13, 23, 32, 54),
    ]
    for i, want in enumerate(expected):
        # Both the RFC rule and the POSIX rule give these years: never any other date.
        if r.state(i) == CellState.PARSED:
            assert r.utc(i) == as_us(want), r.describe(i)
        else:
            assert r.reason(i), r.describe(i)
    assert sum(r.state(i) == CellState.PARSED for i in range(3)) == 3, [
        r.describe(i) for i in range(3)
    ]


def test_obsolete_year_where_rules_differ_follows_the_stated_rule() -> None:
    # "21 Nov 55": RFC 5322 §4.3 says 1955 (value from memory), POSIX says 2055. Whatever the
    # engine chose, the value must follow the rule its spec states (ParseSpec.century).
    values = ["21 Nov 55 09:55:06 GMT", "21 Nov 97 09:55:06 GMT", "1 Jul 03 10:52:37 GMT"]
    r = run(values)
    assert r.parsed is not None and r.spec is not None
    if r.state(0) != CellState.PARSED:
        assert r.reason(0), r.describe(0)
        return
    year = r.value(0).astype("datetime64[Y]").astype(int) + 1970
    if r.spec.century == "posix":
        assert year == 2055, r.describe(0)
    else:
        pivot = r.spec.pivot_year
        assert pivot is not None
        assert year == max(y for y in range(pivot - 99, pivot + 1) if y % 100 == 55), r.describe(0)
