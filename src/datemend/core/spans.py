"""Spans between dates, ages and business days as vectorised functions on pandas Series
(re-exported by ``datemend.core.derive``, which also holds the fix steps).

Conventions (also in the user guide):

- **Completed months and years** follow ``dateutil.relativedelta``: the count is the largest
  ``m`` for which *start + m months* is not after *end*, where adding months keeps the day of
  the month and clamps it to the month's last day. So 31 January → 28 February (common year) is
  one completed month, 31 January → 27 February is none, and 30 January → 28 February is one.
  The time of day counts: 2026-01-05 18:00 → 2026-02-05 09:00 is not yet a month.
- **Negative spans** (end before start) count steps back from start the same way, as
  ``relativedelta`` does; the result is negative (or 0) and is not always the negation of the
  swapped span: 28 February → 31 January is 0 months, while 31 January → 28 February is 1.
- **29 February** in completed years: ``leap_day="mar1"`` (default) puts the anniversary on
  1 March in common years, as Maryland General Provisions §1-303(b) does for ages;
  ``leap_day="feb28"`` puts it on 28 February, which is ``relativedelta``'s clamping.
- **Days** are counted between calendar dates (times ignored) unless ``exact=True``, which gives
  fractional days of elapsed time. **Weeks** are completed weeks, rounded toward zero.
- **Business days** follow ``numpy.busday_count``: the start day counts, the end day does not,
  unless ``include_end=True``; when end is before start the count is negative, over
  (end, start] (or [end, start] with ``include_end``).
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Iterable

import numpy as np
import pandas as pd

from .calendar_parts import ymd
from .clean import CellState, CleanTable
from .table import DatemendError

__all__ = [
    "DeriveError",
    "business_days",
    "completed_months",
    "completed_years",
    "date_series",
    "holiday_dates",
    "span_days",
    "span_weeks",
]

_DAY = np.timedelta64(1, "D")
_NAT = np.datetime64("NaT", "us")
LEAP_DAY_POLICIES = ("mar1", "feb28")


class DeriveError(DatemendError):
    """A derived column or rule cannot be made as asked; the message names the column or field."""


# ---------------------------------------------------------------- inputs


def _as_us(values: pd.Series | object, n: int | None = None) -> np.ndarray:
    """A datetime64[us] array (NaT for missing) from a Series, or a scalar date broadcast to n."""
    if isinstance(values, pd.Series):
        s = values
        if isinstance(s.dtype, pd.DatetimeTZDtype):
            s = s.dt.tz_localize(None)  # wall-clock time as written
        elif not pd.api.types.is_datetime64_dtype(s.dtype):
            s = s.astype("datetime64[us]")
        return np.array(s.to_numpy(dtype="datetime64[us]"), dtype="datetime64[us]")
    if n is None:
        raise TypeError("a scalar date needs a length to broadcast to")
    if values is None or values is pd.NaT:
        return np.full(n, _NAT)
    return np.full(n, np.datetime64(pd.Timestamp(values).to_datetime64(), "us"))  # type: ignore[arg-type]


def _pair(start: pd.Series, end: pd.Series | object) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Both sides as datetime64[us] with NaT filled by the epoch, and the mask of missing rows."""
    a = _as_us(start)
    b = _as_us(end, len(a))
    if len(a) != len(b):
        raise ValueError(f"start has {len(a)} values but end has {len(b)}")
    missing = np.isnat(a) | np.isnat(b)
    a = a.copy()
    b = b.copy()
    a[missing] = np.datetime64(0, "us")
    b[missing] = np.datetime64(0, "us")
    return a, b, missing


def _ints(values: np.ndarray, missing: np.ndarray, index: pd.Index) -> pd.Series:
    data = np.where(missing, 0, values).astype(np.int64)
    return pd.Series(pd.arrays.IntegerArray(data, missing.copy()), index=index)


def date_series(clean: CleanTable, name: str, *, utc: bool = False) -> pd.Series:
    """The usable dates of column ``name`` (a parsed column by output name, or a derived date
    column) as ``datetime64[us]``: cells not PARSED or MANUAL are NaT; a date-only column is cut
    to midnight. With ``utc`` values with a written offset are moved to UTC."""
    for col in clean.parsed.values():
        if col.output_name == name:
            ok = (col.state == CellState.PARSED) | (col.state == CellState.MANUAL)
            v = np.array(col.utc() if utc else col.value, dtype="datetime64[us]")
            if col.date_only:
                v = v.astype("datetime64[D]").astype("datetime64[us]")
            v[~ok] = _NAT
            return pd.Series(v, name=name)
    if name in clean.derived:
        vals = clean.derived[name].values
        if pd.api.types.is_datetime64_any_dtype(vals.dtype):
            return pd.Series(_as_us(vals), name=name)
        raise DeriveError(f'The derived column "{name}" holds {vals.dtype} values, not dates.')
    where = clean.raw.facts.where()
    if name in clean.raw:
        raise DeriveError(f'Column "{name}" of {where} is not read as dates yet; parse it first.')
    raise DeriveError(f'{where} has no date column "{name}".')


# ---------------------------------------------------------------- spans


def _add_months(a: np.ndarray, k: np.ndarray) -> np.ndarray:
    """a + k months (datetime64[us]), keeping the day of month clamped to the month's end."""
    am = a.astype("datetime64[M]")
    ad = a.astype("datetime64[D]")
    day0 = ad - am.astype("datetime64[D]")  # 0-based day of month
    tod = a - ad.astype("datetime64[us]")
    tm = am + k.astype("timedelta64[M]")
    month_len = (tm + 1).astype("datetime64[D]") - tm.astype("datetime64[D]")
    return (tm.astype("datetime64[D]") + np.minimum(day0, month_len - _DAY)) + tod


