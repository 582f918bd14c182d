"""Flat outputs: CSV (UTF-8, ISO 8601) and Parquet (date32 / timestamp types), built column by
column with numpy and pandas vector operations, so a million rows need no per-cell Python."""

from __future__ import annotations

import csv
import datetime as _dt
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pac
import pyarrow.parquet as pq

from .clean import NAIVE, CleanTable
from .export import DateOut, ExportOptions, prepare_dates, unique_name, zone_note
from .progress import Progress
from .table import CellKind

__all__ = ["FlatColumn", "blank_text", "flat_layout", "iso_text", "python_values", "raw_text"]

Counts = tuple[int, int, int, int, list[str]]
_GUARD = ("=", "+", "-", "@", "\t", "\r")  # OWASP CSV injection: leading characters to neutralise
_CHUNK = 25_000  # rows of text built at a time: smaller runs keep the peak low, as fast


@dataclass(frozen=True, eq=False)
class FlatColumn:
    """One output column: raw cells (``values``/``kinds``), a fixed date column (``dates``, with
    the raw cells for unresolved ones), or a derived column (``series``)."""

    name: str
    values: np.ndarray | pa.Array | None = None  # a RawColumn's objects, or its Arrow strings
    kinds: np.ndarray | None = None
    dates: DateOut | None = None
    series: pd.Series | None = None

    def take(self, rows: slice) -> FlatColumn:
        """The same column cut to a run of rows."""
        return FlatColumn(
            self.name,
            None if self.values is None else self.values[rows],
            None if self.kinds is None else self.kinds[rows],
            None if self.dates is None else self.dates.take(rows),
            None if self.series is None else self.series.iloc[rows].reset_index(drop=True),
        )


def flat_layout(
    clean: CleanTable, options: ExportOptions, *, beside: bool, force_raw: bool = False
) -> list[FlatColumn]:
    """Columns in file order, each fixed one under its output name with its raw copy just after
    it (``keep_raw``, or ``force_raw`` where it has unresolved cells), derived ones at the end."""
    raw = clean.raw
    taken = set(raw.names)
    out: list[FlatColumn] = []
    extra: list[FlatColumn] = []
    for rc in raw.columns:
        pc = clean.parsed.get(rc.name)
        cells = rc.arrow if rc.arrow is not None else rc.values  # no objects for Arrow text
        if pc is None:
            out.append(FlatColumn(rc.name, cells, rc.kinds))
            continue
        d = prepare_dates(pc, rc.kinds, options, cells)
        name = pc.output_name
        if name != rc.name:
            name = unique_name(name, taken)
        out.append(FlatColumn(name, cells, rc.kinds, dates=d))
        if options.keep_raw or (force_raw and d.unresolved):
            copy = FlatColumn(unique_name(f"{rc.name} (raw)", taken), cells, rc.kinds)
            (out if beside else extra).append(copy)
    out += extra
    for name, dc in clean.derived.items():
        out.append(FlatColumn(unique_name(name, taken), series=dc.values.reset_index(drop=True)))
    return out


# --------------------------------------------------------------------------- text forms


def raw_text(values: np.ndarray | pa.Array, kinds: np.ndarray) -> np.ndarray:
    """Each raw cell as text ("" for empty, a whitespace-only cell's own string), vectorised per
    kind; dates in ISO 8601."""
    if isinstance(values, pa.Array):  # text and empty cells only; whitespace-only text is kept
        return pac.fill_null(values, "").to_numpy(zero_copy_only=False)
    out = np.full(len(values), "", dtype=object)
    for kind in np.unique(kinds):
        m = kinds == kind
        v = values[m]
        if kind in (CellKind.TEXT, CellKind.ERROR):
            out[m] = v
        elif kind == CellKind.EMPTY:
            kept = blank_text(v)
            if kept.any():
                out[np.flatnonzero(m)[kept]] = v[kept]
        elif kind == CellKind.INT:
            out[m] = pd.Series(v, dtype=object).astype(str).to_numpy(dtype=object)
        elif kind == CellKind.FLOAT:
            out[m] = _float_text(np.asarray(v, dtype=np.float64))
        elif kind == CellKind.BOOL:
            out[m] = np.where(v.astype(bool), "TRUE", "FALSE").astype(object)
        elif kind == CellKind.DATE:
            out[m] = _date_text(v)
        elif kind == CellKind.DATETIME:
            out[m] = _datetime_text(v)
        elif kind != CellKind.EMPTY:
            out[m] = [x.isoformat() if hasattr(x, "isoformat") else str(x) for x in v]
    return out


