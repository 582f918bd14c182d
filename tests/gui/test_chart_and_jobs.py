"""The date spread chart (bars, set-apart placeholders, clicks) and long work off the GUI thread."""

from __future__ import annotations

import threading

import numpy as np
import pytest
from PySide6.QtCore import QPoint, Qt

from datemend.core.progress import Progress
from datemend.gui.chart import DateSpread, bars_for
from datemend.gui.jobs import Job, JobBar


def member_dates() -> np.ndarray:
    # 2010..2026, one join date per year on 1 March, plus placeholders (worked out by hand).
    years = [f"{y}-03-01" for y in range(2010, 2027)]
    return np.array(years + ["1900-01-01"] * 3 + ["9999-12-31", "NaT"], dtype="datetime64[us]")


def test_placeholders_and_sentinels_are_set_apart():
    bars = bars_for(member_dates())
    assert [b.label for b in bars if b.apart] == ["1900-01-01", "9999-12-31"]
    assert bars[0].apart and bars[0].count == 3
    assert bars[-1].apart and bars[-1].count == 1
    main = [b for b in bars if not b.apart]
    assert [b.label for b in main] == [str(y) for y in range(2010, 2027)]
    assert all(b.count == 1 for b in main)
    assert sum(b.count for b in bars) == 21  # NaT is not counted


def test_short_span_is_counted_by_month():
    v = np.array(["2026-10-03", "2026-10-30", "2026-12-01"], dtype="datetime64[us]")
    bars = bars_for(v)
    assert [(b.label, b.count) for b in bars] == [("2026-10", 2), ("2026-11", 0), ("2026-12", 1)]


def test_no_dates_no_bars():
    assert bars_for(np.array(["NaT"], dtype="datetime64[us]")) == []


def test_clicking_a_bar_says_its_range_and_keys_move_it(qtbot):
    w = DateSpread()
    qtbot.addWidget(w)
    w.resize(600, 160)
    w.show()
    w.set_values(member_dates())
    qtbot.waitExposed(w)
    rects = w._layout()
    with qtbot.waitSignal(w.bar_chosen) as got:
        qtbot.mouseClick(w, Qt.MouseButton.LeftButton, pos=rects[0].center().toPoint())
    assert got.args == [np.datetime64("1900-01-01", "us"), np.datetime64("1900-01-02", "us")]
    with qtbot.waitSignal(w.bar_chosen) as got:
        qtbot.keyClick(w, Qt.Key.Key_Right)
    assert got.args[0] == np.datetime64("2010-01-01", "us")
    with qtbot.waitSignal(w.cleared):
        qtbot.keyClick(w, Qt.Key.Key_Escape)
    with qtbot.waitSignal(w.cleared):
        qtbot.mouseClick(w, Qt.MouseButton.LeftButton, pos=QPoint(2, 2))
    w.grab()  # paints without a Qt warning (warnings fail the test)


def _slow_job(started: threading.Event):
    def work(progress: Progress) -> str:
        started.set()
        i = 0
        while True:  # stops only through Progress.report raising Cancelled
            progress.report(i % 100, 100, "counting")
            i += 1
            threading.Event().wait(0.002)

    return work


def test_cancel_stops_a_long_job(qtbot):
    bar = JobBar()
    qtbot.addWidget(bar)
    started = threading.Event()
    job = Job("Counting", _slow_job(started))
    bar.attach(job)
    with qtbot.waitSignal(job.progressed, timeout=5000):
        job.start()
    assert job.is_running()
    with qtbot.waitSignals([job.cancelled, job.ended], timeout=5000):
        qtbot.mouseClick(bar.stop, Qt.MouseButton.LeftButton)
    assert not job.is_running()
    assert bar.isHidden()


def test_job_result_and_error_reach_the_gui_thread(qtbot):
    ok = Job("Adding", lambda progress: 2 + 3)
    with qtbot.waitSignal(ok.succeeded, timeout=5000) as got:
        ok.start()
    assert got.args == [5]

    def boom(progress: Progress) -> None:
        raise ValueError("no such thing")

    bad = Job("Failing", boom)
    with qtbot.waitSignal(bad.failed, timeout=5000) as got:
        bad.start()
    assert isinstance(got.args[0], ValueError)


@pytest.mark.parametrize("n", [0, 1])
def test_chart_paints_empty_and_single(qtbot, n):
    w = DateSpread()
    qtbot.addWidget(w)
    w.resize(300, 120)
    w.set_values(np.array(["2026-10-03"] * n, dtype="datetime64[us]"))
    assert len(w.bars) == n
    assert not w.grab().isNull()


def test_chart_years_and_quartiles_agree_with_numpy():
    """The chart's fast year and quartile counts against numpy's own (the reference):
    np.percentile (linear) and datetime64 → year conversion, including a 9999 sentinel."""
    from datemend.gui.chart import _quartiles, _years_of

    rng = np.random.default_rng(4)
    for trial in range(200):
        n = int(rng.integers(1, 60))
        years = rng.integers(1890, 2040, n)
        if trial % 3 == 0:
            years[: int(rng.integers(0, n))] = 1900  # many placeholders
        assert np.allclose(_quartiles(years), np.percentile(years, [25, 75])), years
        days = rng.integers(0, 365, n).astype("timedelta64[D]")
        v = (years.astype(str).astype("datetime64[Y]").astype("datetime64[D]") + days).astype(
            "datetime64[us]"
        )
        if trial % 5 == 0:
            v[0] = np.datetime64("9999-12-31", "us")  # a span too long for the day table
        expected = v.astype("datetime64[Y]").astype(np.int64) + 1970
        assert np.array_equal(_years_of(v), expected)
