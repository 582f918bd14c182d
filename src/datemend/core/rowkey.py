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
import pyarrow as pa
import pyarrow.compute as pc

from .table import CellKind, RawColumn, RawTable

__all__ = [
    "cells_text",
    "column_text",
    "detect_key_column",
    "find_rows",
    "is_key_column",
    "key_array",
    "key_of_row",
    "key_text",
    "prefetch_rows",
]

#: Header words that suggest an identifier (common practice, no source).
_KEY_WORDS = re.compile(r"(^|[^a-z])(id|no|nr|num|number|key|code|ref|reference)([^a-z]|$)|#")

_KINDS_OK = np.array([CellKind.TEXT, CellKind.INT], dtype=np.int8)

_trimmed_cache: weakref.WeakKeyDictionary[RawColumn, pa.Array] = weakref.WeakKeyDictionary()


def key_array(column: RawColumn) -> pa.Array:
    """The column's cells as trimmed text, "" for empty, as an Arrow string array (cached per
    column): lookups and uniqueness checks hash it in Arrow, with no Python object per cell."""
    arr = _trimmed_cache.get(column)
    if arr is None:
        if column.arrow is not None:
            arr = pc.fill_null(pc.utf8_trim_whitespace(column.arrow), "")
        else:
            text = pa.array(column.text().to_numpy(dtype=object), pa.string(), from_pandas=True)
            arr = pc.fill_null(pc.utf8_trim_whitespace(text), "")
        _trimmed_cache[column] = arr
    return arr


def column_text(column: RawColumn) -> pd.Series:
    """Every cell as trimmed text, "" for empty (Arrow strings: trimmed without a Python loop)."""
    return pd.Series(pd.arrays.ArrowStringArray(key_array(column)), dtype="string[pyarrow]")


def key_text(column: RawColumn) -> pd.Index:
    """The column's cells as trimmed text, as an Index (see ``key_array`` for lookups)."""
    return pd.Index(pd.arrays.ArrowStringArray(key_array(column)))


def cells_text(column: RawColumn, rows: np.ndarray | Sequence[int]) -> pd.Series:
    """Some cells of a column as trimmed text ("" for empty), without converting the rest."""
    rows = np.asarray(rows, dtype=np.int64)
    part = column.take(rows)
    return part.text().fillna("").astype(object).str.strip().reset_index(drop=True)


def is_key_column(column: RawColumn) -> bool:
    """Every cell non-empty text or integer, and no two cells alike after trimming."""
    if len(column) == 0 or not np.isin(column.kinds, _KINDS_OK).all():
        return False
    arr = key_array(column)
    if pc.any(pc.equal(arr, "")).as_py():
        return False
    return pc.count_distinct(arr).as_py() == len(arr)


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
    column = raw.column(key_column)
    key = key.strip()
    known = _found_cache.get(column)
    if known is not None and key in known:
        return known[key]
    hit = pc.equal(key_array(column), key)
    return np.flatnonzero(hit.to_numpy(zero_copy_only=False)).astype(np.int64)


_found_cache: weakref.WeakKeyDictionary[RawColumn, dict[str, np.ndarray]] = (
    weakref.WeakKeyDictionary()
)


def prefetch_rows(raw: RawTable, key_column: str | None, keys: Sequence[str]) -> None:
    """Look up many keys at once (one hashing pass over the key column instead of one scan per
    key), so the ``find_rows`` calls that follow for them are dictionary lookups."""
    if key_column is None or key_column not in raw or len(keys) < 2:
        return
    column = raw.column(key_column)
    wanted = list(dict.fromkeys(k.strip() for k in keys))
    where = pc.index_in(key_array(column), value_set=pa.array(wanted, pa.string()))
    codes = pc.fill_null(where, -1).to_numpy(zero_copy_only=False)
    hit = np.flatnonzero(codes >= 0)
    order = np.argsort(codes[hit], kind="stable")
    bounds = np.searchsorted(codes[hit][order], np.arange(len(wanted) + 1))
    known = _found_cache.setdefault(column, {})
    for j, key in enumerate(wanted):
        known[key] = hit[order[bounds[j] : bounds[j + 1]]].astype(np.int64)


def key_of_row(raw: RawTable, key_column: str | None, row: int) -> str:
    """The key that finds row position ``row`` again (see ``find_rows``)."""
    if key_column is None:
        assert raw.source_rows is not None
        return str(int(raw.source_rows[row]))
    return str(key_array(raw.column(key_column))[int(row)].as_py())
