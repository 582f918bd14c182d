"""Long work off the GUI thread: a Job runs ``fn(progress)`` in a QThread and reports back.

The work itself is a plain core function taking a ``core.progress.Progress``; the Job only moves
its progress and its outcome to the GUI thread. No Python signal is emitted from the worker: it
only leaves its latest progress under a lock, which a timer on the GUI thread passes on (at most
20 times a second), so connecting to a Job while it runs is safe. The outcome signals are emitted
after the thread has finished, so whoever waits on them never sees a thread still running.

Signals of Job:
    progressed(int, int, str): done, total, text (from the work's Progress.report).
    succeeded(object): the work's return value.
    failed(object): the exception the work raised (not Cancelled).
    cancelled(): the work stopped because cancel() was called.
    ended(): after any of the three above.
"""

from __future__ import annotations

import threading
import weakref
from collections.abc import Callable
from typing import Any

from PySide6.QtCore import QObject, QThread, QTimer, Signal
from PySide6.QtWidgets import QHBoxLayout, QLabel, QProgressBar, QPushButton, QWidget

from ..core.progress import Cancelled, Progress

__all__ = ["Job", "JobBar", "live_threads", "running_jobs"]

_RUNNING: set[Job] = set()
_THREADS: weakref.WeakSet[QThread] = weakref.WeakSet()


def running_jobs() -> list[Job]:
    """Jobs whose thread has started and whose outcome has not yet been delivered."""
    return list(_RUNNING)


def live_threads() -> list[QThread]:
    """Job threads still running (a test fails if it leaves one)."""
    return [t for t in list(_THREADS) if t.isRunning()]


class _Thread(QThread):
    def __init__(self, fn: Callable[[Progress], Any], progress: Progress) -> None:
        super().__init__()
        self.fn = fn
        self.progress = progress
        self.result: Any = None
        self.error: BaseException | None = None

    def run(self) -> None:
        try:
            self.result = self.fn(self.progress)
        except BaseException as err:  # delivered to the GUI thread, never lost
            self.error = err


class Job(QObject):
    """One piece of long work; see the module docstring for the signals."""

    progressed = Signal(int, int, str)
    succeeded = Signal(object)
    failed = Signal(object)
    cancelled = Signal()
    ended = Signal()

    def __init__(self, title: str, fn: Callable[[Progress], Any], parent: QObject | None = None):
        super().__init__(parent)
        self.title = title
        self.progress = Progress(self._report)
        self._lock = threading.Lock()
        self._latest: tuple[int, int, str] | None = None
        self._poll = QTimer(self)
        self._poll.setInterval(50)
        self._poll.timeout.connect(self._flush)
        self._thread = _Thread(fn, self.progress)
        _THREADS.add(self._thread)
        self._thread.finished.connect(self._deliver)

    def _report(self, done: int, total: int, text: str) -> None:
        # Runs on the worker thread: store only; the GUI thread's timer passes it on.
        with self._lock:
            self._latest = (int(done), int(total), str(text))

    def _flush(self) -> None:
        with self._lock:
            latest, self._latest = self._latest, None
        if latest is not None:
            self.progressed.emit(*latest)

    def start(self) -> None:
        _RUNNING.add(self)
        self._poll.start()
        self._thread.start()

    def cancel(self) -> None:
        """Ask the work to stop; it stops at its next progress report."""
        self.progress.cancel()

    def is_running(self) -> bool:
        return self in _RUNNING

    def wait(self, ms: int = 30_000) -> bool:
        """Block until the thread ends (used when the window closes)."""
        return self._thread.wait(ms)

    def _deliver(self) -> None:
        self._poll.stop()
        self._flush()
        _RUNNING.discard(self)
        err = self._thread.error
        if isinstance(err, Cancelled):
            self.cancelled.emit()
        elif err is not None:
            self.failed.emit(err)
        else:
            self.succeeded.emit(self._thread.result)
        self.ended.emit()


class JobBar(QWidget):
    """The status-bar strip for the running job: its title, a progress bar and a Stop button."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.label = QLabel()
        self.bar = QProgressBar()
        self.bar.setMaximumWidth(220)
        self.bar.setTextVisible(True)
        self.stop = QPushButton("&Stop")
        self.stop.setToolTip("Stop the running work (Esc). Nothing is changed by stopped work.")
        lay = QHBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.addWidget(self.label)
        lay.addWidget(self.bar)
        lay.addWidget(self.stop)
        self.job: Job | None = None
        self.stop.clicked.connect(self._stop)
        self.hide()

    def attach(self, job: Job) -> None:
        self.job = job
        self.label.setText(job.title)
        self.bar.setRange(0, 0)
        self.stop.setEnabled(True)
        job.progressed.connect(self._progress)
        job.ended.connect(self._ended)
        self.show()

    def _progress(self, done: int, total: int, text: str) -> None:
        if total > 0:
            self.bar.setRange(0, total)
            self.bar.setValue(min(done, total))
        if text:
            self.label.setText(f"{self.job.title if self.job else ''} — {text}")

    def _stop(self) -> None:
        if self.job is not None:
            self.stop.setEnabled(False)
            self.label.setText("Stopping…")
            self.job.cancel()

    def _ended(self) -> None:
        self.job = None
        self.hide()
