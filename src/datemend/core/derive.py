"""Derived columns as fix steps: spans, ages, tenure, calendar parts, business days, and moving
times to another zone; plus ``preview`` and per-kind parameter lists for a dialog.

The vectorised functions (``completed_years``, ``completed_months``, ``span_days`` …) live in
``spans.py`` and are re-exported here; their conventions (month ends, negative spans, 29 February,
business-day end) are documented there. Each step reads columns by output name through
``date_series``: only PARSED and MANUAL cells count, everything else gives NA in the result.
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass, field
from typing import Any, ClassVar, Literal

import numpy as np
import pandas as pd

from .calendar_parts import PARTS, CalendarError, calendar_part, check_locale, ymd
from .clean import CleanTable, DerivedColumn
from .spans import (
    DeriveError,
    business_days,
    completed_months,
    completed_years,
    date_series,
    holiday_dates,
    iso_date,
    span_days,
    span_weeks,
)
from .step_forms import parameters, preview
from .steps import ApplyContext, FieldValueError, Step, register_step
from .zones import check_zone, convert_zone

__all__ = [
    "AGE_CAUTION",
    "HOLIDAY_YEARS",
    "REPLAY_DAY",
    "Age",
    "BusinessDays",
    "CalendarPart",
    "ConvertZone",
    "DeriveError",
    "DerivedStep",
    "Span",
    "Tenure",
    "business_days",
    "completed_months",
    "completed_years",
    "date_series",
    "holiday_dates",
    "parameters",
    "preview",
    "reference_dates",
    "span_days",
    "span_weeks",
]

#: The ``as_of`` value meaning "the day the log is applied" (``ApplyContext.today``).
REPLAY_DAY = "replay-day"

#: Shown beside every age column (and in the dialog).
AGE_CAUTION = (
    "Ages here are completed years by the calendar. Legal age (and the birthday of people born "
    "on 29 February) follows local law: verify before using an age for a legal or safety decision."
)

#: Years for which holidays from the ``holidays`` package are used; rows outside give NA.
HOLIDAY_YEARS = (1900, 2199)


def _p(
    label: str,
    param: str | None = None,
    help: str = "",
    choices: dict[str, str] | None = None,
    **schema: Any,
) -> dict[str, Any]:
    """Field metadata: the dialog's label, parameter type, help, a label for each choice, and
    extra schema keywords."""
    return {"label": label, "param": param, "help": help, "choices": choices, "schema": schema}


def _col(label: str) -> Any:
    return field(metadata=_p(label, "column", minLength=1))


def _output(default_help: str = "") -> Any:
    return field(default="", metadata=_p("Output column name", "output", default_help))


_AS_OF_PATTERN = r"^(replay-day|\d{4}-\d{2}-\d{2})$"
_AS_OF_HELP = 'A date written YYYY-MM-DD, or "replay-day" for the day the log is applied.'


def _as_of() -> Any:
    return field(
        default=REPLAY_DAY, metadata=_p("As of", "as-of", _AS_OF_HELP, pattern=_AS_OF_PATTERN)
    )


def _as_of_column() -> Any:
    return field(default=None, metadata=_p("…or as of the date in column", "column-or-none"))


def _check_as_of(step: Step, as_of: str | None, as_of_column: str | None) -> None:
    """A reference column, when given, wins: ``as_of`` is then stored as None."""
    if as_of_column is not None:
        object.__setattr__(step, "as_of", None)
        return
    if as_of is None:
        raise FieldValueError("as_of", 'give a reference date in "as_of" or "as_of_column"')
    if as_of is not None and as_of != REPLAY_DAY:
        try:
            iso_date(as_of, "as_of")
        except DeriveError as err:
            raise FieldValueError("as_of", str(err)) from None


def _as_of_words(as_of: str | None, as_of_column: str | None) -> str:
    if as_of_column is not None:
        return f'the date in "{as_of_column}"'
    return "the day of replay" if as_of == REPLAY_DAY else str(as_of)


def reference_dates(
    table: CleanTable, ctx: ApplyContext, as_of: str | None, as_of_column: str | None
) -> pd.Series:
    """The reference date of every row: a column's dates, a fixed date, or ``ctx.today``."""
    if as_of_column is not None:
        return date_series(table, as_of_column)
    day = ctx.today if as_of == REPLAY_DAY else iso_date(str(as_of), "as_of")
    return pd.Series(np.full(table.raw.n_rows, np.datetime64(day, "D").astype("datetime64[us]")))


