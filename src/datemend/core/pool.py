"""Threads the engine lends itself for work beside its main line: Arrow kernels (hashing,
normalising), which release Python's lock, so a second core can take them."""

from __future__ import annotations

import threading
from concurrent.futures import ThreadPoolExecutor

__all__ = ["helpers", "lend"]

_HELPERS: ThreadPoolExecutor | None = None
_LOCK = threading.Lock()


def helpers() -> ThreadPoolExecutor:
    """The engine's helper threads (two, created on first use; shared by every scan)."""
    global _HELPERS
    with _LOCK:
        if _HELPERS is None:
            _HELPERS = ThreadPoolExecutor(max_workers=2, thread_name_prefix="datemend-helper")
        return _HELPERS


def lend() -> ThreadPoolExecutor | None:
    """The helper threads for work the caller will wait for, or None on a helper thread
    itself (which then does the work in line: a helper never waits for another)."""
    if threading.current_thread().name.startswith("datemend-helper"):
        return None
    return helpers()
