"""What the window does with whole files: save and load fix logs, replay a log on another
file (with the replay check first), export a clean copy, add worked-out columns and rules.

A mixin of MainWindow: it uses the window's session, ``run_job``, ``ask_*`` methods and dialogs.
"""

from __future__ import annotations

import contextlib
from pathlib import Path
from typing import Any

from ..core.fixlog import FixLog
from ..core.session import Session
from .dialogs import DeriveDialog, ExportDialog, ReplayDialog
from .errors import sentence_for
from .jobs import Job

__all__ = ["FileFlows"]


class FileFlows:
    """Fix-log files, replay, export and worked-out columns (mixed into MainWindow)."""

    session: Session | None
    path: Path | None
    replay_dialog: ReplayDialog | None
    export_dialog: ExportDialog | None
    derive_dialog: DeriveDialog | None
    last_export: Any

    # ------------------------------------------------------------------ fix log files
    def save_log(self) -> None:
        s = self.session
        if s is None:
            return
        path = self.ask_save_log_path(self._beside("-fixlog.json"))
        if not path:
            return
        try:
            s.save_log(path)
        except Exception as err:  # one sentence; the traceback goes to the log
            self.show_error(sentence_for(err, f"saving {Path(path).name}"))
            return
        self.say(f"Saved the fix log to {path}.")

    def load_log(self) -> None:
        if self.session is None:
            return
        path = self.ask_log_path()
        if not path:
            return
        before = self.session.log
        self._edit(lambda s: s.load_log(path))
        s = self.session
        skipped = [w for w in s.clean.warnings if "skipped" in w] if s.auto_apply else []
        if s.log is not before and skipped:
            # A log made for other columns: say so in a dialog, not only in the status bar.
            more = f" ({len(skipped) - 1} more in the fix log)" if len(skipped) > 1 else ""
            self.show_error(f"{Path(path).name}: {skipped[0]}{more}")

    def _beside(self, suffix: str) -> Path:
        base = self.path or Path.home() / "datemend"
        return base.with_name(base.stem + suffix)

    # ------------------------------------------------------------------ replay
    def ask_and_replay(self) -> None:
        paths = self.ask_replay_paths()
        if paths:
            self.replay_files(*paths)

    def replay_files(self, log_path: str | Path, data_path: str | Path) -> Job:
        """Read a log and a file, replay in a Job, then show the replay check."""
        log_path, data_path = Path(log_path), Path(data_path)

        def work(progress: Any) -> tuple[Session, Any, list[str]]:
            from ..core.readers import list_sheets, read_table

            log = FixLog.load(log_path)
            raw = read_table(data_path, progress=progress)
            session = Session(raw, FixLog(key_column=log.key_column))
            session.scan_all(progress)
            report = session.replay(log, progress)
            sheets = [s.name for s in list_sheets(data_path) if s.visible]
            progress.check()  # a Stop pressed during the last step still stops the replay
            return session, report, sheets

        return self.run_job(
            f"Replaying {log_path.name} on {data_path.name}",
            work,
            lambda r: self._show_replay(r[0], r[1], data_path, r[2]),
            what=f"replaying {log_path.name} on {data_path.name}",
        )

    def _show_replay(self, session: Session, report: Any, path: Path, sheets: list[str]) -> None:
        from .replay_view import replay_check_html

        headline = _headline(report, path)
        dialog = ReplayDialog(replay_check_html(report), headline, self)
        self.replay_dialog = dialog
        dialog.accepted.connect(lambda: self._accept_replay(session, report, path, sheets))
        dialog.open()

    def _accept_replay(self, session: Session, report: Any, path: Path, sheets: list[str]) -> None:
        self._adopt(session, path, sheets)
        self._edit(lambda s: s.accept_replay(report))
        self.cells.problems_first.setChecked(True)
        self.say(f"Replayed the fix log on {path.name}; cells needing a look are listed first.")

    # ------------------------------------------------------------------ export, derive
    def open_export(self) -> None:
        if self.session is None:
            return
        dialog = ExportDialog(self._beside("-clean.xlsx"), self.ask_export_path, self)
        dialog.export_requested.connect(self.export_to)
        self.export_dialog = dialog
        dialog.open()

    def export_to(self, target: Path, options: Any, replace: bool) -> Job | None:
        s = self.session
        if s is None:
            return None
        clean = s.clean
        lines = [e.step.describe() for e in s.log.entries if e.enabled]

        def work(progress: Any) -> Any:
            from ..core.export import export_table

            return export_table(
                clean,
                target,
                options=options,
                log_lines=lines,
                overwrite=replace,
                progress=progress,
            )

        def done(result: Any) -> None:
            self.last_export = result
            self.say(
                f"Wrote {result.path.name}: {result.dates_written:,} dates, "
                f"{result.unresolved:,} cells left as written ({result.writer_text})."
            )

        return self.run_job(f"Exporting {target.name}", work, done, f"exporting {target.name}")

    def open_derive(self) -> None:
        s = self.session
        if s is None:
            return
        from ..core import derive
        from ..core.steps import STEP_TYPES

        with contextlib.suppress(ImportError):
            from ..core import checks  # noqa: F401 - registers the rule steps
        kinds = [
            c
            for c in STEP_TYPES.values()
            if c.__module__.endswith((".derive", ".checks")) and getattr(c, "title", "")
        ]
        names = list(
            dict.fromkeys(
                [pc.output_name for pc in s.clean.parsed.values()] + list(s.clean.derived)
            )
        )
        dialog = DeriveDialog(
            kinds,
            derive.parameters,
            lambda step: derive.preview(step, s.clean, 8, s.ctx),
            names,
            self,
        )
        dialog.step_requested.connect(lambda step: self._edit(lambda s: s.add_step(step)))
        self.derive_dialog = dialog
        dialog.open()


def _headline(report: Any, path: Path) -> str:
    for name in ("headline", "summary"):
        v = getattr(report, name, None)
        v = v() if callable(v) else v
        if isinstance(v, str) and v:
            return v
    lines = getattr(report, "lines", None)
    if callable(lines):
        got = list(lines())
        if got:
            return str(got[0])
    return f"The fix log was replayed on {path.name}."
