"""Derived columns as fix steps: spans, ages, tenure, calendar parts, business days, and moving
times to another zone; plus ``preview`` and per-kind parameter lists for a dialog.

The vectorised functions (``completed_years``, ``completed_months``, ``span_days`` …) live in
``spans.py`` and are re-exported here; their conventions (month ends, negative spans, 29 February,
business-day end) are documented there. Each step reads columns by output name through
``date_series``: only PARSED and MANUAL cells count, everything else gives NA in the result.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import typing
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
from .steps import ApplyContext, FieldValueError, Step, register_step

__all__ = [
    "AGE_CAUTION",
    "HOLIDAY_YEARS",
    "REPLAY_DAY",
    "Age",
    "BusinessDays",
    "CalendarPart",
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


def _p(label: str, param: str | None = None, help: str = "", **schema: Any) -> dict[str, Any]:
    """Field metadata: the dialog's label, parameter type and help, and extra schema keywords."""
    return {"label": label, "param": param, "help": help, "schema": schema}


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


def _check_as_of(as_of: str | None, as_of_column: str | None) -> None:
    if (as_of is None) == (as_of_column is None):
        raise FieldValueError("as_of", 'give either "as_of" or "as_of_column", not both or none')
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
        metadata=_p("Unit", help="; ".join(f"{k}: {v}" for k, v in _SPAN_UNITS.items())),
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
        ),
    )
    output: str = _output()

    def __post_init__(self) -> None:
        _check_as_of(self.as_of, self.as_of_column)

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
        _check_as_of(self.as_of, self.as_of_column)

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
    ] = field(default="year", metadata=_p("Part", help="; ".join(PARTS.values())))  # fmt: skip
    locale: str = field(default="en", metadata=_p("Language for names (CLDR locale)", "locale"))
    fiscal_start: int = field(
        default=1, metadata=_p("Fiscal year starts in month", minimum=1, maximum=12)
    )
    fiscal_label: Literal["end", "start"] = field(
        default="end", metadata=_p("Fiscal year named by the year in which it", help=_FISCAL_HELP)
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


# ---------------------------------------------------------------- dialog support


def parameters(cls: type[Step]) -> list[dict[str, Any]]:
    """The parameters of a step kind for a generic dialog: name, label, type, default, required,
    choices (for a fixed set) and help. Types: "column", "column-or-none", "output", "as-of",
    "text", "int", "bool", "choice", "locale", "country", "subdivision", "dates"."""
    hints = typing.get_type_hints(cls)
    out = []
    for f in dataclasses.fields(cls):  # type: ignore[arg-type]
        meta = f.metadata or {}
        hint = hints[f.name]
        choices: tuple[Any, ...] = ()
        if typing.get_origin(hint) is Literal:
            choices = typing.get_args(hint)
        kind = meta.get("param") or (
            "choice" if choices else {bool: "bool", int: "int"}.get(hint, "text")
        )
        required = f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING
        out.append(
            {
                "name": f.name,
                "label": meta.get("label", f.name.replace("_", " ")),
                "type": kind,
                "default": None if required else f.default,
                "required": required,
                "choices": list(choices),
                "help": meta.get("help", ""),
                "schema": meta.get("schema", {}),
            }
        )
    return out


def _head(table: CleanTable, n: int) -> CleanTable:
    rows = np.arange(min(n, table.raw.n_rows))
    parsed = {
        k: pc.evolve(
            **{
                a: getattr(pc, a)[rows]
                for a in ("value", "offset_min", "has_time", "state", "pattern", "reason")
            }
        )
        for k, pc in table.parsed.items()
    }
    derived = {
        k: dataclasses.replace(dc, values=dc.values.iloc[rows].reset_index(drop=True))
        for k, dc in table.derived.items()
    }
    hits = {k: v[rows] for k, v in table.rule_hits.items()}
    return table.evolve(raw=table.raw.take(rows), parsed=parsed, derived=derived, rule_hits=hits)


def preview(
    step: Step, clean: CleanTable, n: int = 10, ctx: ApplyContext | None = None
) -> pd.DataFrame:
    """The first ``n`` rows of the columns ``step`` reads and of what it adds (a derived column,
    or a rule's True/False column), for a dialog; warnings go in ``DataFrame.attrs["warnings"]``."""
    small = _head(clean, n)
    after = step.apply(small, ctx or ApplyContext())
    cols: dict[str, pd.Series] = {}
    for name in step.columns_read():
        try:
            cols[name] = date_series(small, name)
        except DeriveError:
            continue
    for name, dc in after.derived.items():
        if small.derived.get(name) is not dc:
            cols[name] = dc.values
    for label, mask in after.rule_hits.items():
        if small.rule_hits.get(label) is not mask:
            cols[label] = pd.Series(mask, dtype="boolean")
    out = pd.DataFrame(cols)
    out.attrs["warnings"] = [w for w in after.warnings if w not in small.warnings]
    return out