class DerivedStep(Step):
    """Base of the steps that add a column. Subclasses set ``title`` and implement ``compute``."""

    title: ClassVar[str] = ""
    note: ClassVar[str | None] = None  # shown beside the column (e.g. AGE_CAUTION)
    output: str

    def default_name(self) -> str:
        raise NotImplementedError

    @property
    def output_name(self) -> str:
        return self.output or self.default_name()

    def compute(self, table: CleanTable, ctx: ApplyContext) -> tuple[pd.Series, str | None]:
        """The new column's values, and a warning for the log (or None)."""
        raise NotImplementedError

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        name = self.output_name
        taken = {pc.output_name for pc in table.parsed.values()} | set(table.raw.names)
        if name in taken:
            return _warn(table, f'"{name}" was not added: a column of the file has that name.')
        try:
            values, warning = self.compute(table, ctx)
        except DeriveError as err:
            return _warn(table, f'"{name}" was not added: {err}')
        if warning:
            table = _warn(table, warning)
        if name in table.derived:
            table = _warn(
                table, f'"{name}" was worked out twice; the later step\'s values are kept.'
            )
        derived = dict(table.derived)
        derived[name] = DerivedColumn(name, values.reset_index(drop=True), note=self.note)
        return table.evolve(derived=derived)


def _warn(table: CleanTable, text: str) -> CleanTable:
    return table if text in table.warnings else table.with_warning(text)


_SPAN_UNITS = {
    "days": "days between the dates",
    "days-exact": "days of elapsed time (fractions count)",
    "weeks": "completed weeks",
    "months": "completed months",
    "years": "completed years",
}


@register_step
@dataclass(frozen=True)
class Span(DerivedStep):
    """The span from one date column to another in days, weeks, completed months or years."""

    kind: ClassVar[str] = "span"
    title: ClassVar[str] = "Span between two dates"
    start: str = _col("From (date column)")
    end: str = _col("To (date column)")
    unit: Literal["days", "days-exact", "weeks", "months", "years"] = field(
        default="days",
        metadata=_p(
            "Unit", help="; ".join(f"{k}: {v}" for k, v in _SPAN_UNITS.items()), choices=_SPAN_UNITS
        ),
    )
    output: str = _output()

    def columns_read(self) -> tuple[str, ...]:
        return (self.start, self.end)

    def default_name(self) -> str:
        return f"{self.start} to {self.end} ({self.unit})"

    def describe(self) -> str:
        return (
            f'Add "{self.output_name}": {_SPAN_UNITS[self.unit]} from "{self.start}" to '
            f'"{self.end}" (negative when it ends before it starts).'
        )

    def compute(self, table: CleanTable, ctx: ApplyContext) -> tuple[pd.Series, str | None]:
        exact = self.unit == "days-exact"
        a = date_series(table, self.start, utc=exact)
        b = date_series(table, self.end, utc=exact)
        funcs = {
            "days": lambda: span_days(a, b),
            "days-exact": lambda: span_days(a, b, exact=True),
            "weeks": lambda: span_weeks(a, b),
            "months": lambda: completed_months(a, b),
            "years": lambda: completed_years(a, b),
        }
        return funcs[self.unit](), None


def _day(s: pd.Series) -> pd.Series:
    return pd.Series(
        s.to_numpy(dtype="datetime64[us]").astype("datetime64[D]").astype("datetime64[us]")
    )


@register_step
@dataclass(frozen=True)
class Age(DerivedStep):
    """Age in completed years from a date of birth to a reference date (dates only)."""

    kind: ClassVar[str] = "age"
    title: ClassVar[str] = "Age in completed years"
    note: ClassVar[str | None] = AGE_CAUTION
    birth: str = _col("Date of birth (column)")
    as_of: str | None = _as_of()
    as_of_column: str | None = _as_of_column()
    leap_day: Literal["mar1", "feb28"] = field(
        default="mar1",
        metadata=_p(
            "Born on 29 February: birthday in common years on",
            help="mar1: 1 March (default; as Maryland General Provisions §1-303(b)); "
            "feb28: 28 February. Follow your local law.",
            choices={"mar1": "1 March (default)", "feb28": "28 February"},
        ),
    )
    output: str = _output()

    def __post_init__(self) -> None:
        _check_as_of(self, self.as_of, self.as_of_column)

    def columns_read(self) -> tuple[str, ...]:
        return (self.birth,) if self.as_of_column is None else (self.birth, self.as_of_column)

    def default_name(self) -> str:
        return f"Age ({self.birth})"

    def describe(self) -> str:
        when = "1 March" if self.leap_day == "mar1" else "28 February"
        return (
            f'Add "{self.output_name}": age in completed years from "{self.birth}" as of '
            f"{_as_of_words(self.as_of, self.as_of_column)} (born 29 February: birthday on "
            f"{when} in common years)."
        )

    def compute(self, table: CleanTable, ctx: ApplyContext) -> tuple[pd.Series, str | None]:
        born = _day(date_series(table, self.birth))
        ref = _day(reference_dates(table, ctx, self.as_of, self.as_of_column))
        return completed_years(born, ref, leap_day=self.leap_day), None


