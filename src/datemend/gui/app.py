"""Start the desktop window: ``datemend`` and ``datemend open [FILE]`` call ``run_app``."""

from __future__ import annotations

import sys
from types import TracebackType

from PySide6.QtGui import QIcon
from PySide6.QtWidgets import QApplication

from .errors import sentence_for
from .window import ICON, MainWindow

__all__ = ["make_app", "make_window", "run_app"]


def make_app(argv: list[str] | None = None) -> QApplication:
    """The QApplication (made once), named so settings and the log folder are ours."""
    app = QApplication.instance()
    if app is None:
        from .._memory import return_freed_memory

        return_freed_memory()  # a window may be open for hours: give freed memory back
        QApplication.setApplicationName("datemend")
        QApplication.setOrganizationName("datemend")
        app = QApplication(argv if argv is not None else sys.argv[:1])
        app.setWindowIcon(QIcon(str(ICON)))
    assert isinstance(app, QApplication)
    return app


def make_window(file: str | None = None) -> MainWindow:
    """The shown window, opening ``file`` if given; unexpected errors in slots become one
    sentence on screen with the traceback in the log file."""
    make_app()
    window = MainWindow()

    def hook(kind: type[BaseException], err: BaseException, tb: TracebackType | None) -> None:
        window.show_error(sentence_for(err.with_traceback(tb), "working"))

    sys.excepthook = hook
    window.show()
    if file:
        window.open_file(file)
    return window


def run_app(file: str | None = None) -> int:
    """Open the window (on ``file`` if given) and run until it is closed; the exit code."""
    app = make_app()
    window = make_window(file)
    code = int(app.exec())
    window.close()  # stops and waits for any work still running
    return code
