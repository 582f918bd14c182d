"""The main window: Columns | Cells and Date spread | Readings and Fix log, with menus and keys.

The window holds no date logic (file-level flows — fix-log files, replay, export, worked-out
columns — are in ``flows.py``). It turns clicks into calls on the core's Session, runs long work
(open, scan, replay, export, applying a long log) as Jobs, and redraws when the Session says
something changed. Questions to the user go through ``ask_*`` methods and dialogs are shown with
``open()``, so tests replace the former and reach the latter as attributes.

Signals:
    document_ready(): a file (or a replayed table) is shown.
    table_refreshed(): the views were redrawn after the session changed.
    job_started(object): a Job began (tests wait on its signals).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np
from PySide6.QtCore import QSettings, Qt, Signal
from PySide6.QtGui import QAction, QCloseEvent, QDragEnterEvent, QDropEvent, QIcon, QKeySequence
from PySide6.QtWidgets import QLabel, QMainWindow, QMessageBox, QSplitter

from ..core.clean import ParsedColumn
from ..core.session import Session, SessionEvent
from ..core.spec import ParseSpec
from ..core.table import CellKind, RawColumn
from .cells_model import CellsSource
from .cells_pane import CellsPane
from .columns_pane import ColumnsPane
from .dialogs import AboutDialog, DeriveDialog, ExportDialog, ReplayDialog
from .errors import sentence_for
from .files import FileAsker, make_settings
from .fixlog_panel import FixLogPanel, StepRow
from .flows import FileFlows
from .jobs import Job, JobBar
from .readings import ReadingsPanel, default_shown

__all__ = ["MainWindow"]

ICON = Path(__file__).with_name("datemend.svg")
MAX_RECENT = 8


class MainWindow(FileFlows, QMainWindow, FileAsker):
    """See the module docstring."""

    document_ready = Signal()
    table_refreshed = Signal()
    job_started = Signal(object)

    def __init__(self, settings: QSettings | None = None) -> None:
        super().__init__()
        self.setWindowTitle("datemend")
        self.setWindowIcon(QIcon(str(ICON)))
        self.setAcceptDrops(True)
        self.settings = settings or make_settings()
        self.session: Session | None = None
        self.path: Path | None = None
        self.sheet: str | None = None
        self.column: str | None = None
        self.jobs: list[Job] = []
        self._apply_job: Job | None = None
        self._unsubscribe: Any = None
        #: Tables with at least this many rows apply fix-log edits in a Job, off the GUI thread.
        self.apply_in_thread_rows = 200_000
        #: Columns with at least this many rows work out their preview (the dates a reading
        #: gives, shown before one is used) in a Job.
        self.preview_in_thread_rows = 200_000
        self._preview_job: Job | None = None
        self.about_dialog: AboutDialog | None = None
        self.replay_dialog: ReplayDialog | None = None
        self.export_dialog: ExportDialog | None = None
        self.derive_dialog: DeriveDialog | None = None
        self.last_message: QMessageBox | None = None
        self.last_export: Any = None

        self.columns = ColumnsPane()
        self.cells = CellsPane()
        self.readings = ReadingsPanel()
        self.fixlog = FixLogPanel()
        right = QSplitter(Qt.Orientation.Vertical)
        right.addWidget(self.readings)
        right.addWidget(self.fixlog)
        right.setStretchFactor(0, 3)
        right.setStretchFactor(1, 2)
        right.setSizes([480, 290])
        main = QSplitter(Qt.Orientation.Horizontal)
        main.addWidget(self.columns)
        main.addWidget(self.cells)
        main.addWidget(right)
        main.setStretchFactor(0, 1)
        main.setStretchFactor(1, 4)
        main.setStretchFactor(2, 2)
        main.setSizes([235, 715, 330])
        main.setChildrenCollapsible(False)
        self.setCentralWidget(main)
        self.job_bar = JobBar()
        self.status = QLabel("Open a CSV, XLSX or ODS file (Ctrl+O), or drop one here.")
        self.statusBar().addWidget(self.status, 1)
        self.statusBar().addPermanentWidget(self.job_bar)

        self._make_actions()
        self.cells.table.setContextMenuPolicy(Qt.ContextMenuPolicy.ActionsContextMenu)
        self.cells.table.addActions([self.act_hand, self.act_blank_value])
        self.columns.column_chosen.connect(self.show_column)
        self.columns.sheet_chosen.connect(lambda s: self.open_file(self.path, sheet=s))
        self.readings.use_requested.connect(self._use_reading)
        self.readings.blank_requested.connect(self._blank_tokens)
        self.readings.problem.connect(self.show_error)
        self.readings.preview_changed.connect(self._preview_changed)
        self.cells.hand_set_requested.connect(self._hand_set)
        self.cells.run_job = self.run_job
        self.fixlog.toggle_requested.connect(self._toggle_step)
        self.fixlog.remove_requested.connect(lambda i: self._edit(lambda s: s.remove_step(i)))
        self.fixlog.move_requested.connect(lambda i, j: self._edit(lambda s: s.move_step(i, j)))
        self.fixlog.save_requested.connect(self.save_log)
        self.fixlog.load_requested.connect(self.load_log)
        self.job_bar.stop.setShortcut(QKeySequence("Esc"))
        self.resize(1280, 800)
        self._update_actions()

    # ------------------------------------------------------------------ actions and menus
    def _act(self, text: str, slot: Any, keys: Any = None, tip: str = "") -> QAction:
        a = QAction(text, self)
        if keys is not None:
            a.setShortcuts(keys if isinstance(keys, list) else [QKeySequence(keys)])
        if tip:
            a.setStatusTip(tip)
            a.setToolTip(tip)
        a.triggered.connect(lambda _checked=False: slot())
        self.addAction(a)
        return a

    def _make_actions(self) -> None:
        K = QKeySequence.StandardKey
        self.act_open = self._act("&Open file…", self.ask_and_open, QKeySequence(K.Open))
        self.act_save_log = self._act("&Save fix log…", self.save_log, QKeySequence(K.Save))
        self.act_load_log = self._act("&Load fix log…", self.load_log, "Ctrl+L")
        self.act_replay = self._act(
            "&Replay a fix log on a file…",
            self.ask_and_replay,
            "Ctrl+R",
            "Run a saved fix log on another file and see what changed before using it.",
        )
        self.act_export = self._act("&Export a clean copy…", self.open_export, "Ctrl+E")
        self.act_quit = self._act("&Quit", self.close, QKeySequence(K.Quit))
        self.act_quit.setShortcut(QKeySequence("Ctrl+Q"))
        self.act_undo = self._act("&Undo", self.undo, QKeySequence(K.Undo))
        self.act_redo = self._act(
            "&Redo", self.redo, [QKeySequence("Ctrl+Shift+Z"), QKeySequence("Ctrl+Y")]
        )
        self.act_find = self._act("&Find a value", self.focus_find, QKeySequence(K.Find))
        self.act_hand = self._act(
            "Set the cell by &hand",
            self.edit_current_cell,
            "F2",
            "Type the date of the selected cell yourself (recorded in the fix log).",
        )
        self.act_blank_value = self._act(
            "Treat this &value as blank",
            self.blank_current_value,
            "Ctrl+B",
            "Every cell of this column written like the selected one becomes blank (one step).",
        )
        self.act_derive = self._act("Add a &worked-out column or rule…", self.open_derive, "Ctrl+D")
        self.act_all = self._act("Show &all cells", lambda: self.cells.show_mode("all"), "Ctrl+1")
        self.act_problems = self._act(
            "Show cells needing a &look", lambda: self.cells.show_mode("problems"), "Ctrl+2"
        )
        self.act_first = self._act(
            "&Problems first", lambda: self.cells.problems_first.toggle(), "Ctrl+3"
        )
        panes = [
            ("&Columns", self.columns.list),
            ("C&ells", self.cells.table),
            ("&Date spread", self.cells.chart),
            ("&Readings", _Focus(self.readings.focus_first)),
            ("&Fix log", self.fixlog.list),
        ]
        self.go_actions = [
            self._act(f"Go to {name}", w.setFocus, f"Alt+{i}")
            for i, (name, w) in enumerate(panes, start=1)
        ]
        self.act_stop = self._act("&Stop the running work", self.stop_jobs)
        self.act_about = self._act(
            "&About datemend and cautions", self.show_about, QKeySequence(K.HelpContents)
        )
        self.act_about.setShortcuts([QKeySequence("F1")])

        bar = self.menuBar()
        m = bar.addMenu("&File")
        m.addAction(self.act_open)
        self.recent_menu = m.addMenu("Open r&ecent")
        m.addSeparator()
        m.addActions([self.act_save_log, self.act_load_log, self.act_replay])
        m.addSeparator()
        m.addAction(self.act_export)
        m.addSeparator()
        m.addAction(self.act_quit)
        m = bar.addMenu("&Edit")
        m.addActions([self.act_undo, self.act_redo])
        m.addSeparator()
        m.addActions([self.act_find, self.act_hand, self.act_blank_value, self.act_derive])
        m = bar.addMenu("&View")
        m.addActions([self.act_all, self.act_problems, self.act_first])
        m.addSeparator()
        m.addActions(self.go_actions)
        m = bar.addMenu("&Work")
        m.addAction(self.act_stop)
        m = bar.addMenu("&Help")
        m.addAction(self.act_about)
        self._fill_recent()

    def _update_actions(self) -> None:
        s = self.session
        has = s is not None
        for a in (self.act_save_log, self.act_load_log, self.act_export, self.act_derive):
            a.setEnabled(has)
        self.act_undo.setEnabled(has and s.can_undo)
        self.act_redo.setEnabled(has and s.can_redo)
        self.act_undo.setText(f"&Undo {s.undo_label}" if has and s.can_undo else "&Undo")
        self.act_redo.setText(f"&Redo {s.redo_label}" if has and s.can_redo else "&Redo")
        self.act_stop.setEnabled(bool(self.jobs))

    # ------------------------------------------------------------------ recent files
    def recent_files(self) -> list[str]:
        value = self.settings.value("recent", [])
        if isinstance(value, str):
            value = [value]
        return [str(v) for v in (value or [])]

    def _remember(self, path: Path) -> None:
        items = [p for p in self.recent_files() if p != str(path)]
        self.settings.setValue("recent", [str(path), *items][:MAX_RECENT])
        self.settings.sync()
        self._fill_recent()

    def _fill_recent(self) -> None:
        self.recent_menu.clear()
        files = self.recent_files()
        for i, p in enumerate(files, start=1):
            a = self.recent_menu.addAction(f"&{i} {Path(p).name}")
            a.setToolTip(p)
            a.triggered.connect(lambda _c=False, p=p: self.open_file(p))
        self.recent_menu.setEnabled(bool(files))

    # ------------------------------------------------------------------ long work
    def run_job(self, title: str, fn: Any, on_done: Any, what: str = "") -> Job:
        """Run ``fn(progress)`` off the GUI thread; ``on_done(result)`` runs back here."""
        job = Job(title, fn, self)
        self.jobs.append(job)
        self.job_bar.attach(job)
        job.succeeded.connect(on_done)
        job.failed.connect(lambda err: self.show_error(sentence_for(err, what or title.lower())))
        job.cancelled.connect(lambda: self.say(f"{title}: stopped; nothing was changed."))
        job.ended.connect(lambda: self._job_ended(job))
        self.act_stop.setEnabled(True)
        job.start()
        self.job_started.emit(job)
        return job

    def _job_ended(self, job: Job) -> None:
        if job in self.jobs:
            self.jobs.remove(job)
        if self.jobs and self.job_bar.job is None:
            self.job_bar.attach(self.jobs[-1])
        self.act_stop.setEnabled(bool(self.jobs))
        job.deleteLater()

    def stop_jobs(self) -> None:
        for job in list(self.jobs):
            job.cancel()

    # ------------------------------------------------------------------ opening
    def ask_and_open(self) -> None:
        path = self.ask_open_path()
        if path:
            self.open_file(path)

    def open_file(self, path: str | Path | None, sheet: str | None = None) -> Job | None:
        """Read and scan a file in a Job; the window shows it when done."""
        if path is None:
            return None
        path = Path(path)

        def work(progress: Any) -> tuple[Session, list[str]]:
            from ..core.readers import list_sheets, read_table

            sheets = [s.name for s in list_sheets(path) if s.visible]
            raw = read_table(path, sheet=sheet, progress=progress)
            progress.check()
            session = Session(raw)
            session.scan_all(progress)
            progress.check()  # a Stop pressed during the last column still stops the open
            # the column shown first: its preview is ready when the window shows it
            first = _first_date_column(session)
            if first is not None and first not in session.clean.parsed:
                shown = default_shown(session.report(first))
                if shown is not None:
                    session.preview(first, shown.spec)
                    progress.check()
            return session, sheets

        return self.run_job(
            f"Opening {path.name}",
            work,
            lambda result: self._adopt(result[0], path, result[1]),
            what=f"opening {path.name}",
        )

    def _adopt(self, session: Session, path: Path, sheets: list[str]) -> None:
        if self._unsubscribe is not None:
            self._unsubscribe()
        self.session = session
        session.auto_apply = session.raw.n_rows < self.apply_in_thread_rows
        self._unsubscribe = session.subscribe(self._on_event)
        self.path = path
        self.sheet = session.raw.facts.sheet
        self._remember(path)
        self.setWindowTitle(f"{session.raw.facts.where()} — datemend")
        self.columns.set_sheets(sheets, self.sheet)
        first = _first_date_column(session)
        self.column = None
        self._refresh_columns()
        self._refresh_log()
        self._update_actions()
        self.say(f"Opened {session.raw.facts.where()}: {session.raw.n_rows:,} rows.")
        if first is not None:
            self.columns.choose(first)
        self.document_ready.emit()

    # ------------------------------------------------------------------ session events
    def _on_event(self, ev: SessionEvent) -> None:
        s = self.session
        if s is None:
            return
        if ev.what == "log":
            self._refresh_log()
            if not s.auto_apply:
                self._start_apply()
        elif ev.what == "clean":
            self._refresh_columns()
            self._refresh_log()
            self._show_cells(keep_filter=True)
            self._refresh_blank_offer()
            warnings = s.clean.warnings
            if warnings:
                self.say(warnings[-1])
            self.table_refreshed.emit()
        elif ev.what in ("reports", "table"):
            self._refresh_columns()
        self._update_actions()

    def _start_apply(self) -> None:
        s = self.session
        assert s is not None
        if self._apply_job is not None:
            self._apply_job.cancel()
        apply = s.apply_job()
        job = self.run_job("Applying the fix log", apply.run, lambda _r: s.install(apply))
        self._apply_job = job
        job.ended.connect(lambda: self._apply_done(job))

    def _apply_done(self, job: Job) -> None:
        if self._apply_job is job:
            self._apply_job = None

    # ------------------------------------------------------------------ views
    def _refresh_columns(self) -> None:
        s = self.session
        if s is None:
            return
        reports = {n: s.report(n) for n in s.raw.names}
        self.columns.set_columns(
            s.raw.names, s.clean, reports, self.column, derived=list(s.clean.derived)
        )

    def _refresh_log(self) -> None:
        s = self.session
        if s is None:
            self.fixlog.set_steps([])
            return
        rows = [
            StepRow(e.step.describe(), e.enabled, s.cells_changed(i))
            for i, e in enumerate(s.log.entries)
        ]
        self.fixlog.set_steps(rows)

    def show_column(self, name: str) -> None:
        """Show one column (of the file, or worked out by the log) in Cells and Readings."""
        s = self.session
        if s is None or (name not in s.raw and name not in s.clean.derived):
            return
        changed = name != self.column
        self.column = name
        if name in s.raw:
            self.readings.set_report(s.report(name))
            self._refresh_blank_offer()
        else:
            self.readings.set_report(None)
            note = s.clean.derived[name].note
            self.readings.summary.setText(
                f"“{name}” is worked out by the fix log." + (f" {note}" if note else "")
            )
        self._show_cells(keep_filter=not changed)

    def _refresh_blank_offer(self) -> None:
        s, col = self.session, self.column
        if s is not None and col is not None and col in s.raw:
            self.readings.set_blank_state(col in s.clean.parsed, s.log.blank_tokens(col))

    def _show_cells(self, keep_filter: bool) -> None:
        s = self.session
        if s is None or self.column is None:
            self.cells.set_source(None)
            return
        raw = s.raw
        if self.column not in raw and self.column not in s.clean.derived:
            self.column = None
            self.cells.set_source(None)
            return
        key = s.log.key_column
        keys = None
        if key is not None and key in raw and key != self.column:
            keys = raw.column(key)  # each key read when its row is shown
        assert raw.source_rows is not None
        column = (
            raw.column(self.column)
            if self.column in raw
            else _derived_as_raw(self.column, s.clean.derived[self.column].values)
        )
        parsed = s.clean.parsed.get(self.column)
        preview = None
        if parsed is None and self.column in raw:
            parsed, preview = self._preview_of(self.column)
        src = CellsSource(
            column,
            parsed,
            raw.source_rows,
            keys,
            key,
            dict(s.clean.rule_hits),
            preview,
        )
        self.cells.set_source(src, keep_filter=keep_filter)

    def _preview_changed(self) -> None:
        """The preview follows the reading shown and the Readings choices (a column already
        read keeps its view)."""
        s = self.session
        if s is not None and self.column is not None and self.column not in s.clean.parsed:
            self._show_cells(keep_filter=True)

    def _preview_of(self, col: str) -> tuple[ParsedColumn | None, str | None]:
        """(dates, name) of the reading Readings shows for a column not read yet (the first,
        for a column that looks like dates, or the one "Show in Cells" chose), with the choices
        laid over it: worked out here for a small column; for a big one in a Job, and shown
        when it is done. (None, None) meanwhile, or when no reading is shown."""
        s = self.session
        report = self.readings.report
        if s is None or report is None or report.column != col:
            return None, None
        wanted = self.readings.preview()  # none for a column the scan finds no dates in
        if wanted is None:
            return None, None
        spec, label = wanted
        parsed = s.cached_preview(col, spec)
        if parsed is None and s.raw.n_rows < self.preview_in_thread_rows:
            parsed = s.preview(col, spec)
        if parsed is None:
            self._start_preview(col, spec)
            return None, None
        return parsed, label

    def _start_preview(self, col: str, spec: ParseSpec) -> None:
        """Work out a big column's preview in a Job (one at a time: when it ends, the cells are
        shown again, which starts the next one if the column or the choices changed)."""
        s = self.session
        if s is None or (self._preview_job is not None and self._preview_job.is_running()):
            return

        def done(_result: object) -> None:
            if self.session is s:
                self._preview_changed()

        self._preview_job = self.run_job(
            f"Previewing a reading of “{col}”",
            lambda _progress: s.preview(col, spec),
            done,
        )

    def say(self, text: str) -> None:
        self.status.setText(text)

    def show_error(self, sentence: str) -> QMessageBox:
        """One sentence in a dialog (never a traceback); the dialog does not block."""
        self.say(sentence)
        box = QMessageBox(QMessageBox.Icon.Warning, "datemend", sentence, parent=self)
        box.setStandardButtons(QMessageBox.StandardButton.Ok)
        box.open()
        self.last_message = box
        return box

    def show_about(self) -> None:
        if self.about_dialog is None:
            self.about_dialog = AboutDialog(self)
        self.about_dialog.open()

    def focus_find(self) -> None:
        self.cells.find.setFocus()
        self.cells.find.selectAll()

    def edit_current_cell(self) -> None:
        from .cells_model import Column

        t = self.cells.table
        col = self.cells.model.column_of(Column.READS)
        row = t.currentIndex().row()
        if col >= 0 and row >= 0:
            idx = self.cells.model.index(row, col)
            t.setCurrentIndex(idx)
            t.edit(idx)

    def blank_current_value(self) -> None:
        """Record a "treat as blank" step for the selected cell's text, in this column."""
        s, col = self.session, self.column
        row = self.cells.table.currentIndex().row()
        if s is None or col is None or row < 0 or col not in s.raw:
            return
        from ..core.rowkey import key_text

        r = int(self.cells.model.rows[row])
        text = key_text(s.raw.column(col))[r]  # trimmed text, cached per column
        if not text:
            self.say("That cell is empty already.")
            return
        self._blank_tokens((str(text),))

    # ------------------------------------------------------------------ edits
    def _edit(self, fn: Any) -> None:
        """Run one session edit; a user's mistake becomes one sentence."""
        if self.session is None:
            return
        try:
            fn(self.session)
        except (ValueError, KeyError) as err:
            self.show_error(str(err.args[0]) if err.args else str(err))
        except Exception as err:  # shown as one sentence, the traceback goes to the log
            self.show_error(sentence_for(err, "changing the fix log"))

    def _use_reading(self, spec: Any, label: str) -> None:
        col = self.column
        if col is not None:
            self._edit(lambda s: s.use_suggestion(col, spec, label))

    def _blank_tokens(self, tokens: tuple[str, ...]) -> None:
        col = self.column
        if col is None:
            return
        s = self.session
        if s is not None and col not in s.clean.parsed:
            self.show_error(f'Read "{col}" as dates first; then tokens can be treated as blank.')
            return
        self._edit(lambda s: s.blank_tokens(tokens, (col,)))

    def _hand_set(self, row: int, text: str) -> None:
        col = self.column
        if col is not None:
            self._edit(lambda s: s.set_cell(col, row, text or None))

    def _toggle_step(self, i: int) -> None:
        s = self.session
        if s is not None:
            self._edit(lambda s: s.set_enabled(i, not s.log.entries[i].enabled))

    def undo(self) -> None:
        self._edit(lambda s: s.undo())

    def redo(self) -> None:
        self._edit(lambda s: s.redo())

    # ------------------------------------------------------------------ window events
    def dragEnterEvent(self, event: QDragEnterEvent) -> None:
        urls = event.mimeData().urls()
        if urls and urls[0].isLocalFile():
            event.acceptProposedAction()

    def dropEvent(self, event: QDropEvent) -> None:
        urls = event.mimeData().urls()
        if urls and urls[0].isLocalFile():
            event.acceptProposedAction()
            self.open_file(urls[0].toLocalFile())

    def closeEvent(self, event: QCloseEvent) -> None:
        for job in list(self.jobs):
            job.cancel()
        for job in list(self.jobs):
            job.wait()
        super().closeEvent(event)


