"""The one table-model adapter: the cells of one column, as written beside what they read as.

Rows are positions into the core's numpy arrays through an index array (``_rows``), so ``data()``
does constant work per cell and a filter is one numpy expression, not a proxy model walking a
million rows. The model never changes the data: an edit of a parsed cell is turned into the
``hand_set_requested`` signal, and the window records it as a fix step.

Signals:
    hand_set_requested(int, str): row position in the sheet, text the user typed.
    rows_changed(): the filter or the data changed (the row count may differ).
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Callable
from dataclasses import dataclass, field
from enum import Enum

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pa_compute
from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt, Signal
from PySide6.QtGui import QColor, QFont

from ..core.clean import NAIVE, CellState, ParsedColumn
from ..core.table import CellKind, RawColumn
from .look import state_look

__all__ = ["CellsModel", "CellsSource", "Column", "FindIndex", "RowFilter", "format_value"]

_Index = QModelIndex | QPersistentModelIndex


class Column(Enum):
    """The columns of the cells table, in order."""

    ROW = "Row"
    KEY = "Key"
    RAW = "As written"
    READS = "Reads as"
    STATE = "State"
    PATTERN = "Pattern"
    NOTE = "Note"


COLUMNS: tuple[Column, ...] = tuple(Column)

_R = Qt.ItemDataRole
_DISPLAY, _EDIT, _USER = int(_R.DisplayRole.value), int(_R.EditRole.value), int(_R.UserRole.value)
_TOOLTIP, _FOREGROUND = int(_R.ToolTipRole.value), int(_R.ForegroundRole.value)
_ACCESSIBLE, _FONT = int(_R.AccessibleTextRole.value), int(_R.FontRole.value)
_ROLES_USED = frozenset({_DISPLAY, _EDIT, _USER, _TOOLTIP, _FOREGROUND, _ACCESSIBLE, _FONT})
_LOOKS = tuple(state_look(s) for s in sorted(CellState))  # indexed by the int8 state
_STATE_COLOURS = tuple(QColor(look.colour) for look in _LOOKS)
_MANUAL = int(CellState.MANUAL)
_FLAGS_SHOWN = Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable  # made once, not per call
_FLAGS_EDIT = _FLAGS_SHOWN | Qt.ItemFlag.ItemIsEditable
#: Columns that show a reading's result: in italics while it is only a preview.
_READ_COLUMNS = frozenset({Column.READS, Column.STATE, Column.PATTERN, Column.NOTE})
PREVIEW_HEADER = "Reads as (preview)"

_HEADER_TIPS = {
    Column.ROW: "Row number in the file or sheet (the header is above the first).",
    Column.KEY: "The key column: its value finds this row again for cells set by hand.",
    Column.RAW: "The cell exactly as the file holds it; never changed.",
    Column.READS: "The date it becomes (ISO 8601). Double-click or F2 to set it by hand.",
    Column.STATE: "✓ read · ○ blank · ✗ not read · ? unclear · ✎ set by hand",
    Column.PATTERN: "The way of writing dates that read this cell.",
    Column.NOTE: "Why a cell was not read, is unclear, or is blank.",
}


@dataclass(frozen=True)
class RowFilter:
    """Which rows to show. ``mode`` is "all", "problems", "pattern", "range" or "rule".

    ``pattern`` is an index into ``ParsedColumn.patterns``; ``lo``/``hi`` bound the parsed value
    (``lo`` included, ``hi`` excluded); ``rule`` names a rule whose breaking rows are shown;
    ``find`` keeps rows whose raw text or ISO date contains it (case-insensitive);
    ``problems_first`` puts problems on top. Problems are cells not read or unclear, and rows
    that break a rule.
    """

    mode: str = "all"
    pattern: int | None = None
    lo: np.datetime64 | None = None
    hi: np.datetime64 | None = None
    find: str = ""
    problems_first: bool = False
    rule: str | None = None

    def describe(self) -> str:
        """Short words for the filter, shown above the table."""
        parts = {
            "all": "all cells",
            "problems": "cells needing a look",
            "pattern": "one pattern group",
            "range": f"dates from {self.lo} to before {self.hi}",
            "rule": f'rows breaking "{self.rule}"',
        }
        text = parts.get(self.mode, self.mode)
        if self.find:
            text += f', containing "{self.find}"'
        if self.problems_first:
            text += ", problems first"
        return text


@dataclass(frozen=True, eq=False)
class CellsSource:
    """What the model shows: a raw column, its parsed twin (or None), row numbers and keys.
    With ``preview`` set, ``parsed`` is what a reading not used yet would give: shown in italics
    under "Reads as (preview)", and not editable (nothing is in the fix log for it yet)."""

    raw: RawColumn
    parsed: ParsedColumn | None
    source_rows: np.ndarray
    keys: np.ndarray | RawColumn | None = None  # the key of each row (a column, or values)
    key_name: str | None = None
    rule_hits: dict[str, np.ndarray] = field(default_factory=dict)  # rule label -> rows breaking it
    #: set when ``parsed`` is only a preview (a reading not used yet): its name, "reading 2"
    preview: str | None = None

    def problems(self) -> np.ndarray | None:
        """Rows needing a look: cells not read or unclear, and rows breaking a rule."""
        mask = None if self.parsed is None else self.parsed.problems()
        for hits in self.rule_hits.values():
            mask = hits.copy() if mask is None else mask | hits
        return mask


_NAT = np.iinfo(np.int64).min
_EPOCH = _dt.datetime(1970, 1, 1)


def format_value(
    value: np.datetime64 | int, has_time: bool, offset_min: int, date_only: bool
) -> str:
    """ISO 8601 text of one parsed value: date, or date-time with an offset when one was written.

    ``value`` is a datetime64 or its int64 microseconds (the fast path the model uses); Python's
    datetime does the calendar work (years 1–9999), about a microsecond a cell.
    """
    us = int(value) if isinstance(value, int) else int(np.datetime64(value, "us").view(np.int64))
    if us == _NAT:
        return ""
    when = _EPOCH + _dt.timedelta(microseconds=us)
    if date_only or not has_time:
        return when.date().isoformat()
    text = when.isoformat(timespec="microseconds" if when.microsecond else "seconds")
    if offset_min != NAIVE:
        sign = "+" if offset_min >= 0 else "-"
        h, m = divmod(abs(int(offset_min)), 60)
        text += "Z" if offset_min == 0 else f"{sign}{h:02d}:{m:02d}"
    return text


#: How a cell holding only white space is shown: one mark per character, so it is told apart
#: from a truly empty cell (it is still read as blank, and written back as it was).
SPACE_MARK = "\u2423"  # OPEN BOX, the usual printed sign for a space


def _raw_text(value: object, kind: int) -> str:
    if kind == CellKind.EMPTY or value is None:
        return SPACE_MARK * len(value) if isinstance(value, str) else ""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    if hasattr(value, "isoformat"):
        return value.isoformat()  # type: ignore[no-any-return]
    return str(value)


def _space_hint(value: object, kind: int) -> str | None:
    if kind != CellKind.EMPTY or not isinstance(value, str) or not value:
        return None
    n = len(value)
    return (
        f"Only white space ({n} character{'s' if n != 1 else ''}): read as blank, "
        "and written back as it was."
    )


def _distinct_text(raw: RawColumn) -> tuple[np.ndarray, np.ndarray]:
    """(code of each cell, -1 for empty; distinct texts), hashed in Arrow for a column held as
    Arrow strings (no Python object per cell), else through pandas."""
    if raw.arrow is None:
        return pd.factorize(raw.text(), use_na_sentinel=True)
    empty = raw.kinds == CellKind.EMPTY  # whitespace-only cells count as empty, as text() does
    arr = pa_compute.if_else(pa.array(empty), pa.scalar(None, pa.string()), raw.arrow)
    enc = pa_compute.dictionary_encode(arr)
    codes = pa_compute.fill_null(enc.indices, -1).to_numpy(zero_copy_only=False)
    return codes.astype(np.int64), enc.dictionary.to_numpy(zero_copy_only=False)


class FindIndex:
    """The distinct values of one column, lower-cased, and its distinct ISO dates: built once per
    column, so each search runs over the distinct values only and maps back with one take."""

    def __init__(
        self, raw: RawColumn, parsed: ParsedColumn | None, old: FindIndex | None = None
    ) -> None:
        self.raw, self.parsed = raw, parsed
        if old is not None and old.raw is raw:
            self.codes, self.lowered = old.codes, old.lowered
        else:
            codes, uniques = _distinct_text(raw)
            self.codes = codes
            self.lowered = pd.Series(np.asarray(uniques, dtype=object), dtype=object).str.lower()
        self.iso: pd.Series | None = None
        self.inverse: np.ndarray | None = None
        if parsed is not None:
            days = parsed.value.astype("datetime64[D]")
            uniq, inverse = np.unique(days, return_inverse=True)
            self.iso = pd.Series(np.datetime_as_string(uniq, unit="D"), dtype=object)
            self.inverse = inverse.reshape(-1)

    def fits(self, raw: RawColumn, parsed: ParsedColumn | None) -> bool:
        return self.raw is raw and self.parsed is parsed

    def mask(self, needle: str) -> np.ndarray:
        """Rows whose raw text or ISO date contains ``needle`` (case-insensitive)."""
        needle = needle.lower()
        hit_u = self.lowered.str.contains(needle, regex=False).to_numpy(dtype=bool)
        hit = np.append(hit_u, False)[self.codes]  # code -1 (empty cell) takes the False
        p = self.parsed
        if p is not None and self.iso is not None and self.inverse is not None:
            in_iso = self.iso.str.contains(needle, regex=False).to_numpy(dtype=bool)
            hit = hit | (in_iso[self.inverse] & ~np.isnat(p.value))
        return hit


class CellsModel(QAbstractTableModel):
    """Rows of one column through an index array; see the module docstring for the signals."""

    hand_set_requested = Signal(int, str)
    rows_changed = Signal()

    def __init__(self, parent: object | None = None) -> None:
        super().__init__(parent)  # type: ignore[arg-type]
        self._source: CellsSource | None = None
        self._filter = RowFilter()
        self._rows = np.zeros(0, dtype=np.int64)
        self._columns: tuple[Column, ...] = COLUMNS
        self._finder: FindIndex | None = None
        self._found: tuple[str, FindIndex, np.ndarray] | None = None  # needle, index, mask
        self._value_us = np.zeros(0, dtype=np.int64)
        self._italic = QFont()
        self._italic.setItalic(True)

    # -- what is shown ---------------------------------------------------------------------
    @property
    def source(self) -> CellsSource | None:
        return self._source

    @property
    def row_filter(self) -> RowFilter:
        return self._filter

    @property
    def rows(self) -> np.ndarray:
        """Sheet row positions shown, in display order (read-only view)."""
        view = self._rows.view()
        view.flags.writeable = False
        return view

    def columns(self) -> tuple[Column, ...]:
        return self._columns

    def set_source(self, source: CellsSource | None, row_filter: RowFilter | None = None) -> None:
        """Show another column (or the same column after a fix)."""
        self.beginResetModel()
        if source is None or self._source is None or source.raw is not self._source.raw:
            self._finder = None
        self._found = None
        self._source = source
        self._value_us = (
            np.zeros(0, dtype=np.int64)
            if source is None or source.parsed is None
            else source.parsed.value.astype("datetime64[us]", copy=False).view(np.int64)
        )
        if source is None:
            self._columns = COLUMNS
        else:
            cols = list(COLUMNS)
            if source.keys is None:
                cols.remove(Column.KEY)
            self._columns = tuple(cols)
        if row_filter is not None:
            self._filter = row_filter
        self._rows = self._select()
        self.endResetModel()
        self.rows_changed.emit()

    def set_filter(self, row_filter: RowFilter) -> None:
        self.beginResetModel()
        self._filter = row_filter
        self._rows = self._select()
        self.endResetModel()
        self.rows_changed.emit()

    def _select(self) -> np.ndarray:
        src, f = self._source, self._filter
        if src is None:
            return np.zeros(0, dtype=np.int64)
        n = len(src.raw)
        p = src.parsed
        problems = src.problems()
        if f.mode == "problems" and problems is not None:
            mask = problems
        elif f.mode == "rule" and f.rule in src.rule_hits:
            mask = src.rule_hits[f.rule]
        elif f.mode == "pattern" and p is not None and f.pattern is not None:
            mask = p.pattern == f.pattern
        elif f.mode == "range" and p is not None:
            mask = ~np.isnat(p.value)
            if f.lo is not None:
                mask &= p.value >= f.lo
            if f.hi is not None:
                mask &= p.value < f.hi
        else:
            mask = None
        if f.find:
            hit = self._find_mask(f.find)
            mask = hit if mask is None else mask & hit
        rows = np.arange(n, dtype=np.int64) if mask is None else np.flatnonzero(mask)
        if f.problems_first and problems is not None and len(rows):
            rows = rows[np.argsort(~problems[rows], kind="stable")]
        return rows.astype(np.int64)

    def _find_mask(self, needle: str) -> np.ndarray:
        """Rows whose raw text or ISO date contains ``needle`` (a mask found in a job is reused)."""
        assert self._source is not None
        got = self._found
        if (
            got is not None
            and got[0] == needle.lower()
            and got[1].fits(self._source.raw, self._source.parsed)
        ):
            return got[2]
        return self.finder().mask(needle)

    def finder(self) -> FindIndex:
        """The find index of the shown column (built on first use; ``find_work`` builds it off
        the GUI thread)."""
        assert self._source is not None
        src = self._source
        if self._finder is None or not self._finder.fits(src.raw, src.parsed):
            self._finder = FindIndex(src.raw, src.parsed, self._finder)
        return self._finder

    def find_work(self, needle: str) -> Callable[[object], tuple[FindIndex, np.ndarray]]:
        """A pure function for a worker thread: the find index (reused when it still fits) and
        the rows matching ``needle``; hand its result to ``take_found``."""
        assert self._source is not None
        raw, parsed, old = self._source.raw, self._source.parsed, self._finder

        def work(_progress: object) -> tuple[FindIndex, np.ndarray]:
            index = (
                old if old is not None and old.fits(raw, parsed) else FindIndex(raw, parsed, old)
            )
            return index, index.mask(needle)

        return work

    def needs_find_work(self, needle: str) -> bool:
        """True when finding ``needle`` would first have to build the index of many distinct
        values (so the pane runs it as a job)."""
        src = self._source
        if src is None or not needle:
            return False
        f = self._finder
        return f is None or not f.fits(src.raw, src.parsed)

    def take_found(self, index: FindIndex, needle: str, mask: np.ndarray) -> bool:
        """Keep a find result made in a job (False when the column changed meanwhile)."""
        src = self._source
        if src is None or not index.fits(src.raw, src.parsed):
            return False
        self._finder = index
        self._found = (needle.lower(), index, mask)
        return True

    # -- Qt model interface ----------------------------------------------------------------
    def rowCount(self, parent: _Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: _Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self._columns)

    def headerData(
        self, section: int, orientation: Qt.Orientation, role: int = Qt.ItemDataRole.DisplayRole
    ) -> object:
        if (
            role == Qt.ItemDataRole.ToolTipRole
            and orientation == Qt.Orientation.Horizontal
            and 0 <= section < len(self._columns)
        ):
            return _HEADER_TIPS.get(self._columns[section])
        if role != Qt.ItemDataRole.DisplayRole:
            return None
        if orientation == Qt.Orientation.Horizontal:
            if 0 <= section < len(self._columns):
                col = self._columns[section]
                if col is Column.KEY and self._source is not None and self._source.key_name:
                    return self._source.key_name
                if col is Column.READS and self.previewing:
                    return PREVIEW_HEADER
                return col.value
            return None
        return None

    def flags(self, index: _Index) -> Qt.ItemFlag:
        if not index.isValid():
            return Qt.ItemFlag.NoItemFlags
        if (
            self._columns[index.column()] is Column.READS
            and self._source is not None
            and self._source.parsed is not None
            and self._source.preview is None
        ):
            return _FLAGS_EDIT
        return _FLAGS_SHOWN

    @property
    def previewing(self) -> bool:
        """Whether the cells shown are a preview of a reading not used yet."""
        return self._source is not None and self._source.preview is not None

    def data(self, index: _Index, role: int = _DISPLAY) -> object:
        # Hot path (called for every visible cell and role): plain ints, no enum look-ups.
        role = int(role)
        if role not in _ROLES_USED or self._source is None:
            return None
        row, c = index.row(), index.column()
        if not (0 <= row < len(self._rows) and 0 <= c < len(self._columns)) or not index.isValid():
            return None
        r = int(self._rows[row])
        col = self._columns[c]
        src = self._source
        p = src.parsed
        if role in (_DISPLAY, _EDIT):
            return self._text(col, r, src, p)
        if role == _USER:
            return r
        if role == _TOOLTIP and col is Column.RAW:
            return _space_hint(src.raw.value(r), int(src.raw.kinds[r]))
        if p is None:
            return None
        if role == _FONT:
            return self._italic if src.preview is not None and col in _READ_COLUMNS else None
        if role == _FOREGROUND:
            return _STATE_COLOURS[p.state[r]] if col is Column.STATE else None
        if role == _TOOLTIP:
            if col is Column.STATE:
                return _LOOKS[p.state[r]].hint
            if col is Column.NOTE and p.reason[r]:
                return str(p.reason[r])
            if col is Column.READS:
                if src.preview is not None:
                    return (
                        f"Preview of {src.preview} in Readings: nothing is recorded until you "
                        "press its Use this reading."
                    )
                return "Double-click to set this cell by hand (recorded in the fix log)."
            return None
        if role == _ACCESSIBLE and col is Column.STATE:
            return _LOOKS[p.state[r]].word
        return None

    def _text(self, col: Column, r: int, src: CellsSource, p: ParsedColumn | None) -> str:
        if col is Column.ROW:
            return str(int(src.source_rows[r]))
        if col is Column.KEY:
            if src.keys is None:
                return ""
            key = src.keys.value(r) if isinstance(src.keys, RawColumn) else src.keys[r]
            return "" if key is None else str(key)
        if col is Column.RAW:
            return _raw_text(src.raw.value(r), int(src.raw.kinds[r]))
        if p is None:
            return ""
        if col is Column.READS:
            return format_value(
                int(self._value_us[r]), bool(p.has_time[r]), int(p.offset_min[r]), p.date_only
            )
        if col is Column.STATE:
            return _LOOKS[p.state[r]].label
        if col is Column.PATTERN:
            i = int(p.pattern[r])
            if p.state[r] == _MANUAL:
                return "by hand"
            return p.pattern_label(i)
        if col is Column.NOTE:
            reason = p.reason[r]
            broken = [label for label, hits in src.rule_hits.items() if hits[r]]
            text = "" if reason is None else str(reason)
            if broken:
                rules = "; ".join(f"breaks: {label}" for label in broken)
                text = f"{text} · {rules}" if text else rules
            return text
        return ""

    def setData(self, index: _Index, value: object, role: int = Qt.ItemDataRole.EditRole) -> bool:
        """An edit of a parsed cell becomes a request for a recorded step; nothing changes here."""
        if (
            role != Qt.ItemDataRole.EditRole
            or not index.isValid()
            or self._columns[index.column()] is not Column.READS
            or self._source is None
            or self._source.parsed is None
            or self._source.preview is not None
        ):
            return False
        text = str(value).strip()
        r = int(self._rows[index.row()])
        current = self._text(Column.READS, r, self._source, self._source.parsed)
        if text == current:
            return False
        self.hand_set_requested.emit(r, text)
        return True

    def column_of(self, col: Column) -> int:
        """Section number of a column, or -1 when it is not shown."""
        return self._columns.index(col) if col in self._columns else -1
