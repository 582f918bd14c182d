"""RawTable: the cells of one sheet exactly as the file holds them, with the kind of each cell.

Nothing here interprets a value as a date; that is the engine's job. A reader fills a RawTable,
the engine reads it, and nothing ever writes to it afterwards (parsed values live beside it in a
CleanTable), so every fix can be undone and every export can include the original text.
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from enum import IntEnum
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa

__all__ = [
    "CellKind",
    "DatemendError",
    "RawColumn",
    "RawTable",
    "ReadError",
    "SourceFacts",
    "kinds_of",
    "object_cells",
]


class DatemendError(Exception):
    """Base of every error a user can cause; ``str(err)`` is one sentence fit to show them."""


class ReadError(DatemendError):
    """A file could not be read as a table. The message names the file (and sheet if any)."""

    def __init__(self, message: str, path: str | Path | None = None) -> None:
        super().__init__(message)
        self.path = None if path is None else str(path)


class CellKind(IntEnum):
    """What a cell held in the source file, before any interpretation."""

    EMPTY = 0
    TEXT = 1
    INT = 2
    FLOAT = 3
    DATE = 4
    DATETIME = 5
    TIME = 6
    BOOL = 7
    ERROR = 8  # a spreadsheet error value such as "#N/A"; the value is that text


@dataclass(frozen=True)
class SourceFacts:
    """Where a table came from. Information only: nothing is locked to these facts."""

    path: str | None = None
    format: str = "dataframe"  # "csv", "xlsx", "xlsm", "ods", "parquet" or "dataframe"
    sheet: str | None = None
    sheets: tuple[str, ...] = ()
    header_row: int = 1  # 1-based row number of the header in the sheet or file
    encoding: str | None = None
    delimiter: str | None = None
    date_system: int = 1900  # 1900 or 1904 (spreadsheet serial date system)
    sha256: str | None = None
    notes: tuple[str, ...] = ()  # renamed headers, merged or hidden cells, anything worth saying
    #: (column name, 1-based sheet column) of each column read from a workbook, so a writer that
    #: keeps the workbook finds a renamed column even where empty columns were left out.
    column_at: tuple[tuple[str, int], ...] = ()

    @property
    def file_name(self) -> str | None:
        return None if self.path is None else Path(self.path).name

    def where(self) -> str:
        """Short description for messages: 'roster.xlsx, sheet "Members"'."""
        name = self.file_name or "the table"
        return f'{name}, sheet "{self.sheet}"' if self.sheet else name


#: Cell kinds an Arrow-held column may have: text, and empty (a null, or whitespace-only text).
_ARROW_KINDS = np.zeros(len(CellKind), dtype=bool)
_ARROW_KINDS[[CellKind.EMPTY, CellKind.TEXT]] = True


class RawColumn:
    """One column: original values and their kinds (int8 array of CellKind).

    ``values`` holds Python objects as read: ``str`` for text and error cells, ``int``, ``float``,
    ``bool``, ``datetime.date``, ``datetime.datetime``, ``datetime.time``, and ``None`` for empty.
    A whitespace-only cell ("   ", a tab, a no-break space) is kind EMPTY but keeps its string,
    so exports can write it back exactly. CSV cells are always text (or empty): nothing is coerced.

    A column of text cells only may be held as an Arrow string array instead (``values`` given as
    a ``pyarrow`` array, empty cells as nulls); the CSV reader holds every column so. That takes
    about a quarter of the memory of one Python object per cell. Such a column's
    ``arrow`` is that array; ``values`` then builds the object array on first use and keeps it,
    so hot paths (parsing, replay, export) use ``arrow``, ``take`` and ``value`` instead.
    A RawColumn never changes once made.
    """

    __slots__ = ("__weakref__", "_arrow", "_counts", "_values", "kinds", "name")

    name: str
    kinds: np.ndarray

    def __init__(
        self, name: str, values: np.ndarray | pa.Array | pa.ChunkedArray, kinds: np.ndarray
    ) -> None:
        arrow: pa.Array | None = None
        if isinstance(values, pa.ChunkedArray):
            values = values.combine_chunks() if values.num_chunks != 1 else values.chunk(0)
        if isinstance(values, pa.Array):
            if not (pa.types.is_string(values.type) or pa.types.is_large_string(values.type)):
                raise TypeError(f"an Arrow-held column holds strings, not {values.type}")
            if len(kinds) and not bool(_ARROW_KINDS[kinds].all()):
                raise ValueError("an Arrow-held column may only hold text and empty cells")
            arrow, values = values, None
        elif len(values) != len(kinds):
            raise ValueError(f"column {name!r}: {len(values)} values but {len(kinds)} kinds")
        if arrow is not None and len(arrow) != len(kinds):
            raise ValueError(f"column {name!r}: {len(arrow)} values but {len(kinds)} kinds")
        object.__setattr__(self, "name", name)
        object.__setattr__(self, "kinds", kinds)
        object.__setattr__(self, "_arrow", arrow)
        object.__setattr__(self, "_values", values)
        object.__setattr__(self, "_counts", None)

    def kind_counts(self) -> np.ndarray:
        """How many cells of each kind (indexed by ``CellKind``), counted once (read-only)."""
        if self._counts is None:
            counts = count_kinds(self.kinds)
            counts.setflags(write=False)
            object.__setattr__(self, "_counts", counts)
        return self._counts

    def __setattr__(self, key: str, value: object) -> None:
        raise AttributeError(f"a RawColumn never changes (tried to set {key!r})")

    def __repr__(self) -> str:
        held = "arrow" if self._arrow is not None else "objects"
        return f"RawColumn({self.name!r}, {len(self):,} cells, {held})"

    def __reduce__(self) -> tuple[object, ...]:  # pickling (Dask, worker processes)
        return (RawColumn, (self.name, self._arrow if self._arrow is not None else self._values,
                            self.kinds))  # fmt: skip

    def __len__(self) -> int:
        return len(self.kinds)

    @property
    def values(self) -> np.ndarray:
        """The cells as an object array (built once, then kept, for an Arrow-held column)."""
        if self._values is None:
            assert self._arrow is not None
            object.__setattr__(self, "_values", self._arrow.to_numpy(zero_copy_only=False))
        return self._values

    @property
    def arrow(self) -> pa.Array | None:
        """The Arrow string array holding the cells (nulls for empty), or None if held as
        Python objects."""
        return self._arrow

    @property
    def materialised(self) -> bool:
        """True once an object array of the cells exists (always, unless Arrow-held)."""
        return self._values is not None

    def value(self, i: int) -> object:
        """The value of cell ``i`` (0-based), without building the object array."""
        if self._values is not None:
            return self._values[i]
        assert self._arrow is not None
        return self._arrow[int(i)].as_py()

    def take(self, rows: np.ndarray) -> RawColumn:
        """A column of the given positions (an integer array, or a boolean mask)."""
        rows = np.asarray(rows)
        if rows.dtype == bool:
            rows = np.flatnonzero(rows)
        if self._values is None:
            assert self._arrow is not None
            return RawColumn(self.name, self._arrow.take(pa.array(rows, pa.int64())),
                             self.kinds[rows])  # fmt: skip
        return RawColumn(self.name, self._values[rows], self.kinds[rows])

    def text(self) -> pd.Series:
        """Each cell as text (None for empty), for finding values. Non-text cells are turned to
        text once per distinct value, not once per cell."""
        kinds = self.kinds
        empty = kinds == CellKind.EMPTY
        if self._values is None:
            assert self._arrow is not None
            out = pd.Series(self._arrow.to_numpy(zero_copy_only=False), dtype=object)
            if empty.any():
                out[empty] = None
            return out
        out = pd.Series(self.values, dtype=object)
        if empty.any():  # whitespace-only cells keep their string in ``values``
            out[empty] = None
        for kind in (
            CellKind.INT,
            CellKind.FLOAT,
            CellKind.DATE,
            CellKind.DATETIME,
            CellKind.TIME,
            CellKind.BOOL,
        ):
            # one kind at a time: Python holds True == 1 == 1.0, so factorizing across kinds
            # would merge a boolean with a number
            hit = kinds == kind
            if hit.any():
                codes, uniques = pd.factorize(pd.Series(self.values[hit], dtype=object))
                out[hit] = np.array([_as_text(v) for v in uniques], dtype=object)[codes]
        return out


def object_cells(
    values: np.ndarray | pa.Array, rows: np.ndarray | slice | None = None
) -> np.ndarray:
    """Cells (all, or the given positions) as an object array, whether ``values`` is a
    RawColumn's object array or its Arrow string array; only those cells become objects."""
    if isinstance(values, pa.Array):
        if rows is not None:
            if isinstance(rows, slice):
                values = values[rows]
            else:
                rows = np.asarray(rows)
                rows = np.flatnonzero(rows) if rows.dtype == bool else rows
                values = values.take(pa.array(rows, pa.int64()))
        return values.to_numpy(zero_copy_only=False)
    return values if rows is None else values[rows]