def _count(a: np.ndarray, b: np.ndarray, m0: np.ndarray, anchor: np.ndarray) -> np.ndarray:
    # Forward: step back once if the anniversary in end's period is still ahead; backward: step
    # forward once if end lies after it (dateutil.relativedelta's adjustment, done at once).
    return np.where(b >= a, m0 - (b < anchor), m0 + (b > anchor))


def completed_months(start: pd.Series, end: pd.Series | object) -> pd.Series:
    """Completed calendar months from ``start`` to ``end`` (Int64; NaT in → NA out).
    ``end`` may be one date for every row."""
    a, b, missing = _pair(start, end)
    m0 = (b.astype("datetime64[M]") - a.astype("datetime64[M]")).astype(np.int64)
    return _ints(_count(a, b, m0, _add_months(a, m0)), missing, start.index)


def completed_years(start: pd.Series, end: pd.Series | object, leap_day: str = "mar1") -> pd.Series:
    """Completed years from ``start`` to ``end`` (Int64; NaT in → NA out): the year difference,
    less one when the anniversary has not come. For a start on 29 February the anniversary in a
    common year is 1 March (``"mar1"``) or 28 February (``"feb28"``)."""
    if leap_day not in LEAP_DAY_POLICIES:
        raise DeriveError(f'The 29 February policy must be "mar1" or "feb28", not {leap_day!r}.')
    a, b, missing = _pair(start, end)
    y0 = (b.astype("datetime64[Y]") - a.astype("datetime64[Y]")).astype(np.int64)
    anchor = _add_months(a, 12 * y0)
    if leap_day == "mar1":
        _, m, d = ymd(a.astype("datetime64[D]"))
        _, _, anchor_day = ymd(anchor.astype("datetime64[D]"))
        # born 29 February, anniversary clamped to 28 February of a common year: move to 1 March
        anchor = np.where((m == 2) & (d == 29) & (anchor_day == 28), anchor + _DAY, anchor)
    return _ints(_count(a, b, y0, anchor), missing, start.index)


def span_days(start: pd.Series, end: pd.Series | object, *, exact: bool = False) -> pd.Series:
    """Days from ``start`` to ``end``: between calendar dates (Int64), or with ``exact`` the
    elapsed time in fractional days (Float64). Negative when end is before start."""
    a, b, missing = _pair(start, end)
    if exact:
        days = (b - a) / np.timedelta64(1, "D")
        return pd.Series(pd.arrays.FloatingArray(days, missing.copy()), index=start.index)
    d = (b.astype("datetime64[D]") - a.astype("datetime64[D]")).astype(np.int64)
    return _ints(d, missing, start.index)


def span_weeks(start: pd.Series, end: pd.Series | object) -> pd.Series:
    """Completed weeks between calendar dates (Int64), rounded toward zero."""
    a, b, missing = _pair(start, end)
    d = (b.astype("datetime64[D]") - a.astype("datetime64[D]")).astype(np.int64)
    return _ints(np.sign(d) * (np.abs(d) // 7), missing, start.index)


# ---------------------------------------------------------------- business days


def holiday_dates(
    country: str, subdiv: str | None, years: Iterable[int], *, observed: bool = True
) -> np.ndarray:
    """Public holidays of a country (and subdivision) from the ``holidays`` package, for the
    given years, as sorted datetime64[D]."""
    import holidays as _holidays

    supported = _holidays.list_supported_countries()
    code = country.upper()
    if code not in supported:
        raise DeriveError(f'"{country}" is not a country code the holidays package knows.')
    if subdiv is not None and subdiv not in supported[code]:
        raise DeriveError(f'"{subdiv}" is not a subdivision of {code} the holidays package knows.')
    cal = _holidays.country_holidays(code, subdiv=subdiv, years=list(years), observed=observed)
    return np.array(sorted(cal.keys()), dtype="datetime64[D]")


def _weekmask(mask: str) -> str:
    if len(mask) != 7 or set(mask) - {"0", "1"} or "1" not in mask:
        raise DeriveError(
            f'The working-week mask must be seven 0/1 digits from Monday, like "1111100", '
            f"with at least one working day, not {mask!r}."
        )
    return mask


def business_days(
    start: pd.Series,
    end: pd.Series | object,
    *,
    weekmask: str = "1111100",
    holidays: Iterable[object] = (),
    include_end: bool = False,
) -> pd.Series:
    """Working days from ``start`` to ``end`` (Int64) by ``numpy.busday_count``: days whose
    weekday is set in ``weekmask`` (Monday first) and not in ``holidays``. The start day counts
    and the end day does not, unless ``include_end``. When end is before start the count is
    negative and still counts the start but not the end (numpy's rule): (end, start]."""
    a, b, missing = _pair(start, end)
    a = a.astype("datetime64[D]")
    b = b.astype("datetime64[D]")
    if include_end:  # one day further in the direction of travel
        b = np.where(b >= a, b + _DAY, b - _DAY)
    hol = np.array([np.datetime64(pd.Timestamp(h).date(), "D") for h in holidays], "datetime64[D]")
    n = np.busday_count(a, b, weekmask=_weekmask(weekmask), holidays=hol)
    return _ints(np.asarray(n, dtype=np.int64), missing, start.index)


def iso_date(text: str, field: str) -> _dt.date:
    """A YYYY-MM-DD date given in a step's field, or a DeriveError naming the field."""
    try:
        if not isinstance(text, str) or len(text) != 10:
            raise ValueError
        return _dt.date.fromisoformat(text)
    except ValueError:
        msg = f'Field "{field}" must be a date written YYYY-MM-DD, not {text!r}.'
        raise DeriveError(msg) from None
