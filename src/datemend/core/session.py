"""Session: the open document — raw table, fix log, column reports, current clean table, and an
undo/redo history of log edits. No Qt: the window subscribes to its events.
"""

from __future__ import annotations

import contextlib
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from .applylog import apply_entry, apply_run, step_runs
from .clean import CleanTable, ParsedColumn
from .fixlog import FixLog, LogEntry
from .progress import Progress
from .report import ColumnReport, Suggestion
from .rowkey import cells_text, detect_key_column, find_rows, key_of_row
from .spec import ParseSpec
from .steps import ApplyContext, BlankTokens, DatePart, ReadDates, RenameColumn, SetCell, Step
from .table import RawTable

__all__ = ["ApplyJob", "Session", "SessionEvent"]


@dataclass(frozen=True)
class SessionEvent:
    """What changed. ``what`` is one of:

    - ``"table"``: a new RawTable (another file or sheet); everything else follows.
    - ``"log"``: the fix log changed (an edit, undo, redo, load, accepted replay).
    - ``"clean"``: the CleanTable was recomputed; ``columns`` are the source columns whose parsed
      values changed (an empty tuple: none did; derived columns are named too).
    - ``"reports"``: column reports were computed or dropped; ``columns`` names them.
    - ``"history"``: what undo/redo can do changed (menu texts, enabled state).

    ``columns`` is None when every column may be affected.
    """

    what: str
    columns: tuple[str, ...] | None = None
    label: str = ""  # the edit's name, for "log" and "history" events


@dataclass(frozen=True)
class _Atom:
    label: str
    before: FixLog
    after: FixLog


@dataclass
class ApplyJob:
    """Recomputing the clean table, split so the window can run it off the GUI thread:
    ``run`` is pure (touches nothing of the session); ``Session.install`` takes its result."""

    log: FixLog
    raw: RawTable
    ctx: ApplyContext
    start: int  # first entry to apply
    base: CleanTable  # table after the first ``start`` entries
    results: list[CleanTable | None] = field(default_factory=list)

    def run(self, progress: Progress | None = None) -> CleanTable:
        """Apply the entries from ``start``; a run of steps that share work (hand-set cells)
        is applied in one go, its inner tables left out (None)."""
        table = self.base
        entries = self.log.entries
        n = len(entries)
        self.results = []
        for i, j in step_runs(entries, self.start):
            if progress is not None:
                progress.report(i - self.start, n - self.start, f"step {i + 1} of {n}")
            if j - i > 1:
                table = apply_run(table, entries, i, j, self.ctx)
                self.results.extend([None] * (j - i - 1))
            else:
                table = apply_entry(table, entries[i], i + 1, self.ctx)
            self.results.append(table)
        return table


def _same_entry(a: LogEntry, b: LogEntry) -> bool:
    return a is b or (a.enabled == b.enabled and a.step.to_dict() == b.step.to_dict())