def _as_text(v: object) -> str:
    if isinstance(v, bool):
        return "TRUE" if v else "FALSE"
    if isinstance(v, float) and v.is_integer():
        return str(int(v))
    if isinstance(v, _dt.datetime | _dt.date | _dt.time):
        return v.isoformat()
    return str(v)


@dataclass(frozen=True, eq=False)
class RawTable:
    """The cells of one sheet: columns in file order, each with its values and kinds.

    ``source_rows`` gives, for each data row, its 1-based row number in the file or sheet, so a
    message can say "row 214".
    """

    columns: tuple[RawColumn, ...]
    facts: SourceFacts = field(default_factory=SourceFacts)
    source_rows: np.ndarray | None = None

    def __post_init__(self) -> None:
        lengths = {len(c) for c in self.columns}
        if len(lengths) > 1:
            raise ValueError(f"columns have different lengths: {sorted(lengths)}")
        names = [c.name for c in self.columns]
        if len(set(names)) != len(names):
            raise ValueError("column names must be unique")
        if self.source_rows is None:
            start = self.facts.header_row + 1
            object.__setattr__(
                self, "source_rows", np.arange(start, start + self.n_rows, dtype=np.int64)
            )

    @property
    def n_rows(self) -> int:
        return len(self.columns[0]) if self.columns else 0

    @property
    def names(self) -> list[str]:
        return [c.name for c in self.columns]

    def __iter__(self) -> Iterator[RawColumn]:
        return iter(self.columns)

    def __contains__(self, name: object) -> bool:
        return any(c.name == name for c in self.columns)

    def column(self, name: str) -> RawColumn:
        for c in self.columns:
            if c.name == name:
                return c
        raise KeyError(f'{self.facts.where()} has no column "{name}"')

    def to_dataframe(self) -> pd.DataFrame:
        """The raw values as an object DataFrame (for notebooks and export of untouched cells)."""
        return pd.DataFrame({c.name: pd.Series(c.values, dtype=object) for c in self.columns})

    def take(self, rows: np.ndarray) -> RawTable:
        """A table with only the given row positions (for partitions and previews)."""
        cols = tuple(c.take(rows) for c in self.columns)
        assert self.source_rows is not None
        return RawTable(cols, self.facts, self.source_rows[rows])

    @classmethod
    def from_dataframe(
        cls, df: pd.DataFrame, facts: SourceFacts | None = None, *, text_only: bool = False
    ) -> RawTable:
        """Wrap a pandas DataFrame. Kinds come from each value's Python type.

        With ``text_only`` every non-empty value is taken as text (how a CSV is read).
        """
        cols = []
        seen: set[str] = set()
        for i, name in enumerate(df.columns):
            label = str(name) if str(name).strip() else f"column {i + 1}"
            while label in seen:
                label = f"{label} ({i + 1})"
            seen.add(label)
            values = _object_values(df.iloc[:, i])
            kinds = kinds_of(values, text_only=text_only)
            if text_only:  # "" has no value; whitespace-only text is kept (kind EMPTY)
                gone = (kinds == CellKind.EMPTY) & pd.Series(values, dtype=object).isin([""])
                values = np.where(gone.to_numpy(), None, values).astype(object)
            cols.append(RawColumn(label, values, kinds))
        return cls(tuple(cols), facts or SourceFacts())


