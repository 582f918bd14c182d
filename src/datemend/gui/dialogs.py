"""Dialogs: About (with the cautions), the replay check, export, and worked-out columns.

Every dialog is shown with ``open()`` (never ``exec()``), so nothing blocks and tests can reach
the dialog object through the window. The dialogs only gather choices; the window hands them to
the core.
"""

from __future__ import annotations

import dataclasses
import html
from pathlib import Path
from typing import Any

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPushButton,
    QSpinBox,
    QTableWidget,
    QTableWidgetItem,
    QTextBrowser,
    QVBoxLayout,
    QWidget,
)

from .._version import __version__
from .look import OKABE_ITO

__all__ = ["ABOUT_HTML", "CAUTION", "AboutDialog", "DeriveDialog", "ExportDialog", "ReplayDialog"]

CAUTION = (
    "Dates that could be read more than one way (3/4: 3 April or 4 March?), two-digit years, and "
    "ages worked out from dates must be checked by a person before they are used for a legal, "
    "medical or safety decision. Local rules (of your country, region or organisation) decide "
    "what a date or an age means there; datemend does not."
)

ABOUT_HTML = f"""
<h2>datemend {__version__}</h2>
<p>Look at the date columns of a spreadsheet, see every cell as written beside the date it
becomes, fix what needs fixing, and keep each fix in a fix log you can run again on next month's
file.</p>
<h3>Please be careful</h3>
<p>{html.escape(CAUTION)}</p>
<p>A cell datemend cannot read for sure is left unresolved and says why: it is never guessed.</p>
<h3>How to</h3>
<ul>
<li><b>Open</b> a CSV, XLSX or ODS file (Ctrl+O), or drop it on the window.</li>
<li>Pick a column in <b>Columns</b>; the <b>Cells</b> table shows each cell as written and what it
reads as, with a mark: ✓ read, ○ blank, ✗ not read, ? unclear, ✎ set by hand.</li>
<li>Until a reading is used, <b>Cells</b> shows what the first reading in <b>Readings</b>
would give (in italics, “Reads as (preview)”); <i>Show in Cells</i> on another reading shows
that one instead. Nothing is recorded yet.</li>
<li>In <b>Readings</b>, press <i>Use this reading</i>; the step appears in the <b>Fix log</b>.</li>
<li>Double-click a “Reads as” cell to set it by hand (ISO 8601, e.g. 2026-10-03).</li>
<li>The <b>Date spread</b> shows where dates fall; hatched bars with “!” are set apart
(placeholders such as 1900-01-01, far-future dates). Click a bar to see its rows.</li>
<li>Next month: <b>Replay a fix log on a file…</b> shows what still fits before anything is
used.</li>
</ul>
<p>Keys: Ctrl+O open, Ctrl+S save fix log, Ctrl+Z undo, Ctrl+Shift+Z redo, Ctrl+F find,
Ctrl+E export, Ctrl+R replay, Ctrl+Q quit, F1 this page.</p>
"""