class Session:
    """The open document.

    Reading: ``raw``, ``log``, ``clean`` (the log applied to ``raw``), ``report(column)`` (scanned
    on first use, cached), ``preview(column, spec)`` (what a reading would give, recording
    nothing), ``can_undo``/``can_redo``/``undo_label``/``redo_label``.

    Log edits (each one undo step, grouped with ``with session.group("label"):``): ``add_step``,
    ``remove_step``, ``set_enabled``, ``move_step``, ``replace_step``, ``set_log``,
    ``set_key_column``, ``rename_log_columns``, and the shortcuts ``use_suggestion``,
    ``blank_tokens``, ``set_cell``, ``keep_date_part``, ``rename``. A new edit clears redo.
    ``undo``/``redo`` restore the exact previous log.

    Events (``subscribe(callback)``; the callback gets a ``SessionEvent``), in this order after an
    edit: ``"log"``, then ``"clean"`` (once recomputed), then ``"history"``. ``set_table`` emits
    ``"table"``, ``"reports"`` (columns None: cache dropped) and ``"clean"``. ``scan_all`` emits
    ``"reports"``.

    With ``auto_apply=False`` an edit only emits ``"log"``; the window then runs
    ``job = session.apply_job()``, ``job.run(progress)`` in a worker, and ``session.install(job)``
    back on its thread (ignored, returning False, if the log changed meanwhile).
    """

    def __init__(
        self,
        raw: RawTable,
        log: FixLog | None = None,
        *,
        today: Any = None,
        prefer_day_order: str | None = None,
        reference_year: int | None = None,
        auto_apply: bool = True,
    ) -> None:
        self._raw = raw
        self._log = log if log is not None else FixLog(key_column=detect_key_column(raw))
        self._today = today
        self.prefer_day_order = prefer_day_order
        self.reference_year = reference_year
        self.auto_apply = auto_apply
        self._reports: dict[str, ColumnReport] = {}
        # the last preview: (table, column, spec, what reading the column with spec gives)
        self._preview: tuple[RawTable, str, ParseSpec, ParsedColumn] | None = None
        self._undo: list[_Atom] = []
        self._redo: list[_Atom] = []
        self._group: list[_Atom] | None = None
        self._group_depth = 0
        self._subscribers: list[Callable[[SessionEvent], None]] = []
        # _tables[i]: the table after the first i entries (None inside a run applied at once)
        self._tables: list[CleanTable | None] = []
        self._tables_for: FixLog | None = None
        self._recompute(emit=False)

    @classmethod
    def open(cls, path: str | Path, *, sheet: str | None = None, **kwargs: Any) -> Session:
        """Read a file (CSV, XLSX, ODS …) and start a session on it."""
        from .readers import read_table

        return cls(read_table(path, sheet=sheet), **kwargs)

    # ------------------------------------------------------------------ reading
    @property
    def raw(self) -> RawTable:
        return self._raw

    @property
    def log(self) -> FixLog:
        return self._log

    @property
    def clean(self) -> CleanTable:
        """The log applied to the table (as of the last recompute, see ``auto_apply``)."""
        table = self._tables[-1]
        assert table is not None
        return table

    @property
    def ctx(self) -> ApplyContext:
        if self._today is None:
            return ApplyContext(key_column=self._log.key_column)
        return ApplyContext(today=self._today, key_column=self._log.key_column)

    def report(self, column: str, progress: Progress | None = None) -> ColumnReport:
        """The scan of one column, computed on first use and cached (``progress`` lets a long
        scan be stopped part-way)."""
        rep = self._reports.get(column)
        if rep is None:
            from .infer import scan_column

            rep = scan_column(
                self._raw.column(column),
                self._raw.facts,
                prefer_day_order=self.prefer_day_order,
                reference_year=self.reference_year,
                progress=progress,
            )
            self._reports[column] = rep
        return rep

    def scan_all(self, progress: Progress | None = None) -> list[ColumnReport]:
        """Scan every column not yet scanned; emits "reports" for the new ones."""
        new = []
        names = self._raw.names
        for i, name in enumerate(names):
            if progress is not None:
                progress.report(i, len(names), f"scanning {name}")
            if name not in self._reports:
                self.report(name, progress)
                new.append(name)
        if new:
            self._emit(SessionEvent("reports", tuple(new)))
        return [self._reports[n] for n in names]

    def preview(self, column: str, spec: ParseSpec) -> ParsedColumn:
        """What reading ``column`` with ``spec`` gives (what ``use_suggestion`` would record),
        without recording anything: each cell's date shown before a reading is used. The last
        preview is kept (until its column is read), so asking for the same one again costs
        nothing."""
        hit = self.cached_preview(column, spec)
        if hit is not None:
            return hit
        from .parse import parse_column

        raw = self._raw
        parsed = parse_column(raw.column(column), spec, raw.facts)
        self._preview = (raw, column, spec, parsed)
        return parsed

    def cached_preview(self, column: str, spec: ParseSpec) -> ParsedColumn | None:
        """The kept preview if it is of ``column`` read with ``spec`` in this table, else None."""
        hit = self._preview
        if hit is not None and hit[0] is self._raw and hit[1] == column and hit[2] == spec:
            return hit[3]
        return None

    def cells_changed(self, index: int) -> int | None:
        """How many parsed cells the entry at ``index`` changed (None if not computed)."""
        if self._tables_for is not self._log or index + 1 >= len(self._tables):
            return None
        before, after = self._tables[index], self._tables[index + 1]
        if before is None or after is None:
            return None
        total = 0
        for name, pc in after.parsed.items():
            old = before.parsed.get(name)
            if old is pc:
                continue
            if old is None:
                total += len(pc)
                continue
            total += int(_changed_cells(old, pc).sum())
        return total

    # ------------------------------------------------------------------ events
    def subscribe(self, callback: Callable[[SessionEvent], None]) -> Callable[[], None]:
        """Call ``callback(event)`` on every change; returns a function that unsubscribes."""
        self._subscribers.append(callback)

        def unsubscribe() -> None:
            if callback in self._subscribers:
                self._subscribers.remove(callback)

        return unsubscribe

    def _emit(self, event: SessionEvent) -> None:
        for cb in list(self._subscribers):
            cb(event)

    # ------------------------------------------------------------------ history
    @property
    def can_undo(self) -> bool:
        return bool(self._undo)

    @property
    def can_redo(self) -> bool:
        return bool(self._redo)

    @property
    def undo_label(self) -> str:
        return self._undo[-1].label if self._undo else ""

    @property
    def redo_label(self) -> str:
        return self._redo[-1].label if self._redo else ""

    @contextlib.contextmanager
    def group(self, label: str) -> Iterator[None]:
        """Make every edit inside one undo step called ``label``."""
        if self._group_depth == 0:
            self._group = []
        self._group_depth += 1
        try:
            yield
        finally:
            self._group_depth -= 1
            if self._group_depth == 0:
                atoms, self._group = self._group or [], None
                if atoms:
                    self._push(_Atom(label, atoms[0].before, atoms[-1].after))

    def _push(self, atom: _Atom) -> None:
        self._undo.append(atom)
        self._redo.clear()
        self._emit(SessionEvent("history", label=atom.label))

    def undo(self) -> bool:
        if not self._undo:
            return False
        atom = self._undo.pop()
        self._redo.append(atom)
        self._install_log(atom.before, f"Undo {atom.label}")
        self._emit(SessionEvent("history", label=atom.label))
        return True

    def redo(self) -> bool:
        if not self._redo:
            return False
        atom = self._redo.pop()
        self._undo.append(atom)
        self._install_log(atom.after, f"Redo {atom.label}")
        self._emit(SessionEvent("history", label=atom.label))
        return True

    # ------------------------------------------------------------------ log edits
    def set_log(self, log: FixLog, label: str = "Replace the fix log") -> None:
        """Make ``log`` the session's log (one undo step)."""
        if log is self._log:
            return
        atom = _Atom(label, self._log, log)
        self._install_log(log, label)
        if self._group is not None:
            self._group.append(atom)
        else:
            self._push(atom)

    def add_step(self, step: Step, index: int | None = None) -> None:
        self.set_log(self._log.add(step, index), _short(step, "Add"))

    def remove_step(self, index: int) -> None:
        step = self._log.entries[index].step
        self.set_log(self._log.remove(index), _short(step, "Remove"))

    def set_enabled(self, index: int, enabled: bool) -> None:
        entry = self._log.entries[index]
        if entry.enabled != enabled:
            verb = "Turn on" if enabled else "Turn off"
            self.set_log(self._log.set_enabled(index, enabled), _short(entry.step, verb))

    def move_step(self, src: int, dst: int) -> None:
        if src != dst:
            step = self._log.entries[src].step
            self.set_log(self._log.move(src, dst), _short(step, "Move"))

    def replace_step(self, index: int, step: Step) -> None:
        self.set_log(self._log.replace(index, step), _short(step, "Change"))

    def set_key_column(self, name: str | None) -> None:
        """Choose the column that identifies rows for hand-set cells (None: row numbers)."""
        if name is not None:
            self._raw.column(name)  # KeyError naming the column if absent
        if name != self._log.key_column:
            self.set_log(self._log.evolve(key_column=name), "Choose the key column")

    # shortcuts the window's buttons call
    def use_suggestion(
        self, column: str, suggestion: Suggestion | ParseSpec, label: str | None = None
    ) -> None:
        """Read ``column`` with a suggestion (or a spec): replaces the column's last read-dates
        step in place, so later steps (hand-set cells, renames) keep applying; else appends."""
        if isinstance(suggestion, Suggestion):
            spec, text = suggestion.spec, suggestion.label if label is None else label
        else:
            spec, text = suggestion, label or ""
        step = ReadDates(column, spec, text)
        for i in range(len(self._log.entries) - 1, -1, -1):
            s = self._log.entries[i].step
            if isinstance(s, ReadDates) and s.column == column:
                self.replace_step(i, step)
                return
        self.add_step(step)

    def blank_tokens(self, tokens: Sequence[str], columns: Sequence[str] = ()) -> None:
        self.add_step(BlankTokens(tuple(tokens), tuple(columns)))

    def set_cell(self, column: str, row: int, value: str | None, note: str = "") -> None:
        """Set the cell at row position ``row`` by hand (ISO 8601 text, or None for blank). The
        row is keyed by the log's key column, else by its source row number. A second hand-set
        value for the same cell replaces the first step."""
        key_col = self._log.key_column
        if key_col is not None and key_col in self._raw:
            key = key_of_row(self._raw, key_col, row)
            if key == "" or len(find_rows(self._raw, key_col, key)) != 1:
                key_col = None  # this row's key is empty or shared: fall back to its row number
        else:
            key_col = None
        key = key_of_row(self._raw, key_col, row)
        raw = str(cells_text(self._raw.column(column), [row]).iat[0])
        step = SetCell(column, key, value, key_col, raw, note)
        for i, e in enumerate(self._log.entries):
            s = e.step
            if isinstance(s, SetCell) and (s.column, s.key, s.key_column) == (
                column,
                key,
                key_col,
            ):
                self.replace_step(i, step)
                return
        self.add_step(step)

    def rename_log_columns(self, mapping: dict[str, str]) -> None:
        """Make the log read renamed columns (e.g. a drift report's ``likely_renames``)."""
        log = self._log.with_columns_renamed(mapping)
        if log != self._log:
            self.set_log(log, "Follow renamed columns")

    def keep_date_part(self, column: str) -> None:
        self.add_step(DatePart(column))

    def rename(self, column: str, name: str) -> None:
        self.add_step(RenameColumn(column, name))

    # ------------------------------------------------------------------ files
    def load_log(self, path: str | Path) -> FixLog:
        """Read a log file and make it the session's log (undoable)."""
        log = FixLog.load(path)
        self.set_log(log, f"Load {Path(path).name}")
        return log

    def save_log(self, path: str | Path) -> FixLog:
        """Save the log with facts and value ranges of the current table; returns what was saved."""
        log = self._log.with_source(self.clean)
        log.save(path)
        return log

    def replay(self, log: FixLog | str | Path, progress: Progress | None = None) -> Any:
        """The drift report of ``log`` on this table (nothing changes until ``accept_replay``)."""
        from .replay import replay

        if not isinstance(log, FixLog):
            log = FixLog.load(log)
        return replay(log, self._raw, self.ctx_for(log), progress)

    def accept_replay(self, report: Any) -> None:
        """Take the replayed log and the table it gave (one undo step; the table is reused when
        the report was made on this session's table, so nothing is applied twice)."""
        log: FixLog = report.log
        table = getattr(report, "table", None)
        reuse = (
            isinstance(table, CleanTable)
            and table.raw is self._raw
            and len(log.entries) > 0
            and table.key_column == self.ctx_for(log).key_column
        )
        if not reuse:
            self.set_log(log, "Replay a fix log")
            return
        label = "Replay a fix log"
        atom = _Atom(label, self._log, log)
        old_clean = self._tables[-1] if self._tables else None
        old_log, self._log = self._log, log
        base = CleanTable(self._raw, key_column=table.key_column)
        self._tables = [base, *([None] * (len(log.entries) - 1)), table]
        self._tables_for = log
        self._emit(SessionEvent("log", _touched(old_log, log), label))
        self._emit(SessionEvent("clean", _clean_changes(old_clean, table)))
        if self._group is not None:
            self._group.append(atom)
        else:
            self._push(atom)

    def ctx_for(self, log: FixLog) -> ApplyContext:
        if self._today is None:
            return ApplyContext(key_column=log.key_column)
        return ApplyContext(today=self._today, key_column=log.key_column)

    def set_table(self, raw: RawTable) -> None:
        """Show another file or sheet; the log stays, reports are dropped, the log re-applies."""
        self._raw = raw
        self._reports.clear()
        self._tables = []
        self._tables_for = None
        self._emit(SessionEvent("table"))
        self._emit(SessionEvent("reports"))
        self._recompute(emit=True)

    # ------------------------------------------------------------------ applying
    def _install_log(self, log: FixLog, label: str) -> None:
        old = self._log
        self._log = log
        self._emit(SessionEvent("log", _touched(old, log), label))
        if self.auto_apply:
            self._recompute(emit=True)

    def apply_job(self) -> ApplyJob:
        """Capture what recomputing needs, reusing the tables of an unchanged prefix of steps."""
        log = self._log
        ctx = self.ctx
        start = 0
        prev = self._tables_for
        if prev is not None and self._tables and prev.key_column == log.key_column:
            for a, b in zip(prev.entries, log.entries):
                if not _same_entry(a, b) or start + 1 >= len(self._tables):
                    break
                start += 1
            while start and self._tables[start] is None:
                start -= 1  # inside a run applied at once: start where a table was kept
        kept = self._tables[start] if start else None
        base = kept if kept is not None else CleanTable(self._raw, key_column=ctx.key_column)
        return ApplyJob(log, self._raw, ctx, start, base)

    def install(self, job: ApplyJob) -> bool:
        """Take a finished job's tables (False if the log or table changed since it started)."""
        if job.log is not self._log or job.raw is not self._raw:
            return False
        old = self._tables[-1] if self._tables else None
        self._take(job)
        self._emit(SessionEvent("clean", _clean_changes(old, self.clean)))
        return True

    def _take(self, job: ApplyJob) -> None:
        prefix = self._tables[: job.start + 1] if job.start else [job.base]
        self._tables = [*prefix, *job.results]
        self._tables_for = job.log
        if self._preview is not None and self._preview[1] in self.clean.parsed:
            self._preview = None  # that column is read now: its preview is not shown

    def _recompute(self, emit: bool) -> None:
        job = self.apply_job()
        job.run()
        if emit:
            self.install(job)
        else:
            self._take(job)


