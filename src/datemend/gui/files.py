"""Questions about files, asked with the platform's file dialogs, and where settings live.

The window asks through these methods only, so a test replaces them (monkeypatch) and no
dialog ever blocks a test run.
"""

from __future__ import annotations

import os
from pathlib import Path

from PySide6.QtCore import QSettings
from PySide6.QtWidgets import QFileDialog, QWidget

__all__ = ["DATA_FILTER", "LOG_FILTER", "FileAsker", "make_settings"]

DATA_FILTER = "Tables (*.csv *.tsv *.txt *.xlsx *.xlsm *.ods *.parquet);;All files (*)"
LOG_FILTER = "Fix logs (*.json);;All files (*)"
OUT_FILTER = "XLSX workbook (*.xlsx);;CSV (*.csv);;Parquet (*.parquet)"


def make_settings() -> QSettings:
    """The app's settings (recent files). DATEMEND_SETTINGS names an INI file instead (tests)."""
    path = os.environ.get("DATEMEND_SETTINGS")
    if path:
        return QSettings(path, QSettings.Format.IniFormat)
    return QSettings("datemend", "datemend")


class FileAsker:
    """The ``ask_*`` methods of the window; each returns a path, or None when the user cancels."""

    def _parent(self) -> QWidget | None:
        return self if isinstance(self, QWidget) else None

    def ask_open_path(self) -> str | None:
        path, _ = QFileDialog.getOpenFileName(self._parent(), "Open a table", "", DATA_FILTER)
        return path or None

    def ask_log_path(self) -> str | None:
        path, _ = QFileDialog.getOpenFileName(self._parent(), "Load a fix log", "", LOG_FILTER)
        return path or None

    def ask_save_log_path(self, suggested: Path) -> str | None:
        path, _ = QFileDialog.getSaveFileName(
            self._parent(), "Save the fix log", str(suggested), LOG_FILTER
        )
        return path or None

    def ask_export_path(self, suggested: str) -> str | None:
        path, _ = QFileDialog.getSaveFileName(
            self._parent(), "Export a clean copy", suggested, OUT_FILTER
        )
        return path or None

    def ask_replay_paths(self) -> tuple[str, str] | None:
        log = self.ask_log_path()
        if not log:
            return None
        data, _ = QFileDialog.getOpenFileName(
            self._parent(), "The file to replay the fix log on", "", DATA_FILTER
        )
        return (log, data) if data else None
