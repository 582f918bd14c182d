"""The process setting that gives freed memory back (datemend._memory)."""

from __future__ import annotations

import ctypes
import sys
from pathlib import Path

import pytest

from datemend._memory import return_freed_memory


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="glibc only")
def test_glibc_takes_the_setting_elsewhere_nothing_happens(monkeypatch):
    try:
        ctypes.CDLL("libc.so.6").mallopt  # noqa: B018
    except (OSError, AttributeError):
        pytest.skip("not glibc")
    assert return_freed_memory() is True  # mallopt(3) returns 1 on success
    monkeypatch.setattr(sys, "platform", "darwin")
    assert return_freed_memory() is False


def test_the_command_line_makes_the_setting(monkeypatch, capsys):
    import datemend._memory as mem
    from datemend import cli

    calls = []
    monkeypatch.setattr(mem, "return_freed_memory", lambda: calls.append(1) or True)
    sample = Path(__file__).parent.parent / "sample_files" / "rowing_club_2026-10.csv"
    cli.main(["scan", str(sample)])
    assert calls == [1]
    assert "Born" in capsys.readouterr().out  # the scan ran as usual