def _object_values(series: pd.Series) -> np.ndarray:
    """Values as Python objects, missing values as None, pandas timestamps as datetimes."""
    if pd.api.types.is_datetime64_any_dtype(series.dtype):
        out = np.array(series.dt.to_pydatetime(), dtype=object)
        out[series.isna().to_numpy()] = None
        return out
    values = series.to_numpy(dtype=object, na_value=None)
    mask = pd.isna(values)
    if mask.any():
        values = values.copy()
        values[mask] = None
    return values


def count_kinds(kinds: np.ndarray) -> np.ndarray:
    """How many of ``kinds`` (int8 ``CellKind`` values) are of each kind, as int64 indexed by
    ``CellKind``. Two cells at a time: the kinds viewed as 16-bit pairs are counted by one
    ``bincount`` over half as many values (a third of the time of one compare per kind, and
    bincount over the cells widens each to 64 bits first), then the pairs' counts are summed
    per byte."""
    k = len(CellKind)
    kinds = np.ascontiguousarray(kinds, dtype=np.int8)
    even = len(kinds) - len(kinds) % 2
    pairs = np.bincount(kinds[:even].view(np.uint16), minlength=1 << 16).reshape(256, 256)
    counts = pairs.sum(axis=0)[:k] + pairs.sum(axis=1)[:k]  # either byte of a pair
    if even < len(kinds) and 0 <= kinds[-1] < k:
        counts[kinds[-1]] += 1
    return counts.astype(np.int64)


