"""The Readings panel: the ranked ways to read a column, each with its evidence, one click to use.

The panel shows what the core's scan says (a ColumnReport); it decides nothing. The choices the
data cannot make (day/month order, two-digit years, 1900/1904, zone) are explicit controls whose
values are laid over the chosen suggestion's spec when the user presses "Use this reading".

Signals:
    use_requested(object, str): a ParseSpec to record as the column's reading, and its label.
    blank_requested(object): a tuple of tokens to record as "treat as blank".
    problem(str): a choice cannot be used (one sentence, e.g. an unknown zone name).
    preview_changed(): the reading shown in Cells (before one is used) or a choice laid over
        it changed; the Cells preview follows.
"""

from __future__ import annotations

import dataclasses
import html
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QResizeEvent
from PySide6.QtWidgets import (
    QComboBox,
    QFormLayout,
    QFrame,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPushButton,
    QScrollArea,
    QSizePolicy,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from ..core.report import ColumnReport, Suggestion
from ..core.spec import ParseSpec
from .look import OKABE_ITO

__all__ = ["ReadingsPanel", "suggestion_html"]

_DECISION_WORDS = {
    "evidence": "decided by the data",
    "preference": "your stated preference",
    "default": "a default",
    "undecided": "not decided — cells stay unclear",
}


_CHOICE_WORDS = {
    "day_order": "day and month",
    "century": "two-digit years",
    "date_system": "serial numbers",
    "zone": "zone",
}


def useful_readings(report: ColumnReport) -> list[Suggestion]:
    """The readings the panel offers: those that read at least one cell, best first."""
    return [s for s in report.suggestions if s.parsed > 0]


def default_shown(report: ColumnReport) -> Suggestion | None:
    """The reading Cells previews unless "Show in Cells" chose another: the first one offered,
    for a column that looks like dates (a column that does not is previewed only when asked)."""
    useful = useful_readings(report)
    return useful[0] if useful and report.is_date else None


def _e(text: object) -> str:
    return html.escape(str(text))


def suggestion_html(rank: int, s: Suggestion) -> str:
    """The card text of one suggestion: coverage, mix, examples, evidence, warnings, failures."""
    pct = f"{100 * s.coverage:.1f}%"
    out = [
        f"<b>{rank}. {_e(s.label)}</b><br>",
        f"reads {s.parsed:,} of {s.total:,} cells ({pct})",
    ]
    if s.failed:
        out.append(
            f" · <span style='color:{OKABE_ITO['vermillion']}'>✗ {s.failed:,} not read</span>"
        )
    if s.ambiguous:
        out.append(f" · <span style='color:{OKABE_ITO['orange']}'>? {s.ambiguous:,} unclear</span>")
    if s.examples:
        ex = ", ".join(f"{_e(r)} → {_e(v)}" for r, v in s.examples[:4])
        out.append(f"<br><i>for example</i> {ex}")
    for line in s.evidence[:5]:
        out.append(f"<br>• {_e(line)}")
    for line in s.warnings[:4]:
        out.append(f"<br><span style='color:{OKABE_ITO['vermillion']}'>⚠ {_e(line)}</span>")
    if s.decisions:
        words = "; ".join(
            f"{_CHOICE_WORDS.get(k, _e(k))}: {_DECISION_WORDS.get(v, _e(v))}"
            for k, v in s.decisions.items()
        )
        out.append(f"<br><small>{words}</small>")
    if s.disagreements:
        dis = ", ".join(f"{_e(r)}: {_e(a)} here, {_e(b)} next" for r, a, b in s.disagreements[:3])
        out.append(f"<br><small>differs from the next reading on {dis}</small>")
    if s.failures:
        fails = "; ".join(
            f"row {f.source_row} “{_e(f.raw)}” — {_e(f.text)}" for f in s.failures[:3]
        )
        out.append(f"<br><small>not read: {fails}</small>")
    return "".join(out)


def _check_zone(zone: str) -> None:
    """Raise ValueError (one sentence) unless ``zone`` is "UTC" or an IANA zone name."""
    if zone.upper() == "UTC":
        return
    try:
        ZoneInfo(zone)
    except (ZoneInfoNotFoundError, ValueError):
        raise ValueError(
            f'"{zone}" is not a time zone name; write UTC or an IANA name such as Europe/Paris.'
        ) from None


class _Card(QFrame):
    def __init__(self, rank: int, s: Suggestion, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.suggestion = s
        self.setFrameShape(QFrame.Shape.StyledPanel)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(6, 4, 6, 4)
        self.text = QLabel(suggestion_html(rank, s))
        self.text.setWordWrap(True)
        self.text.setTextFormat(Qt.TextFormat.RichText)
        self.text.setAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop)
        self.text.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Minimum)
        self.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Minimum)
        self.use = QPushButton("Use this reading")
        self.use.setAccessibleName(f"Use reading {rank}: {s.label}")
        self.show_button = QPushButton("Show in Cells")
        self.show_button.setToolTip(
            "Show what this reading gives in Cells, in italics; nothing is recorded."
        )
        self.show_button.setAccessibleName(f"Show reading {rank} in Cells: {s.label}")
        # the button first: it stays in view however long the evidence below it runs
        row = QHBoxLayout()
        row.addStretch(1)
        row.addWidget(self.show_button)
        row.addWidget(self.use)
        lay.addLayout(row)
        lay.addWidget(self.text)

    def set_shown(self, shown: bool) -> None:
        """Mark the card whose reading Cells shows (its button then says so)."""
        self.show_button.setEnabled(not shown)
        self.show_button.setText("Shown in Cells" if shown else "Show in Cells")

    def resizeEvent(self, event: QResizeEvent) -> None:
        # A word-wrapped label inside a scroll area does not ask for its full height by itself.
        super().resizeEvent(event)
        self.text.setMinimumHeight(self.text.heightForWidth(self.text.width()))