def _short(step: Step, verb: str) -> str:
    return f"{verb} step: {step.describe()}"


def _touched(old: FixLog, new: FixLog) -> tuple[str, ...] | None:
    """Source columns named by steps that differ between two logs (None: key column changed)."""
    if old.key_column != new.key_column:
        return None
    a, b = old.entries, new.entries
    ids_a, ids_b = {id(e) for e in a}, {id(e) for e in b}
    steps = [e.step for e in a if id(e) not in ids_b]
    steps += [e.step for e in b if id(e) not in ids_a]
    # a move changes order only: name the moved steps' columns as well
    steps += [s.step for x, y in zip(a, b) if x is not y for s in (x, y)]
    cols: set[str] = set()
    for step in steps:
        named = step.columns_changed()
        if not named:  # a step over every column
            return None
        cols.update(named)
    return tuple(sorted(cols))


def _changed_cells(old: ParsedColumn, new: ParsedColumn) -> np.ndarray:
    same_value = (old.value == new.value) | (np.isnat(old.value) & np.isnat(new.value))
    return ~same_value | (old.state != new.state) | (old.offset_min != new.offset_min)


def _clean_changes(old: CleanTable | None, new: CleanTable) -> tuple[str, ...] | None:
    if old is None or old.raw is not new.raw:
        return None
    names = set(old.parsed) | set(new.parsed)
    changed = {n for n in names if old.parsed.get(n) is not new.parsed.get(n)}
    dnames = set(old.derived) | set(new.derived)
    changed |= {n for n in dnames if old.derived.get(n) is not new.derived.get(n)}
    return tuple(sorted(changed))
