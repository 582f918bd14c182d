"""The Columns pane: the sheet picker and every column with how date-like it is and a mark.

Marks (a glyph and words, never colour alone):
    ✓ read — read as dates, nothing to check;  ! n to check — read, some cells not read or unclear;
    ◇ looks like dates — not read yet;  · not dates — the scan finds little that reads as a date;
    ＝ worked out — a column the fix log adds (span, age …).

Signals:
    column_chosen(str), sheet_chosen(str)
"""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QComboBox, QLabel, QListWidget, QListWidgetItem, QVBoxLayout, QWidget

from ..core.clean import CleanTable
from ..core.report import ColumnReport
from .look import OKABE_ITO

__all__ = ["ColumnsPane", "column_mark"]


def column_mark(
    name: str, clean: CleanTable | None, report: ColumnReport | None
) -> tuple[str, str]:
    """(text, colour) of one column's entry."""
    pc = None if clean is None else clean.parsed.get(name)
    if pc is not None:
        c = pc.counts()
        todo = c["failed"] + c["ambiguous"]
        shown = pc.output_name if pc.output_name != name else name
        if todo:
            return f"! {shown} — {todo:,} to check", OKABE_ITO["vermillion"]
        return f"✓ {shown} — read", OKABE_ITO["bluish green"]
    if report is None:
        return f"  {name}", "#3A3A3A"
    like = f"{100 * report.likeness:.0f}%"
    if report.is_date:
        return f"◇ {name} — looks like dates ({like})", OKABE_ITO["blue"]
    return f"· {name} — not dates ({like})", "#6F6F6F"


class ColumnsPane(QWidget):
    """See the module docstring."""

    column_chosen = Signal(str)
    sheet_chosen = Signal(str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.sheet = QComboBox()
        self.sheet.setAccessibleName("Sheet")
        self.sheet_label = QLabel("Sheet:")
        self.list = QListWidget()
        self.list.setObjectName("columnsList")
        self.list.setAccessibleName("Columns")
        # Long marks wrap onto a second line instead of hiding behind a sideways scroll bar.
        self.list.setWordWrap(True)
        self.list.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.list.setResizeMode(QListWidget.ResizeMode.Adjust)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.addWidget(QLabel("<b>Columns</b>"))
        lay.addWidget(self.sheet_label)
        lay.addWidget(self.sheet)
        lay.addWidget(self.list, 1)
        self.list.currentItemChanged.connect(self._current)
        self.sheet.activated.connect(lambda _i: self.sheet_chosen.emit(self.sheet.currentText()))
        self.set_sheets([], None)

    def set_sheets(self, names: list[str], current: str | None) -> None:
        self.sheet.blockSignals(True)
        self.sheet.clear()
        self.sheet.addItems(names)
        if current in names:
            self.sheet.setCurrentText(current)
        self.sheet.blockSignals(False)
        visible = len(names) > 1
        self.sheet.setVisible(visible)
        self.sheet_label.setVisible(visible)

    def set_columns(
        self,
        names: list[str],
        clean: CleanTable | None,
        reports: dict[str, ColumnReport],
        current: str | None,
        derived: list[str] | None = None,
    ) -> None:
        """Fill the list: the file's columns, then those worked out by the fix log (＝)."""
        self.list.blockSignals(True)
        self.list.clear()
        extra = [(n, f"＝ {n} — worked out", OKABE_ITO["reddish purple"]) for n in derived or []]
        marks = [(n, *column_mark(n, clean, reports.get(n))) for n in names]
        for name, text, colour in marks + extra:
            item = QListWidgetItem(text)
            item.setData(Qt.ItemDataRole.UserRole, name)
            item.setForeground(QColor(colour))
            rep = reports.get(name)
            if rep is not None and rep.summary:
                item.setToolTip(rep.summary)
            self.list.addItem(item)
            if name == current:
                self.list.setCurrentItem(item)
        self.list.blockSignals(False)

    def choose(self, name: str) -> None:
        for i in range(self.list.count()):
            if self.list.item(i).data(Qt.ItemDataRole.UserRole) == name:
                self.list.setCurrentRow(i)
                return

    def current(self) -> str | None:
        item = self.list.currentItem()
        return None if item is None else item.data(Qt.ItemDataRole.UserRole)

    def _current(self, item: QListWidgetItem | None, _prev: object) -> None:
        if item is not None:
            self.column_chosen.emit(item.data(Qt.ItemDataRole.UserRole))
