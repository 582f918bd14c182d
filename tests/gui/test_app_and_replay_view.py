"""Starting the window from the command line, and the replay check's text."""

from __future__ import annotations

import sys

from PySide6.QtWidgets import QApplication

from datemend import cli
from datemend.core.replay import CellGroup, ColumnDrift, ReplayReport
from datemend.gui import app as gui_app
from datemend.gui.replay_view import replay_check_html


def test_cli_open_runs_the_window(qtbot, monkeypatch, tmp_path):
    made = []
    real = gui_app.make_window

    def make(file=None):
        w = real(file)
        qtbot.addWidget(w)
        made.append((w, file))
        return w

    monkeypatch.setattr(gui_app, "make_window", make)
    monkeypatch.setattr(QApplication, "exec", lambda self: 0)  # return at once instead of looping
    monkeypatch.setattr(sys, "excepthook", sys.excepthook)  # restored after the test
    assert cli.main(["open"]) == 0
    ((w, file),) = made
    assert file is None and w.windowTitle() == "datemend"
    assert not w.windowIcon().isNull()


def test_unexpected_slot_error_is_one_sentence(qtbot, monkeypatch):
    monkeypatch.setattr(sys, "excepthook", sys.excepthook)
    w = gui_app.make_window(None)
    qtbot.addWidget(w)
    try:
        raise RuntimeError("deep inside")
    except RuntimeError as err:
        sys.excepthook(type(err), err, err.__traceback__)
    text = w.last_message.text()
    assert "deep inside" not in text and "details were written to" in text
    w.close()


def _report(**kw) -> ReplayReport:
    group = CellGroup(shape="<aaa>", count=3, examples=("<script>x</script>",), rows=(5,))
    col = ColumnDrift(
        "Joined <i>", matched=7, blank=1, manual=0, unmatched=3, ambiguous=0, groups=(group,)
    )
    return ReplayReport(file="nov.csv", columns=(col,), **kw)


def test_replay_check_escapes_what_came_from_the_file():
    html = replay_check_html(_report())
    assert "<script>" not in html and "&lt;script&gt;" in html
    assert "Joined &lt;i&gt;" in html
    assert "Drift found" in html  # an unmatched group not seen before is drift


def test_replay_check_says_so_when_nothing_changed():
    col = ColumnDrift("Joined", matched=7, blank=1, manual=0, unmatched=0, ambiguous=0)
    html = replay_check_html(ReplayReport(file="nov.csv", columns=(col,)))
    assert "No drift" in html and "Nothing new." in html and "Nothing is missing." in html