def kinds_of(values: Sequence[object] | np.ndarray, *, text_only: bool = False) -> np.ndarray:
    """The CellKind of each value (int8 array). Empty strings and None are EMPTY."""
    arr = np.asarray(values, dtype=object)
    kinds = np.full(len(arr), CellKind.TEXT, dtype=np.int8)
    if len(arr) == 0:
        return kinds
    types = pd.Series(arr, dtype=object).map(type)
    is_none = np.fromiter((v is None for v in arr), dtype=bool, count=len(arr))
    is_str = (types == str).to_numpy()  # noqa: E721 (elementwise, not a type check)
    if is_str.any():
        blank = pd.Series(arr[is_str], dtype=object).str.strip().eq("").to_numpy()
        idx = np.flatnonzero(is_str)[blank]
        kinds[idx] = CellKind.EMPTY
    kinds[is_none] = CellKind.EMPTY
    if text_only:
        return kinds
    table = {
        bool: CellKind.BOOL,
        np.bool_: CellKind.BOOL,
        int: CellKind.INT,
        np.int64: CellKind.INT,
        float: CellKind.FLOAT,
        np.float64: CellKind.FLOAT,
        _dt.datetime: CellKind.DATETIME,
        pd.Timestamp: CellKind.DATETIME,
        _dt.date: CellKind.DATE,
        _dt.time: CellKind.TIME,
    }
    for typ, kind in table.items():
        hit = (types == typ).to_numpy()
        if hit.any():
            kinds[hit] = kind
    floats = kinds == CellKind.FLOAT
    if floats.any():
        nan = pd.isna(pd.Series(arr[floats], dtype=object)).to_numpy()
        kinds[np.flatnonzero(floats)[nan]] = CellKind.EMPTY
    return kinds
