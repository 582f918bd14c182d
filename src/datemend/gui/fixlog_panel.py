"""The Fix log panel: the recorded steps in order, each with its sentence and how many cells it
changed; turn a step off or on, remove it, move it. Every edit goes to the session (undoable).

Signals:
    toggle_requested(int): turn step i off (or back on).
    remove_requested(int): remove step i.
    move_requested(int, int): move step i to position j.
    save_requested(), load_requested()
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QKeySequence, QShortcut
from PySide6.QtWidgets import (
    QGridLayout,
    QLabel,
    QListWidget,
    QListWidgetItem,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

__all__ = ["FixLogPanel", "StepRow"]


@dataclass(frozen=True)
class StepRow:
    """What the panel shows of one step."""

    sentence: str
    enabled: bool = True
    cells: int | None = None  # cells the step changed, when the session says


class FixLogPanel(QWidget):
    """The list of steps; see the module docstring for the signals."""

    toggle_requested = Signal(int)
    remove_requested = Signal(int)
    move_requested = Signal(int, int)
    save_requested = Signal()
    load_requested = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("fixLog")
        self.list = QListWidget()
        self.list.setAccessibleName("Fix log steps")
        self.list.setWordWrap(True)
        self.list.setAlternatingRowColors(True)
        self.empty = QLabel("No steps yet: use a reading, or set a cell by hand.")
        self.empty.setWordWrap(True)
        self.toggle = QPushButton("Turn &off")
        self.remove = QPushButton("&Remove")
        self.up = QPushButton("Move &up")
        self.down = QPushButton("Move do&wn")
        self.save = QPushButton("Save…")
        self.load = QPushButton("Load…")
        self.toggle.setToolTip("Keep the step in the log but skip it (Space).")
        self.remove.setToolTip("Take the step out of the log (Delete).")
        self.up.setToolTip("Ctrl+Up")
        self.down.setToolTip("Ctrl+Down")
        grid = QGridLayout()
        grid.addWidget(self.toggle, 0, 0)
        grid.addWidget(self.remove, 0, 1)
        grid.addWidget(self.up, 1, 0)
        grid.addWidget(self.down, 1, 1)
        grid.addWidget(self.save, 2, 0)
        grid.addWidget(self.load, 2, 1)
        lay = QVBoxLayout(self)
        lay.addWidget(QLabel("<b>Fix log</b> — steps, in the order they run"))
        lay.addWidget(self.empty)
        lay.addWidget(self.list, 1)
        lay.addLayout(grid)

        self.toggle.clicked.connect(lambda: self._with_current(self.toggle_requested.emit))
        self.remove.clicked.connect(lambda: self._with_current(self.remove_requested.emit))
        self.up.clicked.connect(lambda: self._move(-1))
        self.down.clicked.connect(lambda: self._move(+1))
        self.save.clicked.connect(self.save_requested.emit)
        self.load.clicked.connect(self.load_requested.emit)
        self.list.currentRowChanged.connect(self._update_buttons)
        ctx = Qt.ShortcutContext.WidgetShortcut
        for keys, slot in (
            (QKeySequence.StandardKey.Delete, self.remove.click),
            ("Space", self.toggle.click),
            ("Ctrl+Up", self.up.click),
            ("Ctrl+Down", self.down.click),
        ):
            sc = QShortcut(QKeySequence(keys), self.list)
            sc.setContext(ctx)
            sc.activated.connect(slot)
        self.rows: list[StepRow] = []
        self._update_buttons()

    def set_steps(self, rows: list[StepRow], keep_current: int | None = None) -> None:
        current = self.list.currentRow() if keep_current is None else keep_current
        self.rows = list(rows)
        self.list.clear()
        for i, r in enumerate(rows, start=1):
            mark = "●" if r.enabled else "◌ off —"
            cells = "" if r.cells is None else f"  ({r.cells:,} cells)"
            item = QListWidgetItem(f"{i}. {mark} {r.sentence}{cells}")
            if not r.enabled:
                font = item.font()
                font.setItalic(True)
                item.setFont(font)
                item.setForeground(Qt.GlobalColor.darkGray)
            self.list.addItem(item)
        self.empty.setVisible(not rows)
        if rows:
            self.list.setCurrentRow(max(0, min(current, len(rows) - 1)))
        self._update_buttons()

    def _with_current(self, emit: object) -> None:
        i = self.list.currentRow()
        if 0 <= i < len(self.rows):
            emit(i)  # type: ignore[operator]

    def _move(self, delta: int) -> None:
        i = self.list.currentRow()
        j = i + delta
        if 0 <= i < len(self.rows) and 0 <= j < len(self.rows):
            self.move_requested.emit(i, j)
            self.list.setCurrentRow(j)

    def _update_buttons(self) -> None:
        i = self.list.currentRow()
        has = 0 <= i < len(self.rows)
        self.toggle.setEnabled(has)
        self.remove.setEnabled(has)
        self.up.setEnabled(has and i > 0)
        self.down.setEnabled(has and i < len(self.rows) - 1)
        if has:
            self.toggle.setText("Turn &off" if self.rows[i].enabled else "Turn &on")
