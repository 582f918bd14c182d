"""The window with big tables: long work runs in jobs while the GUI thread keeps running, filters
on a big model pick the right rows, and Stop leaves the window usable.

Behaviour only, never timings: "keeps running" is a heartbeat timer that must tick while a job
runs (a GUI thread blocked for the whole job would not tick at all). Expected counts are worked
out in each test from the arrays it builds, with numpy, not read back from the model.
"""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import Qt, QTimer

from datemend.core.clean import CellState as S
from datemend.core.clean import ParsedColumn
from datemend.core.table import CellKind, RawColumn
from datemend.gui.cells_model import CellsModel, CellsSource, Column, RowFilter
from datemend.gui.window import MainWindow

BIG = 200_000


@pytest.fixture(scope="module")
def big_csv(tmp_path_factory):
    """An invented club export of BIG rows: a key and a D/M/YYYY join date (every 50th "n/a")."""
    path = tmp_path_factory.mktemp("big") / "members_big.csv"
    rng = np.random.default_rng(5)
    days = np.datetime64("1990-01-01") + rng.integers(0, 12_000, BIG).astype("timedelta64[D]")
    ymd = days.astype(str)  # YYYY-MM-DD, turned into D/M/YYYY below
    lines = ["Member,Joined"]
    for i, d in enumerate(ymd):
        joined = "n/a" if i % 50 == 0 else f"{int(d[8:])}/{int(d[5:7])}/{d[:4]}"
        lines.append(f"M{i:06d},{joined}")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


@pytest.fixture
def window(qtbot):
    w = MainWindow()
    qtbot.addWidget(w)
    w.show()
    qtbot.waitExposed(w)
    yield w
    w.close()


class Heartbeat:
    """A 20 ms timer on the GUI thread that counts its ticks."""

    def __init__(self) -> None:
        self.ticks = 0
        self.timer = QTimer()
        self.timer.setInterval(20)
        self.timer.timeout.connect(self._tick)

    def _tick(self) -> None:
        self.ticks += 1


def test_a_big_table_opens_through_a_job_while_the_gui_thread_keeps_running(qtbot, window, big_csv):
    beat = Heartbeat()
    seen_bar: list[bool] = []
    window.job_started.connect(lambda _job: seen_bar.append(window.job_bar.isVisible()))
    beat.timer.start()
    with qtbot.waitSignal(window.document_ready, timeout=120_000):
        job = window.open_file(big_csv)
        assert job is not None and job.is_running()  # open returned at once: the work is a job
    beat.timer.stop()
    assert seen_bar == [True]  # the work strip (progress and Stop) was shown for the job
    # Reading and scanning BIG rows takes many 20 ms beats of work; a blocked GUI thread
    # would have ticked at most once or twice. (Behaviour, not a time limit.)
    assert beat.ticks >= 5, beat.ticks
    assert window.cells.model.rowCount() == BIG
    assert not window.job_bar.isVisible()


def test_stop_cancels_opening_and_the_window_stays_usable(qtbot, window, big_csv, tmp_path):
    with qtbot.waitSignal(window.job_started) as started:
        window.open_file(big_csv)
    job = started.args[0]
    with qtbot.waitSignals([job.cancelled, job.ended], timeout=120_000):
        qtbot.mouseClick(window.job_bar.stop, Qt.MouseButton.LeftButton)
    assert window.session is None  # nothing of the stopped work was taken
    assert "stopped" in window.status.text()
    assert window.jobs == [] and not window.act_stop.isEnabled()
    small = tmp_path / "club.csv"
    small.write_text("Member,Joined\nR1,03/10/2019\nR2,14/02/2021\n", encoding="utf-8")
    with qtbot.waitSignal(window.document_ready, timeout=30_000):
        window.open_file(small)
    assert window.cells.model.rowCount() == 2


