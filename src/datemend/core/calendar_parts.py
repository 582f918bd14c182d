"""Calendar parts of a date Series: year, quarter, month (number or name), day, weekday, ISO
year and week, day of year, fiscal year and quarter.

Everything works on whole numpy arrays of ``datetime64`` (years 1–9999 survive: no nanosecond
conversion); missing dates (NaT) give NA. Month and weekday names come from Unicode CLDR via
babel, in the locale asked for.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
import pandas as pd
from babel import Locale, UnknownLocaleError
from babel.dates import get_day_names, get_month_names

from .table import DatemendError

__all__ = [
    "FISCAL_LABELS",
    "PARTS",
    "CalendarError",
    "calendar_part",
    "check_locale",
    "day_of_year",
    "fiscal_quarter",
    "fiscal_year",
    "iso_week",
    "iso_weekday",
    "iso_year",
    "month_name",
    "weekday_name",
    "ymd",
]


class CalendarError(DatemendError):
    """A calendar-part setting a user chose is not valid (unknown locale, start month 13 ...)."""


#: How a fiscal year is named: by the calendar year in which it ends, or in which it starts.
FISCAL_LABELS = ("end", "start")


def _days(s: pd.Series) -> tuple[np.ndarray, np.ndarray]:
    """(datetime64[D] array with NaT replaced by the epoch, mask of missing values)."""
    v = np.asarray(s.to_numpy(dtype="datetime64[us]"), dtype="datetime64[us]")
    missing = np.isnat(v)
    d = v.astype("datetime64[D]")
    d[missing] = np.datetime64(0, "D")
    return d, missing


def ymd(d: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Year, month (1–12) and day (1–31) of a datetime64[D] array, as int64."""
    months = d.astype("datetime64[M]")
    years = d.astype("datetime64[Y]")
    y = years.astype(np.int64) + 1970
    m = (months - years.astype("datetime64[M]")).astype(np.int64) + 1
    day = (d - months.astype("datetime64[D]")).astype(np.int64) + 1
    return y, m, day


def _int(values: np.ndarray, missing: np.ndarray, index: pd.Index) -> pd.Series:
    return pd.Series(pd.arrays.IntegerArray(values.astype(np.int64), missing.copy()), index=index)


def iso_weekday(d: np.ndarray) -> np.ndarray:
    """ISO 8601 weekday, 1 = Monday … 7 = Sunday (1970-01-01, day 0, was a Thursday)."""
    return (d.astype(np.int64) + 3) % 7 + 1


def _iso_thursday(d: np.ndarray) -> np.ndarray:
    # ISO 8601: a week belongs to the year that holds its Thursday.
    return d - (iso_weekday(d) - 1).astype("timedelta64[D]") + np.timedelta64(3, "D")


def iso_year(d: np.ndarray) -> np.ndarray:
    """ISO 8601 week-numbering year of each day (datetime64[D] in, int64 out)."""
    return d_year(_iso_thursday(d))


def iso_week(d: np.ndarray) -> np.ndarray:
    """ISO 8601 week number, 1–53: week 1 holds the year's first Thursday."""
    th = _iso_thursday(d)
    return (day_of_year(th) - 1) // 7 + 1


def d_year(d: np.ndarray) -> np.ndarray:
    return d.astype("datetime64[Y]").astype(np.int64) + 1970


def day_of_year(d: np.ndarray) -> np.ndarray:
    """Day of the year, 1 = 1 January."""
    return (d - d.astype("datetime64[Y]").astype("datetime64[D]")).astype(np.int64) + 1


def _check_start(start_month: int) -> None:
    if not isinstance(start_month, int) or not 1 <= start_month <= 12:
        raise CalendarError(f"The fiscal year's start month must be 1 to 12, not {start_month!r}.")


def fiscal_year(y: np.ndarray, m: np.ndarray, start_month: int, label: str) -> np.ndarray:
    """Fiscal year of (year, month) pairs for a fiscal year starting on the 1st of
    ``start_month``. ``label="end"`` names it by the calendar year in which it ends (a July
    start: 1 July 2026 – 30 June 2027 is fiscal 2027); ``label="start"`` by the year in which it
    starts (fiscal 2026). With a January start both are the calendar year."""
    _check_start(start_month)
    if label not in FISCAL_LABELS:
        raise CalendarError(f'The fiscal-year label must be "end" or "start", not {label!r}.')
    starts_in = y - (m < start_month)
    if label == "start" or start_month == 1:
        return starts_in
    return starts_in + 1


