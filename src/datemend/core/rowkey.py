"""Row identity: which row a hand-set cell belongs to, next month as well as today.

A row is found by its value in a key column (unique and never empty: a member number, an ID), so
a fix follows the row when rows are added, removed or sorted. Without such a column the 1-based
source row number is the key, and the log says that this is fragile.
"""

from __future__ import annotations

import re
import weakref
from collections.abc import Sequence

import numpy as np
import pandas as pd
import pyarrow.compute as pc

from .table import CellKind, RawColumn, RawTable

__all__ = [
    "cells_text",
    "column_text",
    "detect_key_column",
    "find_rows",
    "is_key_column",
    "key_of_row",
    "key_text",
]

#: Header words that suggest an identifier (common practice, no source).
_KEY_WORDS = re.compile(r"(^|[^a-z])(id|no|nr|num|number|key|code|ref|reference)([^a-z]|$)|#")

_KINDS_OK = np.array([CellKind.TEXT, CellKind.INT], dtype=np.int8)

_index_cache: weakref.WeakKeyDictionary[RawColumn, pd.Index] = weakref.WeakKeyDictionary()


def column_text(column: RawColumn) -> pd.Series:
    """Every cell as trimmed text, "" for empty (Arrow strings: trimmed without a Python loop)."""
    if column.arrow is not None:  # text cells only: no object per cell is made
        trimmed = pc.fill_null(pc.utf8_trim_whitespace(column.arrow), "")
        return pd.Series(pd.arrays.ArrowStringArray(trimmed), dtype="string[pyarrow]")
    text = column.text().astype("string[pyarrow]").str.strip()
    return text.fillna("").reset_index(drop=True)


def key_text(column: RawColumn) -> pd.Index:
    """The column's cells as trimmed text, as an Index for lookups (cached per column)."""
    idx = _index_cache.get(column)
    if idx is None:
        idx = pd.Index(column_text(column))
        _index_cache[column] = idx
    return idx


def cells_text(column: RawColumn, rows: np.ndarray | Sequence[int]) -> pd.Series:
    """Some cells of a column as trimmed text ("" for empty), without converting the rest."""
    rows = np.asarray(rows, dtype=np.int64)
    part = column.take(rows)
    return part.text().fillna("").astype(object).str.strip().reset_index(drop=True)


def is_key_column(column: RawColumn) -> bool:
    """Every cell non-empty text or integer, and no two cells alike after trimming."""
    if len(column) == 0 or not np.isin(column.kinds, _KINDS_OK).all():
        return False
    idx = key_text(column)
    return bool(idx.is_unique) and not bool((idx == "").any())


def detect_key_column(raw: RawTable) -> str | None:
    """The column that identifies rows: unique and non-empty, preferring a header that reads like
    an identifier ("Member no", "ID"), else the first such column; None if there is none."""
    candidates = [c.name for c in raw.columns if is_key_column(c)]
    if not candidates:
        return None
    for name in candidates:
        if _KEY_WORDS.search(name.casefold()):
            return name
    return candidates[0]


def find_rows(raw: RawTable, key_column: str | None, key: str) -> np.ndarray:
    """Row positions whose key is ``key``: the trimmed text of ``key_column``, or the 1-based
    source row number when ``key_column`` is None."""
    if key_column is None:
        if not (key.isascii() and key.isdigit() and len(key) <= 18):
            return np.empty(0, dtype=np.int64)
        assert raw.source_rows is not None
        return np.flatnonzero(raw.source_rows == int(key))
    if key_column not in raw:
        return np.empty(0, dtype=np.int64)
    idx = key_text(raw.column(key_column))
    return _positions(idx, key.strip())


def _positions(idx: pd.Index, key: str) -> np.ndarray:
    found = np.asarray(idx.get_indexer_for([key]), dtype=np.int64)
    return found[found >= 0]


def key_of_row(raw: RawTable, key_column: str | None, row: int) -> str:
    """The key that finds row position ``row`` again (see ``find_rows``)."""
    if key_column is None:
        assert raw.source_rows is not None
        return str(int(raw.source_rows[row]))
    return str(key_text(raw.column(key_column))[row])