class ReadingsPanel(QWidget):
    """Suggestions for the chosen column; see the module docstring for the signals."""

    use_requested = Signal(object, str)
    blank_requested = Signal(object)
    preview_changed = Signal()
    problem = Signal(str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("readings")
        self.report: ColumnReport | None = None
        self.cards: list[_Card] = []
        self._useful: list[Suggestion] = []
        self._chosen: int | None = None  # the reading "Show in Cells" chose (into _useful)
        self._tokens: tuple[str, ...] = ()
        self.summary = QLabel("Pick a column to see the ways it can be read.")
        self.summary.setWordWrap(True)

        self.day_order = QComboBox()
        self.day_order.addItem("as the reading says", "keep")
        self.day_order.addItem("day first (3/4 is 3 April)", "dmy")
        self.day_order.addItem("month first (3/4 is 4 March)", "mdy")
        self.day_order.addItem("leave undecided (cells stay unclear)", None)
        self.century = QComboBox()
        self.century.addItem("as the reading says", "keep")
        self.century.addItem("69–99 → 1900s, 00–68 → 2000s (POSIX)", "posix")
        self.century.addItem("never after the year below (past events)", "past")
        self.century.addItem("leave open where the two rules differ", "either")
        self.pivot = QSpinBox()
        self.pivot.setRange(1000, 9999)
        self.pivot.setValue(2026)
        self.pivot.setToolTip(
            "Two-digit years are placed in the latest century not after this year."
        )
        self.date_system = QComboBox()
        self.date_system.addItem("as the reading says", "keep")
        self.date_system.addItem("1900 date system", 1900)
        self.date_system.addItem("1904 date system", 1904)
        self.zone = QLineEdit()
        self.zone.setPlaceholderText("keep offsets as written")
        self.zone.setToolTip(
            '"UTC" or an IANA zone name such as Europe/Paris; empty keeps offsets.'
        )

        for box in (self.day_order, self.century, self.date_system):
            box.currentIndexChanged.connect(lambda _i: self.preview_changed.emit())
        self.pivot.valueChanged.connect(lambda _v: self.preview_changed.emit())
        self.zone.editingFinished.connect(self.preview_changed.emit)

        choices = QFormLayout()
        choices.addRow("Day and month:", self.day_order)
        choices.addRow("Two-digit years:", self.century)
        choices.addRow("  not after year:", self.pivot)
        choices.addRow("Serial numbers:", self.date_system)
        choices.addRow("Zone:", self.zone)

        self.undecided = QLabel()
        self.undecided.setWordWrap(True)
        self.undecided.setStyleSheet(f"color: {OKABE_ITO['vermillion']}")
        self.undecided.setVisible(False)

        self.blank_button = QPushButton()
        self.blank_button.setVisible(False)
        self.blank_button.clicked.connect(self._blank)

        self._cards_box = QWidget()
        self._cards_lay = QVBoxLayout(self._cards_box)
        self._cards_lay.setContentsMargins(0, 0, 0, 0)
        self._cards_lay.addStretch(1)
        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setWidget(self._cards_box)
        scroll.setFrameShape(QFrame.Shape.NoFrame)

        lay = QVBoxLayout(self)
        title = QLabel("<b>Readings</b> — ways to read this column")
        lay.addWidget(title)
        lay.addWidget(self.summary)
        lay.addLayout(choices)
        lay.addWidget(self.undecided)
        lay.addWidget(self.blank_button)
        lay.addWidget(scroll, 1)

    def set_report(self, report: ColumnReport | None) -> None:
        self.report = report
        for card in self.cards:
            self._cards_lay.removeWidget(card)
            card.hide()  # at once: deleteLater alone leaves it painted under the new cards
            card.deleteLater()
        self.cards = []
        self._useful = []
        self._chosen = None
        if report is None:
            self.summary.setText("Pick a column to see the ways it can be read.")
            self.blank_button.setVisible(False)
            self.undecided.setVisible(False)
            return
        best = report.best
        open_choices = [
            _CHOICE_WORDS.get(k, k)
            for k, v in (best.decisions.items() if best is not None else ())
            if v == "undecided"
        ]
        self.undecided.setText(
            "? The data cannot decide "
            + ", ".join(open_choices)
            + " here: those cells stay unclear until you choose above."
        )
        self.undecided.setVisible(bool(open_choices))
        like = f"{100 * report.likeness:.0f}%"
        self.summary.setText(
            report.summary
            or f"{report.column}: looks {like} like dates; {report.blank:,} empty cells."
        )
        self._tokens: tuple[str, ...] = ()
        self.set_blank_state(read=False, blank=set())
        # A reading that reads no cell is no way to read the column: say so instead of a card
        # offering to "use" it (it would only turn the column's text to blank).
        useful = useful_readings(report)
        self._useful = useful
        if not useful:
            self.summary.setText(
                self.summary.text()
                + "\nNo way of writing dates reads any cell here; the column is left as written."
            )
        for i, s in enumerate(useful, start=1):
            card = _Card(i, s, self._cards_box)
            card.use.clicked.connect(lambda _=False, s=s: self._use(s))
            card.show_button.clicked.connect(lambda _=False, k=i - 1: self.show_reading(k))
            self._cards_lay.insertWidget(len(self.cards), card)
            self.cards.append(card)
        self._mark_shown()

    def set_blank_state(self, read: bool, blank: set[str]) -> None:
        """Offer "Treat as blank" for the scan's placeholder tokens the fix log does not blank yet,
        once the column is read (before that, a reading's own blank tokens cover them). A read
        column shows no preview, so its cards offer no "Show in Cells"."""
        for card in self.cards:
            card.show_button.setVisible(not read)
        places = self.report.placeholders if self.report is not None else ()
        todo = tuple((t, n) for t, n in places if t.strip().casefold() not in blank)
        self._tokens = tuple(t for t, _ in todo)
        if read and todo:
            toks = ", ".join(f"“{t}” ({n})" for t, n in todo)
            self.blank_button.setText(f"Treat as blank: {toks}")
            self.blank_button.setToolTip("Records one step that turns these tokens to blank.")
            self.blank_button.setVisible(True)
        else:
            self.blank_button.setVisible(False)

    def spec_for(self, s: Suggestion) -> ParseSpec:
        """The suggestion's spec with the panel's explicit choices laid over it."""
        changes: dict[str, object] = {}
        if (v := self.day_order.currentData()) != "keep":
            changes["day_order"] = v
        if (v := self.century.currentData()) != "keep":
            changes["century"] = v
            changes["pivot_year"] = self.pivot.value() if v in ("past", "either") else None
        if (v := self.date_system.currentData()) != "keep":
            changes["date_system"] = v
        zone = self.zone.text().strip()
        if zone:
            _check_zone(zone)
            changes["zone"] = zone
        return dataclasses.replace(s.spec, **changes) if changes else s.spec

    @property
    def shown(self) -> int | None:
        """Which reading Cells shows before one is used (0 = the first): the one "Show in
        Cells" chose, else the first for a column that looks like dates, else none."""
        if not self._useful:
            return None
        if self._chosen is not None:
            return min(self._chosen, len(self._useful) - 1)
        return 0 if self.report is not None and default_shown(self.report) is not None else None

    def preview(self) -> tuple[ParseSpec, str] | None:
        """(spec, name) of the reading Cells shows before one is used (``shown``; the name is
        "reading 2"), with the choices laid over it: what its *Use this reading* would record.
        None when no reading is shown or a choice is not valid (an unknown zone)."""
        k = self.shown
        if k is None:
            return None
        try:
            return self.spec_for(self._useful[k]), f"reading {k + 1}"
        except ValueError:
            return None

    def show_reading(self, k: int) -> None:
        """Show reading ``k`` (0 = the first) in Cells, before any is used."""
        if not 0 <= k < len(self._useful) or k == self.shown:
            return
        self._chosen = k
        self._mark_shown()
        self.preview_changed.emit()

    def _mark_shown(self) -> None:
        shown = self.shown
        for k, card in enumerate(self.cards):
            card.set_shown(k == shown)

    def _use(self, s: Suggestion) -> None:
        try:
            spec = self.spec_for(s)
        except ValueError as err:
            self.problem.emit(str(err))
            return
        self.use_requested.emit(spec, s.label)

    def focus_first(self) -> None:
        """Keyboard entry to the panel: the first "Use this reading" button, else the choices."""
        (self.cards[0].use if self.cards else self.day_order).setFocus()

    def _blank(self) -> None:
        if self._tokens:
            self.blank_requested.emit(self._tokens)
