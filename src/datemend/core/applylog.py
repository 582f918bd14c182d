"""Applying a fix log: a pure, deterministic function of (log, raw table) → clean table.

Steps are row-local, so the same log runs on one DataFrame, one file, or each partition of a
larger dataset with the same result. Also the CLI's ``auto``: a log that accepts the best
suggestion of every date column.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator
from pathlib import Path
from typing import Literal

import pandas as pd

from .clean import CleanTable
from .fixlog import FixLog, LogEntry, StepError
from .progress import Progress
from .report import ColumnReport
from .steps import ApplyContext, Step
from .table import DatemendError, RawTable

__all__ = [
    "apply_entry",
    "apply_log",
    "apply_run",
    "apply_to_dataframe",
    "auto_fix",
    "known_names",
    "make_auto_log",
]


def known_names(table: CleanTable) -> set[str]:
    """Names a step may refer to: raw columns, parsed output names, derived columns."""
    names = set(table.raw.names) | set(table.derived)
    names |= {p.output_name for p in table.parsed.values()}
    return names


def apply_entry(table: CleanTable, entry: LogEntry, number: int, ctx: ApplyContext) -> CleanTable:
    """Apply one entry (1-based ``number`` for messages); disabled entries change nothing, and a
    step whose columns are not in the table is skipped with a warning."""
    if not entry.enabled:
        return table
    step = entry.step
    missing = [c for c in step.columns_read() if c not in known_names(table)]
    if missing:
        text = f'Step {number} was skipped: column "{missing[0]}" is not in the file.'
        return table if text in table.warnings else table.with_warning(text)
    try:
        return step.apply(table, ctx)
    except DatemendError as err:
        raise StepError(f"Step {number} ({step.describe()}) failed: {err}") from None


def apply_log(
    log: FixLog,
    raw: RawTable,
    ctx: ApplyContext | None = None,
    progress: Progress | None = None,
) -> CleanTable:
    """Run the log's enabled steps on ``raw``: a pure, deterministic function of its inputs
    (pass ``ctx`` with a fixed ``today`` when a step depends on the day)."""
    if ctx is None:
        ctx = ApplyContext(key_column=log.key_column)
    table = CleanTable(raw, key_column=ctx.key_column or log.key_column)
    entries = log.entries
    n = len(entries)
    for i, j in step_runs(entries):
        if progress is not None:
            progress.report(i, n, f"step {i + 1} of {n}")
        if j - i > 1:
            table = apply_run(table, entries, i, j, ctx)
        else:
            table = apply_entry(table, entries[i], i + 1, ctx)
    if progress is not None:
        progress.report(n, n, "done")
    return table


def step_runs(entries: tuple[LogEntry, ...], start: int = 0) -> Iterator[tuple[int, int]]:
    """Split entries ``start..`` into runs ``(i, j)`` to apply together: a run of enabled steps
    of one kind that shares work (e.g. many hand-set cells), else one entry at a time."""
    n = len(entries)
    i = start
    while i < n:
        cls = type(entries[i].step)
        j = i + 1
        if entries[i].enabled and cls.apply_many is not Step.apply_many:
            while j < n and type(entries[j].step) is cls:
                j += 1
        yield i, j
        i = j


def apply_run(
    table: CleanTable, entries: tuple[LogEntry, ...], start: int, stop: int, ctx: ApplyContext
) -> CleanTable:
    """Entries ``start..stop-1`` (one kind): the ones whose columns exist, in one call."""
    batch = []
    for k in range(start, stop):
        entry = entries[k]
        if not entry.enabled:
            continue
        missing = [c for c in entry.step.columns_read() if c not in known_names(table)]
        if missing:
            text = f'Step {k + 1} was skipped: column "{missing[0]}" is not in the file.'
            table = table if text in table.warnings else table.with_warning(text)
        else:
            batch.append(entry.step)
    if not batch:
        return table
    try:
        return type(batch[0]).apply_many(table, batch, ctx)
    except DatemendError as err:
        raise StepError(f"Steps {start + 1}–{stop} failed: {err}") from None


def apply_to_dataframe(
    log_or_path: FixLog | str | Path,
    df: pd.DataFrame,
    *,
    ctx: ApplyContext | None = None,
    keep_raw: bool = False,
) -> pd.DataFrame:
    """Notebook use: apply a log (or a log file) to a DataFrame of raw values and get a
    DataFrame with the parsed columns (``datetime64[us]``, NaT where unresolved) back, on the
    same index (the input frame is not changed)."""
    log = log_or_path if isinstance(log_or_path, FixLog) else FixLog.load(log_or_path)
    clean = apply_log(log, RawTable.from_dataframe(df), ctx)
    out = clean.to_dataframe(keep_raw=keep_raw)
    out.index = df.index
    return out


def auto_fix(
    raw: RawTable,
    reports: Iterable[ColumnReport] | None = None,
    *,
    prefer_day_order: str | None = None,
    reference_year: int | None = None,
    key_column: str | Literal["detect"] | None = "detect",
    progress: Progress | None = None,
) -> tuple[FixLog, CleanTable]:
    """Accept the best suggestion of every date column (the CLI's ``auto``): the log, with facts
    and value ranges of ``raw``, and the table it gives. ``reports`` default to a fresh scan."""
    from .infer import scan
    from .rowkey import detect_key_column
    from .steps import ReadDates

    if reports is None:
        reports = scan(
            raw,
            prefer_day_order=prefer_day_order,
            reference_year=reference_year,
            progress=progress,
        )
    key = detect_key_column(raw) if key_column == "detect" else key_column
    log = FixLog(key_column=key)
    for rep in reports:
        best = rep.best
        if rep.is_date and best is not None and rep.column in raw:
            log = log.add(ReadDates(rep.column, best.spec, best.label))
    clean = apply_log(log, raw, progress=progress)
    return log.with_source(clean), clean


def make_auto_log(
    raw: RawTable,
    reports: Iterable[ColumnReport] | None = None,
    *,
    prefer_day_order: str | None = None,
    reference_year: int | None = None,
    key_column: str | Literal["detect"] | None = "detect",
) -> FixLog:
    """The log ``auto_fix`` makes (see there)."""
    return auto_fix(
        raw,
        reports,
        prefer_day_order=prefer_day_order,
        reference_year=reference_year,
        key_column=key_column,
    )[0]