def _first_date_column(s: Session) -> str | None:
    """The column shown first: the first one read as dates or looking like dates."""
    for name in s.raw.names:
        if name in s.clean.parsed or s.report(name).is_date:
            return name
    return s.raw.names[0] if s.raw.names else None


class _Focus:
    """Something that takes the keyboard focus through a function (for the Go to actions)."""

    def __init__(self, fn: Any) -> None:
        self.setFocus = fn


def _derived_as_raw(name: str, values: Any) -> RawColumn:
    """A worked-out column shown in Cells, NA as empty. Numbers and flags stay Python values with
    their kind (the table formats only the rows in view: no million-string conversion on the
    GUI thread); dates and anything else become text once."""
    import pandas as pd

    na = values.isna().to_numpy()
    dtype = values.dtype
    if pd.api.types.is_bool_dtype(dtype):
        cells, kind = values.to_numpy(dtype=object), CellKind.BOOL
    elif pd.api.types.is_integer_dtype(dtype):
        cells, kind = values.to_numpy(dtype=object), CellKind.INT
    elif pd.api.types.is_float_dtype(dtype):
        cells, kind = values.to_numpy(dtype=object), CellKind.FLOAT
    else:
        cells, kind = values.astype(str).to_numpy(dtype=object), CellKind.TEXT
    cells[na] = None
    kinds = np.where(na, CellKind.EMPTY, kind).astype(np.int8)
    return RawColumn(name, cells, kinds)
