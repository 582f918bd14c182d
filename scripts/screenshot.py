"""Render the window on the October sample, offscreen, into assets/screenshot.png (1280×800).

Run: QT_QPA_PLATFORM=offscreen python scripts/screenshot.py [FILE] [OUT]
The shot shows the first date column read with its best suggestion and one placeholder token
treated as blank, so every panel has something in it.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_files" / "rowing_club_2026-10.xlsx"
OUT = ROOT / "assets" / "screenshot.png"


def main(argv: list[str]) -> int:
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    os.environ.setdefault(
        "DATEMEND_SETTINGS", str(Path(os.environ.get("TMPDIR", "/tmp")) / "dm.ini")
    )
    from PySide6.QtCore import QEventLoop, QTimer

    from datemend.gui.app import make_app
    from datemend.gui.window import MainWindow

    sample = Path(argv[1]) if len(argv) > 1 else SAMPLE
    out = Path(argv[2]) if len(argv) > 2 else OUT
    app = make_app(["datemend"])
    w = MainWindow()
    w.resize(1280, 800)
    w.show()
    loop = QEventLoop()
    w.document_ready.connect(loop.quit)
    QTimer.singleShot(60_000, loop.quit)
    w.open_file(sample)
    loop.exec()
    if w.session is None:
        msg = w.last_message.text() if w.last_message else "no message"
        print("could not open", sample, msg, file=sys.stderr)
        return 1
    s = w.session
    # Read every date column with its best suggestion, then show the one with most to check.
    dates = [n for n in s.raw.names if s.report(n).is_date and s.report(n).best is not None]
    for n in dates:
        s.use_suggestion(n, s.report(n).best)
    name = _pick_column(w, dates)
    if name is not None:
        w.columns.choose(name)
        w.cells.problems_first.setChecked(True)
        w.cells.table.selectRow(0)
    for _ in range(5):  # let layout requests settle (word-wrapped labels take a few passes)
        app.processEvents()
    out.parent.mkdir(exist_ok=True)
    w.grab().save(str(out))
    print(f"wrote {out} ({w.width()}×{w.height()})")
    w.close()
    return 0


def _pick_column(w, dates: list[str]) -> str | None:
    """The read column with a few cells not read (the most telling picture), else the first."""
    s = w.session
    todo = {n: s.clean.parsed[n].counts()["failed"] for n in dates if n in s.clean.parsed}
    some = [n for n, k in todo.items() if k]
    return max(some, key=todo.get) if some else (dates[0] if dates else None)


if __name__ == "__main__":
    raise SystemExit(main(sys.argv))