@register_step
@dataclass(frozen=True)
class Tenure(DerivedStep):
    """Tenure in completed months from a start date to a reference date (dates only)."""

    kind: ClassVar[str] = "tenure"
    title: ClassVar[str] = "Tenure in completed months"
    start: str = _col("Start date (column)")
    as_of: str | None = _as_of()
    as_of_column: str | None = _as_of_column()
    output: str = _output()

    def __post_init__(self) -> None:
        _check_as_of(self, self.as_of, self.as_of_column)

    def columns_read(self) -> tuple[str, ...]:
        return (self.start,) if self.as_of_column is None else (self.start, self.as_of_column)

    def default_name(self) -> str:
        return f"Months since {self.start}"

    def describe(self) -> str:
        return (
            f'Add "{self.output_name}": completed months from "{self.start}" to '
            f"{_as_of_words(self.as_of, self.as_of_column)}."
        )

    def compute(self, table: CleanTable, ctx: ApplyContext) -> tuple[pd.Series, str | None]:
        start = _day(date_series(table, self.start))
        ref = _day(reference_dates(table, ctx, self.as_of, self.as_of_column))
        return completed_months(start, ref), None


_FISCAL_HELP = (
    "end: a fiscal year is named by the calendar year in which it ends (a July start: "
    "1 July 2026 – 30 June 2027 is 2027); start: by the year in which it starts (2026)."
)


@register_step
@dataclass(frozen=True)
class CalendarPart(DerivedStep):
    """One calendar part of a date column (year, month name, ISO week, fiscal year …)."""

    kind: ClassVar[str] = "calendar-part"
    title: ClassVar[str] = "Calendar part"
    column: str = _col("Date column")
    part: Literal[
        "year", "quarter", "month", "month-name", "day", "weekday", "weekday-name",
        "iso-year", "iso-week", "day-of-year", "fiscal-year", "fiscal-quarter", "date",
    ] = field(default="year", metadata=_p("Part", choices=PARTS))  # fmt: skip
    locale: str = field(default="en", metadata=_p("Language for names (CLDR locale)", "locale"))
    fiscal_start: int = field(
        default=1, metadata=_p("Fiscal year starts in month", minimum=1, maximum=12)
    )
    fiscal_label: Literal["end", "start"] = field(
        default="end",
        metadata=_p(
            "Fiscal year named by the year in which it",
            help=_FISCAL_HELP,
            choices={"end": "ends (July start: Jul 2026–Jun 2027 is 2027)", "start": "starts"},
        ),
    )
    output: str = _output()

    def __post_init__(self) -> None:
        if not 1 <= self.fiscal_start <= 12:
            raise FieldValueError("fiscal_start", "the fiscal start month must be 1 to 12")
        try:
            check_locale(self.locale)
        except CalendarError as err:
            raise FieldValueError("locale", str(err)) from None

    def columns_read(self) -> tuple[str, ...]:
        return (self.column,)

    def default_name(self) -> str:
        return f"{self.column} ({self.part})"

    def describe(self) -> str:
        what = PARTS[self.part].lower()
        if self.part.startswith("fiscal"):
            month = _dt.date(2000, self.fiscal_start, 1).strftime("%B")
            what += (
                f", years starting 1 {month}, named by the year in which they {self.fiscal_label}"
            )
        if self.part.endswith("-name"):
            what += f" in locale {self.locale}"
        return f'Add "{self.output_name}": the {what} of "{self.column}".'

    def compute(self, table: CleanTable, ctx: ApplyContext) -> tuple[pd.Series, str | None]:
        values = calendar_part(
            date_series(table, self.column),
            self.part,
            locale=self.locale,
            fiscal_start=self.fiscal_start,
            fiscal_label=self.fiscal_label,
        )
        return values, None