def blank_text(values: np.ndarray | pa.Array) -> np.ndarray:
    """Which of these EMPTY-kind cells hold a string to write back (whitespace-only text)."""
    if isinstance(values, pa.Array):
        return np.asarray(pac.fill_null(pac.not_equal(values, ""), False), dtype=bool)
    return np.fromiter((isinstance(v, str) and v != "" for v in values), bool, len(values))


def _float_text(a: np.ndarray) -> np.ndarray:
    whole = np.isfinite(a) & (a == np.round(a)) & (np.abs(a) < 1e15)
    text = a.astype(str).astype(object)
    if whole.any():
        text[whole] = a[whole].astype(np.int64).astype(str).astype(object)
    return text


def _date_text(v: np.ndarray) -> np.ndarray:
    try:
        return np.datetime_as_string(np.asarray(v, dtype="datetime64[D]"), unit="D").astype(object)
    except (TypeError, ValueError):
        return np.array([x.isoformat() for x in v], dtype=object)


def _datetime_text(v: np.ndarray) -> np.ndarray:
    # any zoned value: every value's own ISO text (numpy would move it to UTC and drop the zone)
    if not len(v) or any(getattr(x, "tzinfo", None) is not None for x in v):
        return np.array([x.isoformat() for x in v], dtype=object)
    try:
        a = np.asarray(v, dtype="datetime64[us]")
    except (TypeError, ValueError):
        return np.array([x.isoformat() for x in v], dtype=object)
    return _iso_seconds(a)


def _iso_seconds(a: np.ndarray) -> np.ndarray:
    """YYYY-MM-DDTHH:MM:SS, with .ffffff only where the value has microseconds."""
    whole = np.datetime_as_string(a, unit="s").astype(object)
    frac = (a - a.astype("datetime64[s]")).astype(np.int64) != 0
    if frac.any():
        whole[frac] = np.datetime_as_string(a[frac], unit="us").astype(object)
    return whole


def _offset_text(minutes: np.ndarray) -> np.ndarray:
    """+HH:MM / -HH:MM per value (RFC 3339 §5.6), built once per distinct offset."""
    codes, uniques = pd.factorize(minutes)
    labels = []
    for m in uniques:
        sign = "-" if m < 0 else "+"
        h, mm = divmod(abs(int(m)), 60)
        labels.append(f"{sign}{h:02d}:{mm:02d}")
    return np.array(labels, dtype=object)[codes] if len(codes) else np.array([], dtype=object)


def iso_text(d: DateOut) -> np.ndarray:
    """ISO 8601 text of each written date ("" elsewhere): YYYY-MM-DD for a date-only column,
    else YYYY-MM-DDTHH:MM:SS[.ffffff], with ±HH:MM where the value carried an offset."""
    out = np.full(len(d.ok), "", dtype=object)
    idx = np.flatnonzero(d.ok)
    if not len(idx):
        return out
    local, offset = d.written()
    vals = local[idx]
    if d.date_only:
        out[idx] = np.datetime_as_string(vals.astype("datetime64[D]"), unit="D").astype(object)
        return out
    text = _iso_seconds(vals)
    offs = offset[idx]
    aware = offs != NAIVE
    if aware.any():
        text[aware] = text[aware] + _offset_text(offs[aware])
    out[idx] = text
    return out


def _column_text(col: FlatColumn, options: ExportOptions) -> np.ndarray:
    if col.series is not None:
        text = _series_text(col.series)
        textual = not (
            pd.api.types.is_numeric_dtype(col.series.dtype)
            or pd.api.types.is_datetime64_any_dtype(col.series.dtype)
        )
        if options.csv_formula_guard and textual:
            text = _guard(text, np.ones(len(text), dtype=bool))
        return text
    assert col.values is not None and col.kinds is not None
    text = raw_text(col.values, col.kinds)
    if options.csv_formula_guard:
        text = _guard(text, col.kinds == CellKind.TEXT)
    if col.dates is None:
        return text
    d = col.dates
    out = np.where(d.keep, text, "").astype(object)
    out[d.ok] = iso_text(d)[d.ok]
    return out


def _series_text(s: pd.Series) -> np.ndarray:
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        a = s.to_numpy(dtype="datetime64[us]")
        ok = ~np.isnat(a)
        out = np.full(len(a), "", dtype=object)
        if ok.any():
            midnight = (a[ok] == a[ok].astype("datetime64[D]")).all()
            out[ok] = (
                np.datetime_as_string(a[ok], unit="D").astype(object)
                if midnight
                else _iso_seconds(a[ok])
            )
        return out
    if pd.api.types.is_bool_dtype(s.dtype):
        return np.where(s.isna(), "", np.where(s.fillna(False), "TRUE", "FALSE")).astype(object)
    return s.astype("string").fillna("").to_numpy(dtype=object)


