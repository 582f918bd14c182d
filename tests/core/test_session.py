"""Session: undo/redo of every log edit restores the exact previous state; events; re-apply."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from datemend.core.clean import CellState, CleanTable
from datemend.core.fixlog import FixLog, apply_log
from datemend.core.session import Session, SessionEvent
from datemend.core.spec import ParseSpec
from datemend.core.steps import ApplyContext, BlankTokens, DatePart, ReadDates, RenameColumn
from datemend.core.table import RawTable

TODAY = dt.date(2026, 11, 30)
ISO = ParseSpec(patterns=("iso-date",))


def _raw() -> RawTable:
    return RawTable.from_dataframe(
        pd.DataFrame(
            {
                "Member no": ["M1", "M2", "M3", "M4"],
                "Born": ["1970-01-02", "n/a", "1985-04-12", "garbage"],
                "Joined": ["2020-05-01", "2021-06-02", "-", "2024-11-13"],
                "Name": ["Ann", "Bo", "Cy", "Di"],
            }
        )
    )


def _session(**kw) -> Session:
    s = Session(_raw(), today=TODAY, **kw)
    s.add_step(ReadDates("Born", ISO, "ISO 8601"))
    s.add_step(ReadDates("Joined", ISO, "ISO 8601"))
    s.add_step(BlankTokens(("n/a", "-")))
    return s


def _snapshot(table: CleanTable) -> dict:
    out = {"warnings": table.warnings}
    for name, pc in table.parsed.items():
        out[name] = (
            pc.output_name,
            pc.date_only,
            tuple(pc.value.astype("int64")),
            tuple(pc.state),
            tuple(pc.offset_min),
            tuple(pc.reason),
        )
    return out


EDITS = [
    # (name, edit) — every kind of log edit the session offers
    ("add", lambda s: s.add_step(DatePart("Born"))),
    ("add at index", lambda s: s.add_step(RenameColumn("Joined", "Member since"), 0)),
    ("remove", lambda s: s.remove_step(2)),
    ("disable", lambda s: s.set_enabled(2, False)),
    ("move", lambda s: s.move_step(2, 0)),
    ("replace", lambda s: s.replace_step(0, ReadDates("Born", ISO, "another label"))),
    ("key column", lambda s: s.set_key_column("Name")),
    ("use suggestion", lambda s: s.use_suggestion("Born", ParseSpec(patterns=("iso-week",)))),
    ("set cell", lambda s: s.set_cell("Born", 3, "1990-05-02")),
    ("set cell blank", lambda s: s.set_cell("Joined", 0, None)),
    ("blank tokens", lambda s: s.blank_tokens(["garbage"], ["Born"])),
    ("keep date part", lambda s: s.keep_date_part("Joined")),
    ("rename", lambda s: s.rename("Born", "Date of birth")),
    ("set log", lambda s: s.set_log(FixLog())),
]


def test_edit_names_do_not_repeat():
    assert len({e[0] for e in EDITS}) == len(EDITS)


@pytest.mark.parametrize(("name", "edit"), EDITS, ids=[e[0] for e in EDITS])
def test_undo_and_redo_restore_the_exact_state(name, edit):
    s = _session()
    before_log, before = s.log, _snapshot(s.clean)
    edit(s)
    after_log, after = s.log, _snapshot(s.clean)
    assert after_log != before_log
    assert s.can_undo and not s.can_redo and s.undo_label
    assert s.undo()
    assert s.log is before_log and _snapshot(s.clean) == before
    assert s.can_redo and s.redo_label
    assert s.redo()
    assert s.log is after_log and _snapshot(s.clean) == after
    # the session's table is always the log applied from scratch
    full = apply_log(s.log, s.raw, ApplyContext(today=TODAY, key_column=s.log.key_column))
    assert _snapshot(full) == after


def test_undo_all_the_way_back_and_forward():
    s = Session(_raw(), today=TODAY)
    logs = [s.log]
    for edit in [
        lambda s: s.add_step(ReadDates("Born", ISO)),
        lambda s: s.add_step(ReadDates("Joined", ISO)),
        lambda s: s.add_step(BlankTokens(("n/a", "-"))),
        *(e[1] for e in EDITS[:6]),
    ]:
        edit(s)
        logs.append(s.log)
    for want in reversed(logs[:-1]):
        s.undo()
        assert s.log is want
    assert not s.can_undo and not s.undo()
    for want in logs[1:]:
        s.redo()
        assert s.log is want
    assert not s.redo()


def test_a_new_edit_clears_redo():
    s = _session()
    s.undo()
    assert s.can_redo
    s.add_step(DatePart("Joined"))
    assert not s.can_redo


def test_group_makes_one_undo_step():
    s = _session()
    before = s.log
    with s.group("Tidy Born"):
        s.set_cell("Born", 3, "1990-05-02")
        s.keep_date_part("Born")
        with s.group("inner"):
            s.rename("Born", "Date of birth")
    assert len(s.log) == len(before) + 3
    assert s.undo_label == "Tidy Born"
    s.undo()
    assert s.log is before
    s.redo()
    assert len(s.log) == len(before) + 3


def test_use_suggestion_replaces_the_read_step_in_place():
    s = _session()
    s.set_cell("Born", 3, "1990-05-02")
    n = len(s.log)
    s.use_suggestion("Born", ParseSpec(patterns=("iso-date",), day_order="dmy"), "again")
    assert len(s.log) == n
    assert s.log.entries[0].step.label == "again"
    assert s.clean.parsed["Born"].state[3] == CellState.MANUAL  # the later hand fix still holds


def test_setting_the_same_cell_twice_keeps_one_step():
    s = _session()
    s.set_cell("Born", 3, "1990-05-02")
    s.set_cell("Born", 3, "1990-05-03")
    assert len(s.log) == 4
    assert s.clean.parsed["Born"].value[3] == np.datetime64("1990-05-03", "us")
    step = s.log.entries[3].step
    assert (step.key, step.key_column, step.raw) == ("M4", "Member no", "garbage")


def test_events_name_what_changed():
    s = _session()
    seen: list[SessionEvent] = []
    unsubscribe = s.subscribe(seen.append)
    s.set_cell("Born", 3, "1990-05-02")
    assert [e.what for e in seen] == ["log", "clean", "history"]
    assert seen[0].columns == ("Born",) and seen[1].columns == ("Born",)
    seen.clear()
    s.set_enabled(2, False)  # blank tokens over every column
    assert seen[0].columns is None
    assert set(seen[1].columns) == {"Born", "Joined"}
    seen.clear()
    unsubscribe()
    s.undo()
    assert seen == []


def test_set_table_and_reports():
    s = _session()
    rep = s.report("Born")
    assert s.report("Born") is rep  # cached
    seen: list[str] = []
    s.subscribe(lambda e: seen.append(e.what))
    nov = RawTable.from_dataframe(
        pd.DataFrame({"Member no": ["M9"], "Born": ["2001-01-01"], "Joined": ["x"]})
    )
    s.set_table(nov)
    assert seen == ["table", "reports", "clean"]
    assert s.clean.raw is nov and s.report("Born") is not rep
    assert s.clean.parsed["Born"].value[0] == np.datetime64("2001-01-01", "us")


def test_deferred_apply_runs_as_a_job():
    s = _session()
    s.auto_apply = False
    old = s.clean
    s.add_step(DatePart("Joined"))
    assert s.clean is old  # nothing recomputed yet
    job = s.apply_job()
    assert job.start == 3  # the first three steps are unchanged: their tables are reused
    stale = s.apply_job()
    job.run()
    assert s.install(job)
    assert s.clean.parsed["Joined"].date_only
    s.remove_step(3)
    stale.run()
    assert not s.install(stale)  # the log changed since that job started


def test_cells_changed_per_step():
    s = _session()
    # worked by hand: step 3 (blank tokens) turns "n/a" in Born and "-" in Joined to blank
    assert s.cells_changed(2) == 2
    assert s.cells_changed(0) == 4  # a new parsed column: every cell


def test_save_log_records_facts_and_ranges(tmp_path):
    s = _session()
    path = tmp_path / "oct.json"
    saved = s.save_log(path)
    assert saved.source is not None and saved.source.columns == (
        "Member no",
        "Born",
        "Joined",
        "Name",
    )
    # worked by hand: Born reads 1970-01-02 and 1985-04-12
    assert saved.source.ranges["Born"] == ("1970-01-02T00:00:00", "1985-04-12T00:00:00")
    t = Session(_raw(), today=TODAY)
    t.load_log(path)
    assert t.log == saved and t.undo_label.startswith("Load")
    t.undo()
    assert len(t.log) == 0


def test_replay_then_accept():
    s = _session()
    log = s.log
    t = Session(_raw(), today=TODAY)
    report = t.replay(log)
    assert len(t.log) == 0  # nothing changes before accepting
    t.accept_replay(report)
    assert t.log is log
    assert t.clean is report.table  # the replayed table is taken, not computed again
    assert t.apply_job().start == len(log)  # and a later apply has nothing left to do
    t.undo()
    assert len(t.log) == 0 and t.clean.parsed == {}
    t.redo()
    ctx = ApplyContext(today=TODAY, key_column=log.key_column)
    assert _snapshot(t.clean) == _snapshot(report.table) == _snapshot(apply_log(log, t.raw, ctx))


OPS = st.lists(st.integers(0, len(EDITS) - 1), min_size=1, max_size=8)


@settings(max_examples=15, deadline=None)
@given(OPS, st.lists(st.booleans(), min_size=8, max_size=8))
def test_incremental_reapply_equals_a_full_apply(ops, undo_after):
    """Whatever the edits, undos and redos, ``clean`` equals the log applied from scratch."""
    s = _session()
    for i, op in enumerate(ops):
        try:
            EDITS[op][1](s)
        except (IndexError, KeyError):
            continue  # an edit that does not fit the log as it is now
        if undo_after[i]:
            s.undo()
        if i % 3 == 2:
            s.redo()
        ctx = ApplyContext(today=TODAY, key_column=s.log.key_column)
        assert _snapshot(s.clean) == _snapshot(apply_log(s.log, s.raw, ctx))


def test_edits_inside_a_run_of_hand_set_cells():
    """A loaded log's run of hand-set cells is applied at once; edits inside it still give the
    log applied from scratch."""
    from datemend.core.steps import SetCell

    log = (
        FixLog(key_column="Member no")
        .add(ReadDates("Born", ISO))
        .add(SetCell("Born", "M2", "1990-01-01", "Member no"))
        .add(SetCell("Born", "M4", "1991-01-01", "Member no"))
        .add(SetCell("Born", "M1", "1992-01-01", "Member no"))
    )
    s = Session(_raw(), log, today=TODAY)
    assert s.cells_changed(1) is None  # inside the run: not kept
    for edit in (
        lambda s: s.remove_step(2),
        lambda s: s.replace_step(1, SetCell("Born", "M3", "1993-01-01", "Member no")),
        lambda s: s.move_step(2, 1),
        lambda s: s.set_enabled(1, False),
        lambda s: s.set_cell("Born", 0, "1994-01-01"),
    ):
        edit(s)
        ctx = ApplyContext(today=TODAY, key_column=s.log.key_column)
        assert _snapshot(s.clean) == _snapshot(apply_log(s.log, s.raw, ctx))
    while s.undo():
        ctx = ApplyContext(today=TODAY, key_column=s.log.key_column)
        assert _snapshot(s.clean) == _snapshot(apply_log(s.log, s.raw, ctx))


def test_set_cell_falls_back_to_the_row_number_when_the_key_is_shared():
    raw = RawTable.from_dataframe(pd.DataFrame({"Team": ["A", "A", "B"], "Born": ["x", "y", "z"]}))
    s = Session(raw, FixLog(key_column="Team"), today=TODAY)
    s.add_step(ReadDates("Born", ISO))
    s.set_cell("Born", 1, "1990-01-01")  # "A" is on two rows
    step = s.log.entries[-1].step
    assert (step.key_column, step.key) == (None, "3")  # sheet row 3 (header on row 1)
    s.set_cell("Born", 2, "1991-01-01")  # "B" is unique
    step = s.log.entries[-1].step
    assert (step.key_column, step.key) == ("Team", "B")
    assert list(s.clean.parsed["Born"].state) == [
        CellState.FAILED,
        CellState.MANUAL,
        CellState.MANUAL,
    ]
    assert any("found by row number" in w for w in s.clean.warnings)


def test_rename_log_columns_is_one_undo_step():
    s = _session()
    before = s.log
    s.rename_log_columns({"Born": "Date of birth"})
    assert s.log.entries[0].step.column == "Date of birth"
    assert any("is not in the file" in w for w in s.clean.warnings)
    s.undo()
    assert s.log is before


SAMPLES = __import__("pathlib").Path(__file__).resolve().parents[2] / "sample_files"


@pytest.mark.skipif(
    not (SAMPLES / "rowing_club_2026-11.xlsx").exists(), reason="sample files not generated"
)
def test_a_month_in_the_window_s_words(tmp_path):
    """Open October, accept readings, fix a cell by hand, save the log; open November, replay."""
    s = Session.open(SAMPLES / "rowing_club_2026-10.xlsx", today=TODAY, prefer_day_order="dmy")
    assert s.log.key_column == "Member no"  # unique, never empty, reads like an identifier
    for rep in s.scan_all():
        if rep.is_date and rep.best is not None:
            s.use_suggestion(rep.column, rep.best)
    born = s.clean.parsed["Born"]
    row = int(np.flatnonzero(born.state == CellState.PARSED)[0])
    s.set_cell("Born", row, "1961-01-01")
    saved = s.save_log(tmp_path / "october.json")
    assert saved.source is not None and saved.source.file_name == "rowing_club_2026-10.xlsx"
    nov = Session.open(SAMPLES / "rowing_club_2026-11.xlsx", today=TODAY)
    report = nov.replay(tmp_path / "october.json")
    assert report.has_drift and report.moved == ("Safety course",)
    nov.accept_replay(report)
    assert nov.clean is report.table
    assert nov.undo_label == "Replay a fix log"


def test_a_preview_records_nothing_and_is_what_the_reading_gives():
    s = Session(_raw(), today=TODAY)
    events: list[SessionEvent] = []
    s.subscribe(events.append)
    got = s.preview("Born", ISO)
    assert len(s.log) == 0 and events == [] and "Born" not in s.clean.parsed
    # Reference: datetime.date.fromisoformat (ISO 8601 calendar dates) for the two real dates.
    want = [dt.date.fromisoformat("1970-01-02"), None, dt.date.fromisoformat("1985-04-12"), None]
    days = got.value.astype("datetime64[D]")
    shown = [None if np.isnat(d) else d.astype(dt.date) for d in days]
    assert shown == want
    assert list(got.state) == [CellState.PARSED, CellState.FAILED, CellState.PARSED,
                               CellState.FAILED]  # fmt: skip
    assert s.cached_preview("Born", ISO) is got  # kept: asking again costs nothing
    assert s.preview("Born", ISO) is got
    assert s.cached_preview("Joined", ISO) is None
    assert s.cached_preview("Born", ParseSpec(patterns=("iso-week",))) is None
    s.use_suggestion("Born", ISO, "ISO 8601")
    used = s.clean.parsed["Born"]
    assert np.array_equal(used.value, got.value, equal_nan=True)  # NaT where not read
    assert np.array_equal(used.state, got.state)
    assert s.cached_preview("Born", ISO) is None  # read now: the preview is not kept
    assert s.preview("Born", ISO) is not got  # worked out again when asked
    s.set_table(_raw())  # another table: the kept preview is not of it
    assert s.cached_preview("Born", ISO) is None