class AboutDialog(QDialog):
    """What datemend is for, the cautions, and the keys."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("About datemend")
        self.text = QTextBrowser()
        self.text.setHtml(ABOUT_HTML)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.reject)
        lay = QVBoxLayout(self)
        lay.addWidget(self.text)
        lay.addWidget(buttons)
        self.resize(560, 520)


class ReplayDialog(QDialog):
    """The check before a replayed table is used: what matched, what is new, what is missing.

    ``accepted`` means: use the replayed table.
    """

    def __init__(self, report_html: str, headline: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Replay check")
        top = QLabel(f"<b>{html.escape(headline)}</b>")
        top.setWordWrap(True)
        note = QLabel(
            "Nothing has been written. Read what changed since the fix log was made; "
            "then use the replayed table (problems are listed first) or go back."
        )
        note.setWordWrap(True)
        self.text = QTextBrowser()
        self.text.setHtml(report_html)
        buttons = QDialogButtonBox()
        role = QDialogButtonBox.ButtonRole
        self.use = buttons.addButton("Use the replayed table", role.AcceptRole)
        self.back = buttons.addButton("Go back", role.RejectRole)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        lay = QVBoxLayout(self)
        lay.addWidget(top)
        lay.addWidget(note)
        lay.addWidget(self.text, 1)
        lay.addWidget(buttons)
        self.resize(720, 560)


class ExportDialog(QDialog):
    """Where and how to write the clean copy. Signal ``export_requested(path, options, replace)``
    carries the target, an ``ExportOptions`` and whether an existing file may be replaced."""

    export_requested = Signal(object, object, bool)

    def __init__(self, suggested: Path, ask_path: Any, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Export a clean copy")
        self._ask_path = ask_path
        self.path = QLineEdit(str(suggested))
        browse = QPushButton("Choose…")
        browse.clicked.connect(self._browse)
        row = QHBoxLayout()
        row.addWidget(self.path, 1)
        row.addWidget(browse)
        self.keep_raw = QCheckBox("Keep the cells as written in a column beside each fixed one")
        self.unresolved = QCheckBox("Add a sheet listing every unresolved cell (XLSX)")
        self.unresolved.setChecked(True)
        self.log_sheet = QCheckBox("Add a sheet with the fix log's sentences (XLSX)")
        self.log_sheet.setChecked(True)
        self.date_format = QLineEdit("yyyy-mm-dd")
        self.zone = QLineEdit("UTC")
        self.zone.setToolTip("Values that carried a UTC offset are written in this zone.")
        self.delimiter = QComboBox()
        for label, d in (("comma", ","), ("semicolon", ";"), ("tab", "\t"), ("bar |", "|")):
            self.delimiter.addItem(label, d)
        self.bom = QCheckBox(
            "Start a CSV with a byte-order mark (some spreadsheet programs want it)"
        )
        self.new_workbook = QCheckBox(
            "XLSX: write the table on a new sheet (much faster for big files; the source's "
            "other sheets, formulas and formats are not copied)"
        )
        self.replace = QCheckBox("Replace the file if it exists")
        self.where = QLabel()
        self.where.setWordWrap(True)
        form = QFormLayout()
        form.addRow("Save as:", row)
        form.addRow("", self.keep_raw)
        form.addRow("", self.unresolved)
        form.addRow("", self.log_sheet)
        form.addRow("Date cell format:", self.date_format)
        form.addRow("Zone for times:", self.zone)
        form.addRow("CSV separator:", self.delimiter)
        form.addRow("", self.bom)
        form.addRow("", self.new_workbook)
        form.addRow("", self.replace)
        info = QLabel(
            "The source file is never written. XLSX keeps the rest of an XLSX source workbook; "
            "from CSV or ODS a new workbook is written. ODS is read, not written."
        )
        info.setWordWrap(True)
        self.error = QLabel()
        self.error.setStyleSheet(f"color: {OKABE_ITO['vermillion']}")
        self.error.setWordWrap(True)
        buttons = QDialogButtonBox()
        self.ok = buttons.addButton("Export", QDialogButtonBox.ButtonRole.AcceptRole)
        buttons.addButton(QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self._ok)
        buttons.rejected.connect(self.reject)
        lay = QVBoxLayout(self)
        lay.addLayout(form)
        lay.addWidget(info)
        lay.addWidget(self.error)
        lay.addWidget(buttons)

    def _browse(self) -> None:
        chosen = self._ask_path(self.path.text())
        if chosen:
            self.path.setText(str(chosen))

    def options(self) -> Any:
        from ..core.export import ExportOptions

        return ExportOptions(
            keep_raw=self.keep_raw.isChecked(),
            unresolved_sheet=self.unresolved.isChecked(),
            log_sheet=self.log_sheet.isChecked(),
            date_format=self.date_format.text().strip() or "yyyy-mm-dd",
            zone=self.zone.text().strip() or "UTC",
            delimiter=self.delimiter.currentData(),
            bom=self.bom.isChecked(),
            streaming=True if self.new_workbook.isChecked() else None,
        )

    def _ok(self) -> None:
        text = self.path.text().strip()
        if not text:
            self.error.setText("Choose where to save the clean copy.")
            return
        target = Path(text)
        if target.exists() and not self.replace.isChecked():
            self.error.setText(
                f"{target.name} exists already: tick “Replace the file if it exists” or choose "
                "another name."
            )
            return
        self.export_requested.emit(target, self.options(), self.replace.isChecked())
        self.accept()


class DeriveDialog(QDialog):
    """Add a worked-out column or a rule: pick a kind, fill its parameters, look at the first
    rows, then add it as a step. Signal ``step_requested(step)``.

    ``kinds`` are step classes; ``describe_params(cls)`` gives their parameter lists (the derive
    helper's ``parameters``); ``preview(step)`` returns a small DataFrame; ``columns`` are the
    names a column parameter may take.
    """

    step_requested = Signal(object)

    def __init__(
        self,
        kinds: list[type],
        describe_params: Any,
        preview: Any,
        columns: list[str],
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.setWindowTitle("Add a worked-out column or a rule")
        self._kinds = kinds
        self._params = describe_params
        self._preview = preview
        self._columns = columns
        self.kind = QComboBox()
        for cls in kinds:
            self.kind.addItem(getattr(cls, "title", "") or cls.kind, cls)
        self.kind.currentIndexChanged.connect(self._build_form)
        self.form_box = QWidget()
        self.form = QFormLayout(self.form_box)
        self.note = QLabel()
        self.note.setWordWrap(True)
        self.note.setStyleSheet(f"color: {OKABE_ITO['vermillion']}")
        self.table = QTableWidget(0, 0)
        self.table.setEditTriggers(QTableWidget.EditTrigger.NoEditTriggers)
        self.table.horizontalHeader().setStretchLastSection(True)
        self.table.verticalHeader().setDefaultSectionSize(self.fontMetrics().height() + 6)
        self.error = QLabel()
        self.error.setWordWrap(True)
        self.error.setStyleSheet(f"color: {OKABE_ITO['vermillion']}")
        show = QPushButton("Show the first rows")
        show.clicked.connect(self.show_preview)
        buttons = QDialogButtonBox()
        self.add = buttons.addButton("Add to the fix log", QDialogButtonBox.ButtonRole.AcceptRole)
        buttons.addButton(QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self._ok)
        buttons.rejected.connect(self.reject)
        lay = QVBoxLayout(self)
        top = QFormLayout()
        top.addRow("Kind:", self.kind)
        lay.addLayout(top)
        lay.addWidget(self.form_box)
        lay.addWidget(self.note)
        lay.addWidget(show, 0, Qt.AlignmentFlag.AlignLeft)
        lay.addWidget(self.table, 1)
        lay.addWidget(self.error)
        lay.addWidget(buttons)
        self.inputs: dict[str, tuple[dict[str, Any], QWidget]] = {}
        self.resize(640, 560)
        self._build_form()

    def _build_form(self) -> None:
        while self.form.rowCount():
            self.form.removeRow(0)
        self.inputs = {}
        cls = self.kind.currentData()
        if cls is None:
            return
        for p in self._params(cls):
            w = self._widget_for(p)
            if p.get("help"):
                w.setToolTip(p["help"])
            self.inputs[p["name"]] = (p, w)
            self.form.addRow(p["label"] + ":", w)
        self.note.setText(getattr(cls, "note", None) or "")
        self.table.setRowCount(0)
        self.error.setText("")

    def _widget_for(self, p: dict[str, Any]) -> QWidget:
        kind, default = p["type"], p["default"]
        if kind in ("column", "column-or-none"):
            w = QComboBox()
            if kind == "column-or-none" or not p["required"]:
                w.addItem("(none)", None)
            for c in self._columns:
                w.addItem(c, c)
            if default:
                w.setCurrentIndex(max(0, w.findData(default)))
            return w
        if kind == "as-of":
            # The day the log runs, or a date typed in (YYYY-MM-DD).
            w = QComboBox()
            w.setEditable(True)
            w.addItem(_AS_OF_WORDS, "replay-day")
            w.lineEdit().setPlaceholderText("YYYY-MM-DD")
            if default not in (None, "replay-day"):
                w.setEditText(str(default))
            return w
        if kind == "choice":
            w = QComboBox()
            labels = p.get("choice_labels") or {}
            for c in p["choices"]:
                w.addItem(str(labels.get(c, c)), c)
            if default is not None:
                w.setCurrentIndex(max(0, w.findData(default)))
            return w
        if kind == "bool":
            w = QCheckBox()
            w.setChecked(bool(default))
            return w
        if kind == "int":
            w = QSpinBox()
            w.setRange(-100000, 100000)
            w.setValue(int(default or 0))
            return w
        w = QLineEdit("" if default in (None, ()) else _text_of(default))
        if kind == "dates":
            w.setPlaceholderText("dates YYYY-MM-DD, separated by commas")
        return w

    def values(self) -> dict[str, Any]:
        """The parameters as JSON data, ready for the step kind's ``from_dict``."""
        out: dict[str, Any] = {}
        for name, (p, w) in self.inputs.items():
            if isinstance(w, QComboBox) and w.isEditable():
                text = w.currentText().strip()
                out[name] = "replay-day" if text in ("", _AS_OF_WORDS) else text
            elif isinstance(w, QComboBox):
                out[name] = w.currentData()
            elif isinstance(w, QCheckBox):
                out[name] = w.isChecked()
            elif isinstance(w, QSpinBox):
                out[name] = w.value()
            elif isinstance(w, QLineEdit):
                text = w.text().strip()
                if p["type"] == "dates":
                    out[name] = [t.strip() for t in text.split(",") if t.strip()]
                elif text or p["required"]:
                    out[name] = text
                elif p["default"] is None:
                    out[name] = None
        return out

    def step(self) -> Any:
        """The step the form describes; raises ValueError with one sentence when it is not one."""
        cls = self.kind.currentData()
        try:
            return cls.from_dict({"kind": cls.kind, **self.values()})
        except (TypeError, ValueError) as err:
            raise ValueError(str(err)) from None

    def show_preview(self) -> bool:
        try:
            step = self.step()
            frame = self._preview(step)
        except Exception as err:  # a sentence for the user, beside the form
            self.error.setText(str(err))
            self.table.setRowCount(0)
            return False
        self.error.setText("; ".join(frame.attrs.get("warnings", [])))
        self.table.setColumnCount(len(frame.columns))
        self.table.setHorizontalHeaderLabels([str(c) for c in frame.columns])
        self.table.setRowCount(len(frame))
        rule = getattr(step, "rule_label", None)
        for c, name in enumerate(frame.columns):
            if rule is not None and name == rule:  # the rule's mask: True marks a breaking row
                self.table.setHorizontalHeaderItem(c, QTableWidgetItem(f"{name}?"))
            for r in range(len(frame)):
                v = frame.iat[r, c]
                if rule is not None and name == rule:
                    dates = [frame.iat[r, k] for k in range(len(frame.columns)) if k != c]
                    text = "○ no date to check" if any(map(_is_na, dates)) else _rule_text(v)
                else:
                    text = _cell_text(v)
                self.table.setItem(r, c, QTableWidgetItem(text))
        self.table.resizeColumnsToContents()  # a few preview rows: cheap
        return True

    def _ok(self) -> None:
        try:
            step = self.step()
        except ValueError as err:
            self.error.setText(str(err))
            return
        self.step_requested.emit(step)
        self.accept()


_AS_OF_WORDS = "the day the fix log runs"


def _rule_text(v: Any) -> str:
    """A rule's preview cell in words (a bare True/False under the rule's name misleads)."""
    if _is_na(v):
        return ""
    return "✗ breaks it" if bool(v) else "✓ keeps it"


def _text_of(v: Any) -> str:
    if isinstance(v, tuple | list):
        return ", ".join(str(x) for x in v)
    if dataclasses.is_dataclass(v):
        return str(v)
    return str(v)


def _cell_text(v: Any) -> str:
    """A preview cell: empty for NA, ISO 8601 for dates (the date alone at midnight)."""
    if _is_na(v):
        return ""
    if hasattr(v, "isoformat"):
        if hasattr(v, "hour") and (v.hour, v.minute, v.second, v.microsecond) == (0, 0, 0, 0):
            return v.date().isoformat() if hasattr(v, "date") else v.isoformat()
        return v.isoformat()
    return str(v)


def _is_na(v: Any) -> bool:
    try:
        import pandas as pd

        return bool(pd.isna(v))
    except (TypeError, ValueError):
        return False