def _guard(text: np.ndarray, is_text: np.ndarray) -> np.ndarray:
    try:
        s = pd.Series(text, dtype="string")
        hit = s.str.startswith(_GUARD).fillna(False).to_numpy(dtype=bool)
    except UnicodeEncodeError:  # lone surrogates: one by one
        hit = np.array([isinstance(t, str) and t.startswith(_GUARD) for t in text], dtype=bool)
    hit &= is_text
    if hit.any():
        text = text.copy()
        text[hit] = "'" + text[hit]
    return text


# --------------------------------------------------------------------------- CSV


def write_csv(clean: CleanTable, tmp: Path, options: ExportOptions, progress: Progress) -> Counts:
    """UTF-8 CSV (optional BOM), ISO 8601 dates, unresolved cells as their raw text. The text of
    each column is built a chunk of rows at a time, so memory stays flat."""
    layout = flat_layout(clean, options, beside=True)
    names = [c.name for c in layout]
    if options.csv_formula_guard:
        names = list(_guard(np.array(names, dtype=object), np.ones(len(names), dtype=bool)))
    n = clean.raw.n_rows
    with open(tmp, "w", encoding="utf-8", newline="", errors="replace") as fh:
        if options.bom:
            fh.write("\ufeff")
        for start in range(0, max(n, 1), _CHUNK):
            rows = slice(start, min(start + _CHUNK, n))
            data = {j: _column_text(col.take(rows), options) for j, col in enumerate(layout)}
            frame = pd.DataFrame(data, dtype=object)
            frame.columns = names
            frame.to_csv(
                fh,
                index=False,
                header=start == 0,
                sep=options.delimiter,
                lineterminator=options.line_terminator,
                quoting=csv.QUOTE_MINIMAL,
            )
            progress.report(rows.stop, n, "Writing rows")
    return n, len(layout), *_tally(layout), _notes(layout, options)


def _tally(layout: list[FlatColumn]) -> tuple[int, int]:
    dates = sum(int(c.dates.ok.sum()) for c in layout if c.dates is not None)
    unresolved = sum(c.dates.unresolved for c in layout if c.dates is not None)
    return dates, unresolved


def _notes(layout: list[FlatColumn], options: ExportOptions) -> list[str]:
    notes = []
    for c in layout:
        if c.dates is not None and c.dates.aware:
            notes.append(zone_note(options, c.name))
        if c.dates is not None and c.dates.mixed:
            notes.append(
                f'Column "{c.name}" mixes times with and without a UTC offset; those without '
                "one are written as read."
            )
    return notes


# --------------------------------------------------------------------------- Parquet


def write_parquet(
    clean: CleanTable, tmp: Path, options: ExportOptions, progress: Progress
) -> Counts:
    """Parquet with date32 (date-only columns) and timestamp[us] types; aware columns carry the
    chosen zone. A typed column cannot hold unresolved text, so its raw copy is always kept."""
    layout = flat_layout(clean, options, beside=True, force_raw=True)
    arrays = []
    notes = _notes(layout, options)
    for j, col in enumerate(layout):
        arrays.append(_arrow(col, options, notes))
        progress.report(j + 1, len(layout), f'Prepared column "{col.name}"')
    schema = pa.schema(
        [pa.field(c.name, a.type) for c, a in zip(layout, arrays)],
        metadata={"datemend.notes": "\n".join(notes)} if notes else None,
    )
    pq.write_table(pa.Table.from_arrays(arrays, schema=schema), tmp)
    return clean.raw.n_rows, len(layout), *_tally(layout), notes


def _arrow(col: FlatColumn, options: ExportOptions, notes: list[str]) -> pa.Array:
    if col.series is not None:
        arr = pa.Array.from_pandas(col.series)
        if isinstance(arr, pa.ChunkedArray):
            arr = arr.combine_chunks()
        return arr.cast(pa.string()) if pa.types.is_large_string(arr.type) else arr
    assert col.values is not None and col.kinds is not None
    if col.dates is None:
        return _raw_arrow(col, notes)
    d = col.dates
    null = ~d.ok
    if d.date_only:
        return pa.array(d.local.astype("datetime64[D]"), type=pa.date32(), mask=null)
    if d.aware and not d.mixed:
        utc = d.col.utc().astype("datetime64[us]")
        zone = "UTC" if options.zone.upper() == "UTC" else options.zone
        return pa.array(utc, type=pa.timestamp("us", tz=zone), mask=null)
    return pa.array(d.local, type=pa.timestamp("us"), mask=null)


