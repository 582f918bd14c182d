"""GUI test setup: offscreen Qt, a private settings/log folder, and no thread left running."""

from __future__ import annotations

import os
import threading

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")


def pytest_configure(config):
    # The offscreen platform plugin warns that it cannot pass size hints to a window manager it
    # does not have; that says nothing about our code, so only that one message is let through.
    config.addinivalue_line("qt_log_ignore", "This plugin does not support propagateSizeHints")


@pytest.fixture(autouse=True)
def _private_folders(tmp_path, monkeypatch):
    """Keep QSettings and the error log of tests out of the user's own folders."""
    monkeypatch.setenv("DATEMEND_LOG_DIR", str(tmp_path / "log"))
    monkeypatch.setenv("DATEMEND_SETTINGS", str(tmp_path / "settings.ini"))
    yield


@pytest.fixture(autouse=True)
def _no_thread_left(qapp):
    """Fail a test that leaves a job thread (or a new Python thread) running."""
    from datemend.gui.jobs import live_threads, running_jobs

    before = set(threading.enumerate())
    yield
    left = [t.name for t in threading.enumerate() if t not in before and t.is_alive()]
    left = [n for n in left if not n.startswith("Dummy-")]
    qt_left = live_threads()
    for t in qt_left:  # do not let one test's thread spill into the next
        t.wait(5000)
    if left or qt_left or running_jobs():
        pytest.fail(f"test left threads running: python {left}, job threads {len(qt_left)}")
