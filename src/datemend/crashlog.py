"""Where tracebacks go: a log file, never the user's screen."""

from __future__ import annotations

import datetime as _dt
import os
import tempfile
import traceback
from pathlib import Path

__all__ = ["log_dir", "write_crash"]


def log_dir() -> Path:
    """The folder for datemend's log file (``$DATEMEND_LOG_DIR``, else the XDG state folder)."""
    env = os.environ.get("DATEMEND_LOG_DIR")
    if env:
        return Path(env)
    base = os.environ.get("XDG_STATE_HOME") or str(Path.home() / ".local" / "state")
    return Path(base) / "datemend"


def write_crash(exc: BaseException, context: str = "") -> Path:
    """Append the traceback of ``exc`` to the log file and return its path."""
    text = "".join(traceback.format_exception(exc))
    stamp = _dt.datetime.now().isoformat(timespec="seconds")
    for folder in (log_dir(), Path(tempfile.gettempdir()) / "datemend"):
        try:
            folder.mkdir(parents=True, exist_ok=True)
            path = folder / "datemend.log"
            with path.open("a", encoding="utf-8") as fh:
                fh.write(f"--- {stamp} {context}\n{text}\n")
            return path
        except OSError:
            continue
    return Path(os.devnull)
