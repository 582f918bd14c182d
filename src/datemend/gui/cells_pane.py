"""The Cells pane: a filter bar, the cells table, and the date spread under it.

Filters are numpy selections made by ``CellsModel`` (all cells, cells needing a look, one
pattern group, a chart bar's date range) plus a find box; nothing here walks the rows.

Signals:
    hand_set_requested(int, str): forwarded from the model (row position, typed text).
"""

from __future__ import annotations

import html
from collections.abc import Callable

import numpy as np
from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QComboBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QSplitter,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from ..core.clean import ParsedColumn
from .cells_model import CellsModel, CellsSource, Column, RowFilter
from .chart import DateSpread

__all__ = ["CellsPane"]

_WIDTHS = {
    Column.ROW: 44,
    Column.KEY: 60,
    Column.RAW: 96,
    Column.READS: 90,
    Column.STATE: 80,
    Column.PATTERN: 80,
    Column.NOTE: 80,
}
#: Columns sized to the rows in view, up to these widths (a long cell shows in full as a tip).
_FIT = {Column.RAW: 170, Column.READS: 210, Column.STATE: 110, Column.PATTERN: 130}


def _mode_of(data: object) -> tuple[str, int | None]:
    """The filter of a "Show" entry: its data is "all", "problems", "range" or "pattern:<i>".

    (Strings, since a combo box compares Python objects by identity.)"""
    text = str(data or "all")
    if text.startswith("pattern:"):
        return "pattern", int(text.split(":", 1)[1])
    if text.startswith("rule:"):
        return "rule", None
    return text, None


