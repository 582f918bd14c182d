"""Errors: one sentence on screen, the traceback in a log file.

A DatemendError's ``str`` is already the sentence for the user. Anything else is our fault: the
user is told where the details were written, and the traceback goes only to that file.
"""

from __future__ import annotations

import datetime as _dt
import os
import tempfile
import traceback
from pathlib import Path

from PySide6.QtCore import QStandardPaths

from ..core.table import DatemendError

__all__ = ["log_path", "sentence_for", "write_log"]


def log_path() -> Path:
    """Where tracebacks go: the app's local data folder, or the temp folder when there is none."""
    override = os.environ.get("DATEMEND_LOG_DIR")
    base = override or QStandardPaths.writableLocation(
        QStandardPaths.StandardLocation.AppLocalDataLocation
    )
    folder = Path(base) if base else Path(tempfile.gettempdir()) / "datemend"
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError:
        folder = Path(tempfile.gettempdir())
    return folder / "datemend.log"


def write_log(err: BaseException, what: str = "") -> Path:
    """Append the error and its traceback to the log file; return the file's path."""
    path = log_path()
    stamp = _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")
    text = "".join(traceback.format_exception(type(err), err, err.__traceback__))
    try:
        with path.open("a", encoding="utf-8") as fh:
            fh.write(f"--- {stamp} {what}\n{text}\n")
    except OSError:
        pass
    return path


def sentence_for(err: BaseException, what: str = "") -> str:
    """The one sentence to show for ``err`` (and log the details when it is not the user's)."""
    if isinstance(err, DatemendError):
        write_log(err, what)
        return str(err)
    path = write_log(err, what)
    if isinstance(err, OSError) and err.strerror:
        # The disk or the folder said no (missing folder, no permission, disk full): the user
        # can act on that, so say it plainly.
        if what:  # ``what`` names the user's file (err.filename may be a temporary one)
            return f"{what[0].upper()}{what[1:]} failed: {err.strerror}."
        name = Path(str(err.filename)).name if err.filename else "the file"
        return f"Working on {name} failed: {err.strerror}."
    doing = f" while {what}" if what else ""
    return (
        f"Something went wrong inside datemend{doing}; nothing was changed, "
        f"and the details were written to {path}."
    )