@register_step
@dataclass(frozen=True)
class BusinessDays(DerivedStep):
    """Working days between two date columns (numpy.busday_count), skipping a weekend and
    holidays (by country from the ``holidays`` package, and/or a list of dates)."""

    kind: ClassVar[str] = "business-days"
    title: ClassVar[str] = "Business days between two dates"
    start: str = _col("From (date column)")
    end: str = _col("To (date column)")
    weekmask: str = field(
        default="1111100",
        metadata=_p(
            "Working days, Monday to Sunday (1 = works)", help='"1111100" is Monday to Friday.',
            pattern="^[01]{7}$",
        ),
    )  # fmt: skip
    country: str | None = field(default=None, metadata=_p("Holidays of country", "country"))
    subdiv: str | None = field(default=None, metadata=_p("…and subdivision", "subdivision"))
    holidays: tuple[_dt.date, ...] = field(default=(), metadata=_p("More holidays", "dates"))
    include_end: bool = field(
        default=False,
        metadata=_p("Count the end day", help="Off: the start day counts, the end day does not."),
    )
    output: str = _output()

    def __post_init__(self) -> None:
        if len(self.weekmask) != 7 or set(self.weekmask) - {"0", "1"} or "1" not in self.weekmask:
            raise FieldValueError("weekmask", "seven 0/1 digits with at least one working day")
        if self.subdiv is not None and self.country is None:
            raise FieldValueError("subdiv", "a subdivision needs a country")

    def columns_read(self) -> tuple[str, ...]:
        return (self.start, self.end)

    def default_name(self) -> str:
        return f"Business days {self.start} to {self.end}"

    def describe(self) -> str:
        days = [
            d for d, on in zip(("Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"), self.weekmask)
            if on == "1"
        ]  # fmt: skip
        hol = []
        if self.country:
            hol.append(f"holidays of {self.country}{'-' + self.subdiv if self.subdiv else ''}")
        if self.holidays:
            hol.append(f"{len(self.holidays)} listed holidays")
        skip = f", skipping {' and '.join(hol)}" if hol else ""
        end = "both ends counted" if self.include_end else "start day counted, end day not"
        return (
            f'Add "{self.output_name}": working days ({" ".join(days)}) from "{self.start}" to '
            f'"{self.end}"{skip}; {end}.'
        )

    def compute(self, table: CleanTable, ctx: ApplyContext) -> tuple[pd.Series, str | None]:
        a = date_series(table, self.start)
        b = date_series(table, self.end)
        hol = np.array(self.holidays, dtype="datetime64[D]")
        warning = None
        if self.country:
            lo, hi = HOLIDAY_YEARS
            ya, _, _ = ymd(a.to_numpy().astype("datetime64[D]"))
            yb, _, _ = ymd(b.to_numpy().astype("datetime64[D]"))
            both = a.notna().to_numpy() & b.notna().to_numpy()
            outside = both & ((np.minimum(ya, yb) < lo) | (np.maximum(ya, yb) > hi))
            ok = both & ~outside
            if ok.any():
                years = range(
                    int(np.minimum(ya, yb)[ok].min()), int(np.maximum(ya, yb)[ok].max()) + 1
                )
                hol = np.concatenate([hol, holiday_dates(self.country, self.subdiv, years)])
            if outside.any():
                a = a.where(~outside)
                warning = (
                    f'"{self.output_name}": {int(outside.sum())} rows left empty, their dates fall '
                    f"outside {lo}–{hi}, the years holidays are looked up for."
                )
        values = business_days(
            a, b, weekmask=self.weekmask, holidays=np.unique(hol), include_end=self.include_end
        )
        return values, warning


@register_step
@dataclass(frozen=True)
class ConvertZone(Step):
    """Move a date-time column's values to one IANA time zone."""

    kind: ClassVar[str] = "convert-zone"
    title: ClassVar[str] = "Move times to a time zone"
    column: str = field(
        metadata={"label": "Date column", "param": "column", "schema": {"minLength": 1}}
    )
    zone: str = field(metadata={"label": "Move to zone (IANA name)", "param": "zone"})
    naive_zone: str | None = field(
        default=None,
        metadata={
            "label": "Times with no offset were written in zone",
            "param": "zone-or-none",
            "help": "Empty: times with no offset are left as they are.",
        },
    )

    def __post_init__(self) -> None:
        check_zone(self.zone, "zone")
        if self.naive_zone is not None:
            check_zone(self.naive_zone, "naive_zone")

    def columns_read(self) -> tuple[str, ...]:
        return (self.column,)

    def describe(self) -> str:
        naive = (
            f"times with no offset taken as {self.naive_zone}"
            if self.naive_zone
            else "times with no offset left as they are"
        )
        return f'Move the times of "{self.column}" to {self.zone} ({naive}).'

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        for pc in table.parsed.values():
            if pc.output_name == self.column:
                if pc.date_only:
                    return _warn(table, f'"{self.column}" holds dates only; nothing to move.')
                return table.with_parsed(convert_zone(pc, self.zone, self.naive_zone))
        text = f'"{self.column}" is not read as dates, so moving it to {self.zone} did nothing.'
        return table if text in table.warnings else table.with_warning(text)
