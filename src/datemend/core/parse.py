"""Vectorised parsing of a column with a ParseSpec.

PLACEHOLDER: ISO 8601 calendar dates only, until the date engine lands. The signature is the
contract the rest of the code relies on.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .clean import CellState, ParsedColumn
from .spec import ParseSpec
from .table import CellKind, RawColumn, SourceFacts

__all__ = ["parse_column"]


def parse_column(
    column: RawColumn, spec: ParseSpec, facts: SourceFacts | None = None
) -> ParsedColumn:
    """Parse every cell of ``column`` with ``spec``; row-aligned result, one state per cell."""
    n = len(column)
    out = ParsedColumn.empty(column.name, n)
    text = column.text().str.strip()
    blank = (column.kinds == CellKind.EMPTY) | text.str.casefold().isin(
        [t.casefold() for t in spec.blank_tokens]
    ).to_numpy()
    values = pd.to_datetime(text, format="%Y-%m-%d", errors="coerce").to_numpy("datetime64[us]")
    ok = ~np.isnat(values) & ~blank
    state = np.where(blank, CellState.BLANK, np.where(ok, CellState.PARSED, CellState.FAILED))
    reason = np.where(state == CellState.FAILED, "no pattern reads this value", None)
    return out.evolve(
        value=np.where(ok, values, np.datetime64("NaT")).astype("datetime64[us]"),
        state=state.astype(np.int8),
        pattern=np.where(ok, 0, -1).astype(np.int16),
        patterns=("iso-date",),
        reason=reason.astype(object),
    )
