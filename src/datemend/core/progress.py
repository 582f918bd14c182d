"""Progress reporting and cancelling for long work, with no Qt: the GUI and CLI each adapt it."""

from __future__ import annotations

import threading
from collections.abc import Callable

__all__ = ["Cancelled", "Progress"]


class Cancelled(Exception):
    """Raised inside long work when the user asked to stop it."""


class Progress:
    """Passed into long functions. ``report(done, total, text)`` tells the front end how far the
    work is; it raises ``Cancelled`` once ``cancel()`` has been called (from any thread)."""

    def __init__(self, callback: Callable[[int, int, str], None] | None = None) -> None:
        self._callback = callback
        self._cancel = threading.Event()

    def cancel(self) -> None:
        self._cancel.set()

    @property
    def cancelled(self) -> bool:
        return self._cancel.is_set()

    def check(self) -> None:
        if self._cancel.is_set():
            raise Cancelled("cancelled by the user")

    def report(self, done: int, total: int, text: str = "") -> None:
        self.check()
        if self._callback is not None:
            self._callback(done, total, text)


#: A Progress that reports nowhere and is never cancelled.
def silent() -> Progress:
    return Progress()