_ARROW_KINDS = {
    CellKind.TEXT: pa.string(),
    CellKind.ERROR: pa.string(),
    CellKind.INT: pa.int64(),
    CellKind.FLOAT: pa.float64(),
    CellKind.BOOL: pa.bool_(),
    CellKind.DATE: pa.date32(),
    CellKind.DATETIME: pa.timestamp("us"),
    CellKind.TIME: pa.time64("us"),
}


def _timestamp_type(values: np.ndarray) -> pa.DataType | None:
    """timestamp[us], with the first value's zone when values carry one: a naive type would
    silently turn 12:00+02:00 into 10:00 with no offset (other zones keep their instants).
    None when naive and zoned values are mixed: one type cannot hold both as read."""
    aware = np.fromiter((getattr(v, "tzinfo", None) is not None for v in values), bool, len(values))
    if not aware.any():
        return pa.timestamp("us")
    if not aware.all():
        return None
    return pa.timestamp("us", tz=pa.array(values[:1]).type.tz)


def _naive_micros(values: np.ndarray) -> np.ndarray:
    """Naive date and datetime objects (None for empty) as datetime64[us]; dates at midnight."""
    out = np.full(len(values), np.datetime64("NaT"), dtype="datetime64[us]")
    ok = np.fromiter((v is not None for v in values), bool, len(values))
    out[ok] = np.asarray(list(values[ok]), dtype="datetime64[us]")
    return out


def _raw_arrow(col: FlatColumn, notes: list[str]) -> pa.Array:
    """A raw column in its own type when every cell has one kind (ints with floats: float64),
    else as text, with a note."""
    assert col.values is not None and col.kinds is not None
    if isinstance(col.values, pa.Array):  # text cells, nulls for empty, whitespace kept
        return col.values.cast(pa.string()) if col.values.type != pa.string() else col.values
    kinds = set(np.unique(col.kinds).tolist()) - {CellKind.EMPTY}
    empty = col.kinds == CellKind.EMPTY
    spaces = np.zeros(len(empty), dtype=bool)  # whitespace-only cells, kept as text
    if empty.any():
        spaces[empty] = blank_text(col.values[empty])
    if kinds == {CellKind.INT, CellKind.FLOAT}:
        kinds = {CellKind.FLOAT}
    if kinds == {CellKind.DATE, CellKind.DATETIME}:
        kinds = {CellKind.DATETIME}  # a date is its midnight; zoned values are checked below
    if len(kinds) <= 1:
        kind = kinds.pop() if kinds else CellKind.TEXT
        typ = _ARROW_KINDS.get(CellKind(kind))
        if typ is not None:
            if kind in (CellKind.TEXT, CellKind.ERROR):
                empty = empty & ~spaces
            elif spaces.any():
                notes.append(
                    f'Column "{col.name}": {int(spaces.sum())} cell(s) held only spaces; a '
                    f"{typ} column cannot hold text, so they are written as nulls."
                )
            values = np.where(empty, None, col.values)
            if kind == CellKind.DATETIME:
                typ = _timestamp_type(values[~empty])
                if typ is not None and typ.tz is None:
                    values = _naive_micros(values)
            try:
                if typ is not None:
                    return pa.array(values, type=typ, from_pandas=True)
            except (pa.ArrowInvalid, pa.ArrowTypeError, OverflowError, TypeError):
                pass
    if kinds and kinds != {CellKind.TEXT, CellKind.ERROR}:
        notes.append(f'Column "{col.name}" mixes kinds of cells; it is written as text.')
    text = raw_text(col.values, col.kinds)
    return pa.array(np.where(empty & ~spaces, None, text), type=pa.string())


def python_values(series: pd.Series, options: ExportOptions) -> tuple[list[object], str | None]:
    """A derived column as Python values for a workbook (None for gaps) and a number format."""
    if pd.api.types.is_datetime64_any_dtype(series.dtype):
        a = series.to_numpy(dtype="datetime64[us]")
        ok = ~np.isnat(a)
        if ok.any() and (a[ok] == a[ok].astype("datetime64[D]")).all():
            return list(a.astype("datetime64[D]").astype(object)), options.date_format
        return list(a.astype(object)), options.datetime_format
    values = series.astype(object).where(series.notna(), None).tolist()
    out: list[object] = []
    for v in values:
        if isinstance(v, np.generic):
            v = v.item()
        if isinstance(v, pd.Timestamp):
            v = v.to_pydatetime()
        out.append(v if not isinstance(v, float) or v == v else None)
    fmt = options.date_format if any(isinstance(v, _dt.date) for v in out) else None
    return out, fmt
