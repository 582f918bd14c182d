"""Scanning: rank candidate ParseSpecs for each column, with evidence.

PLACEHOLDER until the date engine lands; the signatures are the contract.
"""

from __future__ import annotations

import pandas as pd

from .parse import parse_column
from .progress import Progress
from .report import ColumnReport, Suggestion
from .spec import ParseSpec
from .table import RawColumn, RawTable, SourceFacts

__all__ = ["scan", "scan_column"]


def scan_column(
    column: RawColumn,
    facts: SourceFacts | None = None,
    *,
    prefer_day_order: str | None = None,
    reference_year: int | None = None,
) -> ColumnReport:
    """Rank ways to parse one column. ``prefer_day_order`` ("dmy"/"mdy") decides only where the
    data cannot, and the report then says it was a preference."""
    spec = ParseSpec(patterns=("iso-date",))
    parsed = parse_column(column, spec, facts)
    counts = parsed.counts()
    total = len(column) - counts["blank"]
    likeness = counts["parsed"] / total if total else 0.0
    sug = Suggestion(
        spec=spec,
        label="ISO 8601 100%",
        score=likeness,
        parsed=counts["parsed"],
        total=total,
        failed=counts["failed"],
    )
    return ColumnReport(
        column=column.name,
        n_rows=len(column),
        likeness=likeness,
        is_date=likeness >= 0.5,
        blank=counts["blank"],
        suggestions=(sug,),
    )


def scan(
    table: RawTable | pd.DataFrame,
    *,
    prefer_day_order: str | None = None,
    reference_year: int | None = None,
    progress: Progress | None = None,
) -> list[ColumnReport]:
    """Scan every column of a table (or a DataFrame, wrapped as a RawTable)."""
    if isinstance(table, pd.DataFrame):
        table = RawTable.from_dataframe(table)
    reports = []
    for i, col in enumerate(table.columns):
        if progress is not None:
            progress.report(i, len(table.columns), f"scanning {col.name}")
        reports.append(
            scan_column(
                col, table.facts, prefer_day_order=prefer_day_order, reference_year=reference_year
            )
        )
    return reports
