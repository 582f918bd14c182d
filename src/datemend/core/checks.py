"""Rules on date columns as fix steps: a date within a range, a date not after a reference date,
one column's date not after another's. Each rule writes ``CleanTable.rule_hits[label]``, a bool
mask of the rows that break it, so the table can show them as problems and a replay counts them.

Rules compare calendar days (times of day are ignored). A row whose date is missing or unresolved
breaks no rule: it is already shown as a problem of its own.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import ClassVar

import numpy as np
import pandas as pd

from .clean import CleanTable
from .derive import (
    _AS_OF_HELP,
    _AS_OF_PATTERN,
    REPLAY_DAY,
    _as_of_words,
    _p,
    _warn,
    date_series,
    reference_dates,
)
from .spans import DeriveError, iso_date
from .steps import ApplyContext, FieldValueError, Step, register_step

__all__ = ["NotAfter", "NotAfterColumn", "RuleStep", "WithinRange", "rule_rows", "rule_summary"]


def _days(s: pd.Series) -> np.ndarray:
    return s.to_numpy(dtype="datetime64[us]").astype("datetime64[D]")


class RuleStep(Step):
    """Base of rule steps: ``offending`` gives the mask; ``label`` names the rule's hits."""

    title: ClassVar[str] = ""
    label: str

    def default_label(self) -> str:
        raise NotImplementedError

    @property
    def rule_label(self) -> str:
        return self.label or self.default_label()

    def offending(self, table: CleanTable, ctx: ApplyContext) -> np.ndarray:
        raise NotImplementedError

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        try:
            mask = np.asarray(self.offending(table, ctx), dtype=bool)
        except DeriveError as err:
            return _warn(table, f'The rule "{self.rule_label}" was not checked: {err}')
        hits = dict(table.rule_hits)
        hits[self.rule_label] = mask
        return table.evolve(rule_hits=hits)


def _label() -> object:
    return field(default="", metadata=_p("Rule name (shown with its count)", "output"))


def _check_day(value: str | None, name: str) -> None:
    if value is not None:
        try:
            iso_date(value, name)
        except DeriveError as err:
            raise FieldValueError(name, str(err)) from None


@register_step
@dataclass(frozen=True)
class WithinRange(RuleStep):
    """Dates must lie between ``earliest`` and ``latest`` (both days allowed; either may be
    omitted)."""

    kind: ClassVar[str] = "rule-range"
    title: ClassVar[str] = "Rule: date within a range"
    column: str = field(metadata=_p("Date column", "column", minLength=1))
    earliest: str | None = field(
        default=None,
        metadata=_p("Not before (YYYY-MM-DD)", "date-or-none", pattern=r"^\d{4}-\d{2}-\d{2}$"),
    )
    latest: str | None = field(
        default=None,
        metadata=_p("Not after (YYYY-MM-DD)", "date-or-none", pattern=r"^\d{4}-\d{2}-\d{2}$"),
    )
    label: str = _label()  # type: ignore[assignment]

    def __post_init__(self) -> None:
        _check_day(self.earliest, "earliest")
        _check_day(self.latest, "latest")
        if self.earliest is None and self.latest is None:
            raise FieldValueError("earliest", "give an earliest or a latest date (or both)")
        if self.earliest and self.latest and self.earliest > self.latest:
            raise FieldValueError("latest", "the latest date is before the earliest")

    def columns_read(self) -> tuple[str, ...]:
        return (self.column,)

    def _bounds(self) -> str:
        if self.earliest and self.latest:
            return f"from {self.earliest} to {self.latest}"
        return f"not before {self.earliest}" if self.earliest else f"not after {self.latest}"

    def default_label(self) -> str:
        return f"{self.column} {self._bounds()}"

    def describe(self) -> str:
        return f'Check that "{self.column}" is {self._bounds()} (both days allowed).'

    def offending(self, table: CleanTable, ctx: ApplyContext) -> np.ndarray:
        d = _days(date_series(table, self.column))
        bad = np.zeros(len(d), dtype=bool)
        if self.earliest:
            bad |= d < np.datetime64(self.earliest, "D")
        if self.latest:
            bad |= d > np.datetime64(self.latest, "D")
        return bad & ~np.isnat(d)


@register_step
@dataclass(frozen=True)
class NotAfter(RuleStep):
    """Dates must not be after a reference date (a fixed day, or the day of replay)."""

    kind: ClassVar[str] = "rule-not-after"
    title: ClassVar[str] = "Rule: date not after a reference date"
    column: str = field(metadata=_p("Date column", "column", minLength=1))
    as_of: str = field(
        default=REPLAY_DAY, metadata=_p("Not after", "as-of", _AS_OF_HELP, pattern=_AS_OF_PATTERN)
    )
    label: str = _label()  # type: ignore[assignment]

    def __post_init__(self) -> None:
        if self.as_of != REPLAY_DAY:
            _check_day(self.as_of, "as_of")

    def columns_read(self) -> tuple[str, ...]:
        return (self.column,)

    def default_label(self) -> str:
        return f"{self.column} not after {_as_of_words(self.as_of, None)}"

    def describe(self) -> str:
        return f'Check that "{self.column}" is not after {_as_of_words(self.as_of, None)}.'

    def offending(self, table: CleanTable, ctx: ApplyContext) -> np.ndarray:
        d = _days(date_series(table, self.column))
        ref = _days(reference_dates(table, ctx, self.as_of, None))
        return (d > ref) & ~np.isnat(d)


@register_step
@dataclass(frozen=True)
class NotAfterColumn(RuleStep):
    """Column ``first`` must not be after column ``second`` in the same row; with ``strict`` it
    must be before it (the same day breaks the rule too)."""

    kind: ClassVar[str] = "rule-order"
    title: ClassVar[str] = "Rule: one date not after another"
    first: str = field(metadata=_p("This date column", "column", minLength=1))
    second: str = field(metadata=_p("…is not after this one", "column", minLength=1))
    strict: bool = field(
        default=False, metadata=_p("Must be strictly before (same day breaks the rule)")
    )
    label: str = _label()  # type: ignore[assignment]

    def columns_read(self) -> tuple[str, ...]:
        return (self.first, self.second)

    def default_label(self) -> str:
        word = "before" if self.strict else "not after"
        return f"{self.first} {word} {self.second}"

    def describe(self) -> str:
        word = "before" if self.strict else "not after"
        return f'Check that "{self.first}" is {word} "{self.second}" in each row.'

    def offending(self, table: CleanTable, ctx: ApplyContext) -> np.ndarray:
        a = _days(date_series(table, self.first))
        b = _days(date_series(table, self.second))
        bad = (a >= b) if self.strict else (a > b)
        return bad & ~np.isnat(a) & ~np.isnat(b)


def rule_summary(clean: CleanTable) -> dict[str, int]:
    """Number of offending rows of each rule, by label, in the order the rules ran."""
    return {label: int(np.count_nonzero(mask)) for label, mask in clean.rule_hits.items()}


def rule_rows(clean: CleanTable, label: str) -> np.ndarray:
    """1-based source row numbers (as the file shows them) of the rows that break a rule."""
    mask = clean.rule_hits[label]
    assert clean.raw.source_rows is not None
    return clean.raw.source_rows[np.flatnonzero(mask)]