def test_find_in_a_big_column_runs_as_a_job(qtbot, window):
    n = 300_000
    raw = RawColumn(
        "Joined",
        np.array(["03/10/2019", "n/a", "14/02/2021"] * (n // 3), dtype=object),
        np.full(n, CellKind.TEXT, dtype=np.int8),
    )
    window.cells.set_source(CellsSource(raw, None, np.arange(n)))
    window.cells.find_pause_rows = 1000  # this column is big
    with qtbot.waitSignal(window.job_started, timeout=5000) as started:
        window.cells.find.setText("N/A")
        window.cells.find.returnPressed.emit()
    with qtbot.waitSignals(
        [started.args[0].ended, window.cells.model.rows_changed], timeout=30_000
    ):
        pass
    assert window.cells.model.rows.tolist() == list(range(1, n, 3))  # every 3rd from row 1
    # The index of distinct values is kept: the next find in this column needs no job.
    window.job_started.connect(lambda _j: pytest.fail("a second job for the same column"))
    window.cells.find.setText("2021")
    window.cells.find.returnPressed.emit()
    assert window.cells.model.rowCount() == n // 3


def _big_source(n: int, seed: int) -> tuple[CellsSource, np.ndarray]:
    rng = np.random.default_rng(seed)
    states = np.array([S.PARSED, S.BLANK, S.FAILED, S.AMBIGUOUS, S.MANUAL], dtype=np.int8)
    state = rng.choice(states, n, p=[0.9, 0.04, 0.03, 0.02, 0.01])
    rule = rng.random(n) < 0.005
    raw = RawColumn("d", np.full(n, "x", dtype=object), np.full(n, CellKind.TEXT, dtype=np.int8))
    parsed = ParsedColumn.empty("d", n).evolve(state=state)
    return CellsSource(raw, parsed, np.arange(n) + 2, rule_hits={"joined after today": rule}), (
        (state == S.FAILED) | (state == S.AMBIGUOUS) | rule
    )


def test_problems_only_on_a_million_rows_gives_the_worked_out_count(qtmodeltester):
    n = 1_000_000
    source, expected = _big_source(n, seed=11)
    m = CellsModel()
    m.set_source(source)
    m.set_filter(RowFilter(mode="problems"))
    # Expected: failed or unclear cells, or rows breaking a rule (issue 5 "problems"), by numpy.
    assert m.rowCount() == int(np.count_nonzero(expected))
    assert np.array_equal(m.rows, np.flatnonzero(expected))
    last = m.rowCount() - 1
    assert m.data(m.index(last, m.column_of(Column.ROW))) == str(np.flatnonzero(expected)[-1] + 2)
    m.set_filter(RowFilter(mode="all", problems_first=True))
    k = int(np.count_nonzero(expected))
    assert m.rowCount() == n
    assert bool(expected[m.rows[:k]].all()) and not bool(expected[m.rows[k:]].any())


class _AskedRows(CellsModel):
    """The cells model, noting which rows the view asks data() for."""

    asked: set[int]

    def data(self, index, role=int(Qt.ItemDataRole.DisplayRole)):
        self.asked.add(index.row())
        return super().data(index, role)


def test_scrolling_a_big_table_reads_only_the_rows_in_view(qtbot):
    """data() is asked for the rows on screen only, wherever the view is scrolled to."""
    from PySide6.QtWidgets import QTableView

    n = 1_000_000
    source, _ = _big_source(n, seed=3)
    model = _AskedRows()
    model.asked = set()
    model.set_source(source)
    table = QTableView()
    qtbot.addWidget(table)
    table.setModel(model)
    table.verticalHeader().setDefaultSectionSize(20)
    table.resize(900, 600)
    table.show()
    qtbot.waitExposed(table)
    for pos in (0, n // 3, n // 2, n - 1):
        model.asked.clear()
        table.scrollTo(model.index(pos, 0))

        def painted(pos: int = pos) -> bool:
            if pos in model.asked:
                return True
            table.viewport().update()  # ask again: a paint may be merged with an earlier one
            return False

        qtbot.waitUntil(painted, timeout=5000)
        assert 0 < len(model.asked) < 200  # a screenful (600 px / 20 px rows), not the table


# ------------------------------------------------------------ found by using the window
def test_a_column_that_is_not_dates_offers_no_reading_to_use(qtbot, window, tmp_path):
    p = tmp_path / "club.csv"
    p.write_text(
        "Member,Notes,Joined\nR1,Prefers bow seat,03/10/2019\nR2,Keys to boathouse,14/02/2021\n",
        encoding="utf-8",
    )
    with qtbot.waitSignal(window.document_ready, timeout=30_000):
        window.open_file(p)
    window.columns.choose("Notes")
    assert window.readings.cards == []  # no "Use this reading" that would only blank the text
    assert "left as written" in window.readings.summary.text()
    window.columns.choose("Joined")
    assert window.readings.cards  # a date column still offers its readings


def test_saving_a_log_where_it_cannot_be_written_is_one_plain_sentence(
    qtbot, window, tmp_path, monkeypatch
):
    p = tmp_path / "club.csv"
    p.write_text("Member,Joined\nR1,03/10/2019\n", encoding="utf-8")
    with qtbot.waitSignal(window.document_ready, timeout=30_000):
        window.open_file(p)
    target = tmp_path / "no such folder" / "club-fixlog.json"
    monkeypatch.setattr(window, "ask_save_log_path", lambda _s: str(target))
    window.save_log()
    text = window.last_message.text()
    assert text.startswith("Saving club-fixlog.json failed:") and "\n" not in text, text
    assert "went wrong inside" not in text and "Traceback" not in text
    window.last_message.close()


def test_loading_a_log_made_for_other_columns_says_so_in_a_dialog(
    qtbot, window, tmp_path, monkeypatch
):
    from datemend.core.readers import read_table
    from datemend.core.session import Session

    other = tmp_path / "other.csv"
    other.write_text("Ref,When\n1,03/10/2019\n2,14/02/2021\n", encoding="utf-8")
    s = Session(read_table(other))
    s.use_suggestion("When", s.report("When").best)
    s.save_log(tmp_path / "when-fixlog.json")
    club = tmp_path / "club.csv"
    club.write_text("Member,Joined\nR1,03/10/2019\n", encoding="utf-8")
    with qtbot.waitSignal(window.document_ready, timeout=30_000):
        window.open_file(club)
    monkeypatch.setattr(window, "ask_log_path", lambda: str(tmp_path / "when-fixlog.json"))
    window.load_log()
    assert window.last_message is not None and window.last_message.isVisible()
    assert (
        '"When"' in window.last_message.text() and "when-fixlog.json" in window.last_message.text()
    )
    window.last_message.close()