class CellsPane(QWidget):
    """See the module docstring."""

    hand_set_requested = Signal(int, str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.model = CellsModel(self)
        # Queued: the edit becomes a step only after the editor has closed, since the step
        # resets the model (and with it the editor) when it is applied.
        self.model.hand_set_requested.connect(
            self.hand_set_requested, Qt.ConnectionType.QueuedConnection
        )
        self.title = QLabel("<b>Cells</b>")
        self.show_box = QComboBox()
        self.show_box.setAccessibleName("Show which cells")
        self.find = QLineEdit()
        self.find.setPlaceholderText("Find a value (Ctrl+F)")
        self.find.setClearButtonEnabled(True)
        self.find.setAccessibleName("Find a value")
        self.problems_first = QCheckBox("Problems &first")
        self.count = QLabel()
        self.find.setMinimumWidth(150)
        head = QHBoxLayout()
        head.addWidget(self.title)
        head.addStretch(1)
        head.addWidget(self.count)
        bar = QHBoxLayout()
        show = QLabel("&Show:")
        show.setBuddy(self.show_box)
        bar.addWidget(show)
        bar.addWidget(self.show_box)
        bar.addWidget(self.find, 1)
        bar.addWidget(self.problems_first)

        self.table = QTableView()
        self.table.setObjectName("cellsTable")
        self.table.setAccessibleName("Cells")
        self.table.setModel(self.model)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.table.setEditTriggers(
            QAbstractItemView.EditTrigger.DoubleClicked
            | QAbstractItemView.EditTrigger.EditKeyPressed
        )
        self.table.setAlternatingRowColors(True)
        self.table.setWordWrap(False)
        vh = self.table.verticalHeader()
        vh.setVisible(False)
        vh.setSectionResizeMode(QHeaderView.ResizeMode.Fixed)  # no per-row measuring at 1M rows
        vh.setDefaultSectionSize(self.fontMetrics().height() + 6)
        hh = self.table.horizontalHeader()
        hh.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        hh.setStretchLastSection(True)
        hh.setResizeContentsPrecision(0)  # fit widths to the rows in view only, at any size

        self.chart = DateSpread()
        self.chart_title = QLabel("<b>Date spread</b> — click a bar to see its rows")
        chart_box = QWidget()
        cl = QVBoxLayout(chart_box)
        cl.setContentsMargins(0, 0, 0, 0)
        cl.addWidget(self.chart_title)
        cl.addWidget(self.chart, 1)

        split = QSplitter(Qt.Orientation.Vertical)
        split.addWidget(self.table)
        split.addWidget(chart_box)
        split.setStretchFactor(0, 3)
        split.setStretchFactor(1, 1)
        split.setChildrenCollapsible(False)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.addLayout(head)
        lay.addLayout(bar)
        lay.addWidget(split, 1)

        self._range: tuple[np.datetime64, np.datetime64] | None = None
        self._fill_show_box(None)
        self.show_box.activated.connect(self._show_changed)
        # Find as you type on small tables; on big ones, after a pause in typing (or Enter).
        self._find_timer = QTimer(self)
        self._find_timer.setSingleShot(True)
        self._find_timer.setInterval(350)
        self._find_timer.timeout.connect(self._apply_filter)
        self.find.textChanged.connect(self._find_changed)
        self.find.returnPressed.connect(self._apply_filter)
        self.problems_first.toggled.connect(lambda _b: self._apply_filter())
        self.chart.bar_chosen.connect(self._bar_chosen)
        self.chart.cleared.connect(self._bar_cleared)
        self.model.rows_changed.connect(self._update_count)

    # -- data ------------------------------------------------------------------------------
    def set_source(self, source: CellsSource | None, *, keep_filter: bool = True) -> None:
        """Show a column (``keep_filter``: the same column after a fix keeps its filter)."""
        parsed = None if source is None else source.parsed
        if not keep_filter:
            self._range = None
            self.find.blockSignals(True)
            self.find.clear()
            self.find.blockSignals(False)
        self._fill_show_box(parsed, {} if source is None else source.rule_hits)
        title = f"<b>Cells</b> of “{html.escape(source.raw.name)}”" if source else "<b>Cells</b>"
        chart_title = "<b>Date spread</b> — click a bar to see its rows"
        if source is not None and source.preview is not None:
            title += f" — <i>preview of {html.escape(source.preview)}: not used yet</i>"
            chart_title += " <i>(preview)</i>"
        self.title.setText(title)
        self.title.setToolTip(
            f"The dates shown are what {source.preview} in Readings gives, with the choices "
            "there; nothing is in the fix log until you press its Use this reading."
            if source is not None and source.preview is not None
            else ""
        )
        self.chart_title.setText(chart_title)
        self.chart.set_values(None if parsed is None else parsed.value)
        self.model.set_source(source, self._current_filter())
        self._fit_columns()

    def _fit_columns(self) -> None:
        """Widths from the header and the rows in view (Qt measures only those, so this costs
        the same at a million rows), between a floor and a cap; Note takes what is left."""
        fm = self.table.horizontalHeader().fontMetrics()
        for col, w in _WIDTHS.items():
            i = self.model.column_of(col)
            if i < 0:
                continue
            head = str(self.model.headerData(i, Qt.Orientation.Horizontal))
            floor = max(w, fm.horizontalAdvance(head) + 24)
            if col in _FIT:
                fitted = max(self.table.sizeHintForColumn(i), 0) + 8
                self.table.setColumnWidth(i, min(max(floor, fitted), _FIT[col]))
            else:
                self.table.setColumnWidth(i, floor)

    def _fill_show_box(
        self, parsed: ParsedColumn | None, hits: dict[str, np.ndarray] | None = None
    ) -> None:
        current = self.show_box.currentData()
        self.show_box.blockSignals(True)
        self.show_box.clear()
        self.show_box.addItem("all cells", "all")
        self.show_box.addItem("cells needing a look (✗ ?)", "problems")
        if parsed is not None:
            counts = np.bincount(
                parsed.pattern[parsed.pattern >= 0].astype(np.int64), minlength=len(parsed.patterns)
            )
            for i in range(len(parsed.patterns)):
                if counts[i]:
                    name = parsed.pattern_label(i)
                    self.show_box.addItem(f"pattern group: {name} ({counts[i]:,})", f"pattern:{i}")
        if hits is None:
            hits = {} if self.model.source is None else self.model.source.rule_hits
        for label, mask in hits.items():
            n = int(mask.sum())
            if n:
                self.show_box.addItem(f"rule broken: {label} ({n:,})", f"rule:{label}")
        if self._range is not None:
            lo = self._range[0]
            self.show_box.addItem(f"dates from the chosen bar ({lo} …)", "range")
        i = self.show_box.findData(current) if current is not None else 0
        self.show_box.setCurrentIndex(max(0, i))
        self.show_box.blockSignals(False)

    # -- filters ---------------------------------------------------------------------------
    def show_mode(self, mode: str, pattern: int | None = None) -> None:
        """Pick the filter by name ("all", "problems", "pattern", "range")."""
        i = self.show_box.findData(mode if pattern is None else f"{mode}:{pattern}")
        if i >= 0:
            self.show_box.setCurrentIndex(i)
        self._apply_filter()

    def _current_filter(self) -> RowFilter:
        mode, pattern = _mode_of(self.show_box.currentData())
        lo = hi = None
        if mode == "range" and self._range is not None:
            lo, hi = self._range
        data = str(self.show_box.currentData() or "")
        return RowFilter(
            mode=mode,
            rule=data.split(":", 1)[1] if mode == "rule" else None,
            pattern=pattern,
            lo=lo,
            hi=hi,
            find=self.find.text().strip(),
            problems_first=self.problems_first.isChecked(),
        )

    #: Tables with at least this many rows wait for a pause in typing before finding.
    find_pause_rows = 200_000

    def _find_changed(self, _text: str) -> None:
        src = self.model.source
        if src is not None and len(src.raw) >= self.find_pause_rows:
            self._find_timer.start()
        else:
            self._apply_filter()

    #: Runs long work off the GUI thread: ``run_job(title, fn, on_done)`` (the window sets it;
    #: without it, finding on a big table runs here).
    run_job: Callable[[str, Callable[[object], object], Callable[[object], None]], object] | None
    run_job = None

    def _apply_filter(self) -> None:
        self._find_timer.stop()
        flt = self._current_filter()
        src = self.model.source
        if (
            self.run_job is not None
            and src is not None
            and len(src.raw) >= self.find_pause_rows
            and self.model.needs_find_work(flt.find)
        ):
            # The first find in a big column builds its index of distinct values: a job.
            needle = flt.find
            self.count.setText(f"finding “{needle}”…")
            self.run_job(
                f"Finding “{needle}”",
                self.model.find_work(needle),
                lambda got: self._found(needle, got),
            )
            return
        self.model.set_filter(flt)

    def _found(self, needle: str, got: object) -> None:
        index, mask = got  # type: ignore[misc]
        if self.model.take_found(index, needle, mask) and self.find.text().strip() == needle:
            self.model.set_filter(self._current_filter())
        else:
            self._apply_filter()  # the column or the text changed meanwhile

    def _show_changed(self, _i: int) -> None:
        mode, _p = _mode_of(self.show_box.currentData())
        if mode != "range":
            self._range = None
            self.chart.chosen = None
            self.chart.update()
        self._apply_filter()

    def _bar_chosen(self, lo: np.datetime64, hi: np.datetime64) -> None:
        self._range = (lo, hi)
        self._fill_show_box(self.model.source.parsed if self.model.source else None)
        self.show_box.setCurrentIndex(self.show_box.findData("range"))
        self._apply_filter()

    def _bar_cleared(self) -> None:
        self._range = None
        self._fill_show_box(self.model.source.parsed if self.model.source else None)
        self.show_box.setCurrentIndex(0)
        self._apply_filter()

    def _update_count(self) -> None:
        src = self.model.source
        total = 0 if src is None else len(src.raw)
        self.count.setText(f"{self.model.rowCount():,} of {total:,} cells")
        self.table.setAccessibleDescription(self.model.row_filter.describe())