def fiscal_quarter(m: np.ndarray, start_month: int) -> np.ndarray:
    """Quarter 1–4 within a fiscal year starting on the 1st of ``start_month``."""
    _check_start(start_month)
    return (m - start_month) % 12 // 3 + 1


def check_locale(locale: str) -> Locale:
    try:
        return Locale.parse(locale.replace("-", "_"))
    except (UnknownLocaleError, ValueError, TypeError, AttributeError):
        msg = f'"{locale}" is not a locale known to CLDR (try "en" or "fr_FR").'
        raise CalendarError(msg) from None


def month_name(m: np.ndarray, locale: str = "en", width: str = "wide") -> np.ndarray:
    """Month names from CLDR (stand-alone form, as a column heading would show them)."""
    names = get_month_names(width, context="stand-alone", locale=check_locale(locale))
    table = np.array([""] + [names[i] for i in range(1, 13)], dtype=object)
    return table[m]


def weekday_name(wd: np.ndarray, locale: str = "en", width: str = "wide") -> np.ndarray:
    """Weekday names from CLDR for ISO weekday numbers 1 = Monday … 7 = Sunday."""
    names = get_day_names(width, context="stand-alone", locale=check_locale(locale))
    table = np.array([""] + [names[i] for i in range(7)], dtype=object)  # babel: 0 = Monday
    return table[wd]


def _part_funcs(
    locale: str, start_month: int, label: str
) -> dict[str, Callable[[np.ndarray], tuple[str, np.ndarray]]]:
    def field_of(i: int) -> Callable[[np.ndarray], tuple[str, np.ndarray]]:
        return lambda d: ("int", ymd(d)[i])

    return {
        "year": field_of(0),
        "quarter": lambda d: ("int", (ymd(d)[1] - 1) // 3 + 1),
        "month": field_of(1),
        "month-name": lambda d: ("text", month_name(ymd(d)[1], locale)),
        "day": field_of(2),
        "weekday": lambda d: ("int", iso_weekday(d)),
        "weekday-name": lambda d: ("text", weekday_name(iso_weekday(d), locale)),
        "iso-year": lambda d: ("int", iso_year(d)),
        "iso-week": lambda d: ("int", iso_week(d)),
        "day-of-year": lambda d: ("int", day_of_year(d)),
        "fiscal-year": lambda d: ("int", fiscal_year(*ymd(d)[:2], start_month, label)),
        "fiscal-quarter": lambda d: ("int", fiscal_quarter(ymd(d)[1], start_month)),
        "date": lambda d: ("date", d),
    }


#: Every calendar part by its JSON name, with the label a dialog shows.
PARTS: dict[str, str] = {
    "year": "Year",
    "quarter": "Quarter (1–4)",
    "month": "Month (1–12)",
    "month-name": "Month name",
    "day": "Day of month",
    "weekday": "Weekday (ISO: 1 = Monday … 7 = Sunday)",
    "weekday-name": "Weekday name",
    "iso-year": "ISO 8601 week-numbering year",
    "iso-week": "ISO 8601 week (1–53)",
    "day-of-year": "Day of year (1–366)",
    "fiscal-year": "Fiscal year",
    "fiscal-quarter": "Fiscal quarter (1–4)",
    "date": "Date part only",
}


def calendar_part(
    dates: pd.Series,
    part: str,
    *,
    locale: str = "en",
    fiscal_start: int = 1,
    fiscal_label: str = "end",
) -> pd.Series:
    """One calendar part of every date in ``dates`` (NaT → NA). Numbers are ``Int64``, names
    ``string``, ``"date"`` is ``datetime64[us]`` at midnight."""
    funcs = _part_funcs(locale, fiscal_start, fiscal_label)
    if part not in funcs:
        raise CalendarError(f'"{part}" is not a calendar part (one of: {", ".join(PARTS)}).')
    d, missing = _days(dates)
    kind, values = funcs[part](d)
    if kind == "int":
        return _int(values, missing, dates.index)
    if kind == "text":
        out = values.astype(object)
        out[missing] = None
        return pd.Series(pd.array(out, dtype="string"), index=dates.index)
    out_d = values.astype("datetime64[us]")
    out_d[missing] = np.datetime64("NaT")
    return pd.Series(out_d, index=dates.index)
