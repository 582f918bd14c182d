"""Shared by the engine's golden tables: parse texts with a spec, one (state, text) per value."""

from __future__ import annotations

import numpy as np

from datemend.core.clean import CellState
from datemend.core.parse import iso_text, parse_column
from datemend.core.spec import ParseSpec
from datemend.core.table import RawColumn, kinds_of


def read_with(
    values: list[object], spec: ParseSpec, kinds: list[int] | None = None, *, text_only: bool = True
) -> list[tuple[str, str]]:
    """(state name, ISO text when parsed, else the reason) per value. Values are text cells
    (as a CSV gives them) unless ``text_only`` is False or ``kinds`` are given."""
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    k = kinds_of(arr, text_only=text_only) if kinds is None else np.array(kinds, dtype=np.int8)
    col = parse_column(RawColumn("c", arr, k), spec)
    iso = iso_text(col.value, col.offset_min, col.has_time)
    return [
        (CellState(s).name, str(i) if s == CellState.PARSED else str(r))
        for s, i, r in zip(col.state, iso, col.reason, strict=True)
    ]
