"""Spans, completed months and years on pandas Series: hand-worked tables (month ends, negative
spans, times of day) and the NaT → NA contract. Reference-library checks are in
tests/reference/test_derive_refs.py."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

from datemend.core import derive
from datemend.core.derive import DeriveError


def _s(values):
    return pd.Series(
        np.array(
            [np.datetime64("NaT") if v is None else np.datetime64(v, "us") for v in values],
            dtype="datetime64[us]",
        )
    )


SPANS = [
    # (start, end, completed months, completed years, why) — worked out by hand with the
    # relativedelta rule (start + m months, day clamped to the month's end, not after end).
    ("2026-01-31", "2026-02-28", 1, 0, "31 Jan + 1 month clamps to 28 Feb, which is reached"),
    ("2026-01-31", "2026-02-27", 0, 0, "one day short of the clamped 28 Feb"),
    ("2026-01-30", "2026-02-28", 1, 0, "30 Jan also clamps to 28 Feb"),
    ("2024-01-31", "2024-02-29", 1, 0, "leap year: clamps to 29 Feb"),
    ("2024-01-31", "2024-02-28", 0, 0, "leap year: 28 Feb is before the clamped 29 Feb"),
    ("2026-02-28", "2026-03-31", 1, 0, "28 Feb + 1 month is 28 Mar"),
    ("2026-02-28", "2026-01-31", 0, 0, "backward: 28 Feb - 1 month is 28 Jan, before 31 Jan"),
    ("2026-03-31", "2026-02-28", -1, 0, "backward: 31 Mar - 1 month clamps to 28 Feb"),
    ("2020-05-15", "2026-05-14", 71, 5, "one day before the sixth anniversary"),
    ("2020-05-15", "2026-05-15", 72, 6, "on the anniversary"),
    ("2026-05-15", "2020-05-16", -71, -5, "backward, one day short of six years"),
    ("2026-05-15", "2026-05-15", 0, 0, "same day"),
    ("2026-01-05T18:00", "2026-02-05T09:00", 0, 0, "the time of day counts: not yet a month"),
    ("2026-01-05T09:00", "2026-02-05T18:00", 1, 0, "a month and nine hours"),
    ("0001-01-01", "9999-12-31", 119987, 9998, "the whole range datemend keeps"),
]


def test_span_rows_unique():
    assert len({r[:2] for r in SPANS}) == len(SPANS)


@pytest.mark.parametrize(("start", "end", "months", "years", "why"), SPANS)
def test_completed_months_and_years(start, end, months, years, why):
    a, b = _s([start]), _s([end])
    assert derive.completed_months(a, b).tolist() == [months], why
    assert derive.completed_years(a, b).tolist() == [years], why


DAYS = [
    # (start, end, days by date, exact days, completed weeks, why) — by hand
    ("2026-01-05T18:00", "2026-02-05T09:00", 31, 30.625, 4, "30 days 15 hours elapsed"),
    ("2026-01-05T09:00", "2026-02-05T18:00", 31, 31.375, 4, "31 days 9 hours"),
    ("2026-03-01", "2026-02-01", -28, -28.0, -4, "backward over February 2026"),
    ("2026-01-01", "2026-01-14", 13, 13.0, 1, "13 days is one completed week"),
    ("2026-01-14", "2026-01-01", -13, -13.0, -1, "weeks round toward zero"),
    ("2024-02-28", "2024-03-01", 2, 2.0, 0, "leap day in between"),
]


def test_day_rows_unique():
    assert len({r[:2] for r in DAYS}) == len(DAYS)


@pytest.mark.parametrize(("start", "end", "days", "exact", "weeks", "why"), DAYS)
def test_span_days_and_weeks(start, end, days, exact, weeks, why):
    a, b = _s([start]), _s([end])
    assert derive.span_days(a, b).tolist() == [days], why
    assert derive.span_days(a, b, exact=True).tolist() == [exact], why
    assert derive.span_weeks(a, b).tolist() == [weeks], why


def test_span_days_matches_python_date_subtraction():
    # Source: Python's datetime: (date2 - date1).days.
    pairs = [(dt.date(1, 1, 1), dt.date(9999, 12, 31)), (dt.date(1900, 2, 28), dt.date(1900, 3, 1))]
    got = derive.span_days(_s([a for a, _ in pairs]), _s([b for _, b in pairs])).tolist()
    assert got == [(b - a).days for a, b in pairs]


def test_nat_in_gives_na_out_with_nullable_dtypes():
    a = _s(["2026-01-01", None, "2026-01-01"])
    b = _s(["2027-01-01", "2027-01-01", None])
    for func in (
        derive.completed_months,
        derive.completed_years,
        derive.span_days,
        derive.span_weeks,
    ):
        out = func(a, b)
        assert str(out.dtype) == "Int64"
        assert out.isna().tolist() == [False, True, True]
    exact = derive.span_days(a, b, exact=True)
    assert str(exact.dtype) == "Float64"
    assert exact.isna().tolist() == [False, True, True]
    assert str(derive.business_days(a, b).dtype) == "Int64"
    assert derive.business_days(a, b).isna().tolist() == [False, True, True]


def test_api_signature_and_scalar_reference():
    # The public calls of issue 7: completed_years(start, end, leap_day=...), span_days(start, end).
    born = _s(["2000-02-29", "1990-06-15"])
    assert derive.completed_years(born, dt.date(2023, 2, 28)).tolist() == [22, 32]
    assert derive.completed_years(born, dt.date(2023, 2, 28), leap_day="feb28").tolist() == [23, 32]
    assert derive.span_days(born, dt.date(2000, 3, 1)).tolist() == [1, 3547]


def test_result_keeps_the_start_index():
    a = pd.Series(_s(["2026-01-01", "2026-06-01"]).to_numpy(), index=[10, 20])
    out = derive.completed_months(a, pd.Series(_s(["2026-03-01", "2026-07-01"]).to_numpy()))
    assert list(out.index) == [10, 20]
    assert out.tolist() == [2, 1]


def test_tz_aware_series_taken_at_wall_time():
    a = pd.Series(pd.to_datetime(["2026-01-31 23:30"]).tz_localize("Europe/Paris"))
    b = _s(["2026-02-28"])
    assert derive.completed_months(a, b).tolist() == [0]  # 28 Feb 00:00 is before 23:30
    assert derive.span_days(a, b).tolist() == [28]


@pytest.mark.parametrize("bad", ["march", "", "29feb"])
def test_bad_leap_policy_is_a_clear_error(bad):
    with pytest.raises(DeriveError, match="29 February"):
        derive.completed_years(_s(["2000-01-01"]), _s(["2001-01-01"]), leap_day=bad)


@pytest.mark.parametrize("mask", ["0000000", "111110", "1111102", "Mon-Fri"])
def test_bad_weekmask_is_a_clear_error(mask):
    with pytest.raises(DeriveError, match="working-week mask"):
        derive.business_days(_s(["2026-01-01"]), _s(["2026-02-01"]), weekmask=mask)


def test_unknown_country_and_subdivision_are_clear_errors():
    with pytest.raises(DeriveError, match="country code"):
        derive.holiday_dates("XX", None, [2026])
    with pytest.raises(DeriveError, match="subdivision"):
        derive.holiday_dates("DE", "ZZ", [2026])


def test_user_holidays_and_weekend_mask():
    # By hand: Sun 2026-11-01 → Sun 2026-11-08 has six Mon–Sat days; a listed holiday on
    # Wed 2026-11-04 leaves five.
    a, b = _s(["2026-11-01"]), _s(["2026-11-08"])
    assert derive.business_days(a, b, weekmask="1111110").tolist() == [6]
    got = derive.business_days(a, b, weekmask="1111110", holidays=[dt.date(2026, 11, 4)])
    assert got.tolist() == [5]
