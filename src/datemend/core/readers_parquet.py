"""Parquet files and folder datasets → RawTable, kinds taken from the column types.

Parquet columns are typed, so no header row or encoding applies: timestamps become DATETIME,
dates DATE, times TIME, strings TEXT, integers INT, floating point FLOAT, booleans BOOL; nulls
are EMPTY. Other types (decimals, binary, lists) are kept as their text.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc

from .progress import Progress
from .readers_common import _unique
from .table import CellKind, RawColumn, RawTable, ReadError, SourceFacts

__all__ = ["read_parquet_table"]


def _column(arr: pa.ChunkedArray | pa.Array) -> tuple[np.ndarray, np.ndarray]:
    if isinstance(arr, pa.ChunkedArray):
        arr = arr.combine_chunks()
    typ = arr.type
    null = arr.is_null().to_numpy(zero_copy_only=False)
    if pa.types.is_dictionary(typ):
        arr = arr.dictionary_decode()
        typ = arr.type
    if pa.types.is_string(typ) or pa.types.is_large_string(typ) or pa.types.is_string_view(typ):
        values = arr.to_numpy(zero_copy_only=False).astype(object)
        blank = pc.equal(pc.utf8_trim_whitespace(arr.fill_null("")), "").to_numpy(
            zero_copy_only=False
        )
        kinds = np.where(blank, CellKind.EMPTY, CellKind.TEXT).astype(np.int8)
        # nulls and "" have no value; whitespace-only text is kept (kind EMPTY) for export
        empty = pc.equal(pc.utf8_length(arr.fill_null("")), 0).to_numpy(zero_copy_only=False)
        values[empty] = None
        return values, kinds
    if pa.types.is_boolean(typ):
        kind = CellKind.BOOL
        values = np.array(arr.to_pylist(), dtype=object)
    elif pa.types.is_integer(typ):
        kind = CellKind.INT
        values = arr.fill_null(0).to_numpy(zero_copy_only=False).astype(object)
    elif pa.types.is_floating(typ):
        kind = CellKind.FLOAT
        values = arr.fill_null(0).to_numpy(zero_copy_only=False).astype(np.float64).astype(object)
        nan = pc.is_nan(arr.cast(pa.float64())).fill_null(False).to_numpy(zero_copy_only=False)
        null = null | nan
    elif pa.types.is_timestamp(typ):
        kind = CellKind.DATETIME
        values = np.array(arr.to_pylist(), dtype=object)
    elif pa.types.is_date(typ):
        kind = CellKind.DATE
        values = np.array(arr.to_pylist(), dtype=object)
    elif pa.types.is_time(typ):
        kind = CellKind.TIME
        values = np.array(arr.to_pylist(), dtype=object)
    else:
        kind = CellKind.TEXT
        values = np.array([None if v is None else str(v) for v in arr.to_pylist()], dtype=object)
    kinds = np.full(len(values), kind, dtype=np.int8)
    kinds[null] = CellKind.EMPTY
    values[null] = None
    return values, kinds


def read_parquet_table(path: str, facts: SourceFacts, *, progress: Progress | None) -> RawTable:
    """Read a .parquet file, or every Parquet file in a folder, as one table."""
    import pyarrow.parquet as pq

    name = Path(path).name
    p = Path(path)
    files = (
        sorted(f for f in p.rglob("*") if f.is_file() and f.suffix.lower() in (".parquet", ".pq"))
        if p.is_dir()
        else [p]
    )
    # Each file through ParquetFile, not the dataset scanner: the scanner's background threads
    # can outlive a failed read and abort the process at exit (apache/arrow issue 34314).
    try:
        parts = []
        for k, f in enumerate(files):
            if progress is not None:
                progress.report(k, len(files) + 1, f"Reading {f.name}")
            with pq.ParquetFile(f) as pf:
                parts.append(pf.read(use_threads=False))
        table = parts[0] if len(parts) == 1 else pa.concat_tables(parts, promote_options="default")
    except (pa.ArrowException, OSError, ValueError, IndexError) as err:
        text = " ".join(str(err).split())[:120]
        raise ReadError(f"{name} could not be read as Parquet ({text}).", path) from None
    if table.num_columns == 0:
        raise ReadError(f"{name} has no columns to read.", path)
    names = [str(n).strip() or f"column {i + 1}" for i, n in enumerate(table.column_names)]
    unique = _unique(names)
    notes = []
    if unique != list(table.column_names):
        notes.append("Some column names were blank or repeated and were made unique.")
    cols = []
    for label, arr in zip(unique, table.columns):
        values, kinds = _column(arr)
        cols.append(RawColumn(label, values, kinds))
    facts = SourceFacts(
        path=facts.path,
        format="parquet",
        header_row=0,
        sha256=facts.sha256,
        notes=tuple(notes),
    )
    return RawTable(tuple(cols), facts, np.arange(1, table.num_rows + 1, dtype=np.int64))
