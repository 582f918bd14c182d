"""The cells table model: Qt's model checks, and each filter on a hand-built column."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import Qt

from datemend.core.clean import NAIVE, CellState, ParsedColumn
from datemend.core.table import CellKind, RawColumn
from datemend.gui.cells_model import CellsModel, CellsSource, Column, RowFilter, format_value

S = CellState
# (raw text, ISO value or None, state, pattern index, reason) — written by hand for these tests.
ROWS = [
    ("2026-10-03", "2026-10-03", S.PARSED, 0, None),
    ("03/10/2026", "2026-10-03", S.PARSED, 1, None),
    ("n/a", None, S.BLANK, -1, "treated as blank"),
    ("31/02/2026", None, S.FAILED, -1, "there is no 31 February"),
    ("04/05/2026", None, S.AMBIGUOUS, -1, "4 May or 5 April"),
    ("1900-01-01", "1900-01-01", S.PARSED, 0, None),
    ("", None, S.BLANK, -1, None),
    ("2026-11-30", "2026-11-30", S.MANUAL, -1, None),
]


def make_source(with_keys: bool = True) -> CellsSource:
    raw_vals = np.array([r[0] or None for r in ROWS], dtype=object)
    kinds = np.array([CellKind.TEXT if r[0] else CellKind.EMPTY for r in ROWS], dtype=np.int8)
    raw = RawColumn("Joined", raw_vals, kinds)
    n = len(ROWS)
    parsed = ParsedColumn(
        source="Joined",
        value=np.array([r[1] or "NaT" for r in ROWS], dtype="datetime64[us]"),
        offset_min=np.full(n, NAIVE, dtype=np.int32),
        has_time=np.zeros(n, dtype=bool),
        state=np.array([r[2] for r in ROWS], dtype=np.int8),
        pattern=np.array([r[3] for r in ROWS], dtype=np.int16),
        patterns=("iso-date", "d/m/yyyy"),
        reason=np.array([r[4] for r in ROWS], dtype=object),
    )
    keys = np.array([f"M{i:03d}" for i in range(n)], dtype=object) if with_keys else None
    return CellsSource(raw, parsed, np.arange(2, 2 + n), keys, "Member no" if with_keys else None)


@pytest.fixture
def model(qtmodeltester):
    m = CellsModel()
    m.set_source(make_source())
    return m


def texts(model: CellsModel, col: Column) -> list[str]:
    c = model.column_of(col)
    return [model.data(model.index(r, c)) for r in range(model.rowCount())]


def test_modeltester_passes_on_every_filter(qtmodeltester):
    m = CellsModel()
    qtmodeltester.check(m)  # empty
    m.set_source(make_source())
    qtmodeltester.check(m)
    m.set_filter(RowFilter(mode="problems", problems_first=True))
    qtmodeltester.check(m)
    m.set_source(make_source(with_keys=False))
    qtmodeltester.check(m)


def test_columns_and_cells_show_raw_beside_parsed(model):
    assert [model.headerData(i, Qt.Orientation.Horizontal) for i in range(model.columnCount())] == [
        "Row",
        "Member no",
        "As written",
        "Reads as",
        "State",
        "Pattern",
        "Note",
    ]
    assert texts(model, Column.RAW)[:3] == ["2026-10-03", "03/10/2026", "n/a"]
    assert texts(model, Column.READS)[:4] == ["2026-10-03", "2026-10-03", "", ""]
    assert texts(model, Column.ROW)[0] == "2"  # header on row 1, first data row is 2
    states = texts(model, Column.STATE)
    assert states == [
        "✓ read",
        "✓ read",
        "○ blank",
        "✗ not read",
        "? unclear",
        "✓ read",
        "○ blank",
        "✎ set by hand",
    ]
    assert texts(model, Column.PATTERN)[:2] == ["iso-date", "d/m/yyyy"]
    assert texts(model, Column.PATTERN)[7] == "by hand"


FILTERS = [
    (RowFilter(), list(range(8)), "all rows in file order"),
    (RowFilter(mode="problems"), [3, 4], "failed and ambiguous only"),
    (RowFilter(mode="pattern", pattern=1), [1], "the d/m/yyyy group"),
    (
        RowFilter(
            mode="range",
            lo=np.datetime64("2026-10-01", "us"),
            hi=np.datetime64("2026-11-01", "us"),
        ),
        [0, 1],
        "October 2026; NaT never in a range",
    ),
    (RowFilter(find="02/2026"), [3], "find by raw text"),
    (RowFilter(find="1900"), [5], "find by raw or ISO text"),
    (RowFilter(problems_first=True), [3, 4, 0, 1, 2, 5, 6, 7], "stable, problems on top"),
]


@pytest.mark.parametrize(("flt", "expected", "why"), FILTERS, ids=[f[2] for f in FILTERS])
def test_filters_select_rows_by_index_array(model, flt, expected, why):
    model.set_filter(flt)
    assert model.rows.tolist() == expected, why
    assert model.rowCount() == len(expected)


def test_filter_table_has_no_repeats():
    descs = [repr(f[0]) for f in FILTERS]
    assert len(set(descs)) == len(descs)


def test_editing_a_parsed_cell_asks_for_a_step_and_changes_nothing(model, qtbot):
    c = model.column_of(Column.READS)
    idx = model.index(3, c)
    assert model.flags(idx) & Qt.ItemFlag.ItemIsEditable
    assert not model.flags(model.index(3, model.column_of(Column.RAW))) & Qt.ItemFlag.ItemIsEditable
    with qtbot.waitSignal(model.hand_set_requested) as blocker:
        assert model.setData(idx, "2026-02-28")
    assert blocker.args == [3, "2026-02-28"]
    assert model.data(idx) == ""  # still unchanged until the session records the step


@pytest.mark.parametrize(
    ("value", "has_time", "offset", "expected"),
    [
        ("2026-10-03T00:00", False, NAIVE, "2026-10-03"),
        ("2026-10-03T14:05:09", True, NAIVE, "2026-10-03T14:05:09"),
        ("1985-04-12T23:20:50.520000", True, 0, "1985-04-12T23:20:50.520000Z"),
        ("1996-12-19T16:39:57", True, -480, "1996-12-19T16:39:57-08:00"),
        ("9999-12-31T00:00", False, NAIVE, "9999-12-31"),
    ],
    ids=["date", "naive time", "RFC 3339 5.8 Z", "RFC 3339 5.8 -08:00", "year 9999"],
)
def test_iso_display(value, has_time, offset, expected):
    # Expected strings written by hand in ISO 8601 / RFC 3339 §5.8 form.
    assert format_value(np.datetime64(value, "us"), has_time, offset, False) == expected


def test_million_rows_filter_without_python_loops(qtmodeltester):
    n = 1_000_000
    raw = RawColumn("d", np.full(n, "x", dtype=object), np.full(n, CellKind.TEXT, dtype=np.int8))
    p = ParsedColumn.empty("d", n)
    state = np.full(n, S.PARSED, dtype=np.int8)
    state[::1000] = S.FAILED  # 1000 problems, worked out by hand: n / 1000
    p = p.evolve(state=state)
    m = CellsModel()
    m.set_source(CellsSource(raw, p, np.arange(n)))
    assert m.rowCount() == n
    m.set_filter(RowFilter(mode="problems"))
    assert m.rowCount() == 1000
    assert m.data(m.index(999, m.column_of(Column.ROW))) == str(999_000)


def test_find_on_a_big_table_waits_for_a_pause_in_typing(qtbot):
    from datemend.gui.cells_pane import CellsPane

    pane = CellsPane()
    qtbot.addWidget(pane)
    pane.set_source(make_source())
    pane.find_pause_rows = 0  # treat this table as big
    qtbot.keyClicks(pane.find, "1900")
    assert pane.model.rowCount() == len(ROWS)  # nothing found yet: still typing
    with qtbot.waitSignal(pane.model.rows_changed, timeout=3000):
        pass
    assert pane.model.rows.tolist() == [5]  # "1900-01-01", row 5 of ROWS


def test_find_matches_distinct_values_back_to_every_row(qtbot):
    n = 10_000
    raw = RawColumn(
        "d",
        np.array(["03/10/2019", "n/a", None, "Ask Sam"] * (n // 4), dtype=object),
        np.array([CellKind.TEXT, CellKind.TEXT, CellKind.EMPTY, CellKind.TEXT] * (n // 4), np.int8),
    )
    m = CellsModel()
    m.set_source(CellsSource(raw, None, np.arange(n)))
    m.set_filter(RowFilter(find="ask"))  # case-insensitive
    assert m.rows.tolist() == list(range(3, n, 4))
    m.set_filter(RowFilter(find="/10/"))
    assert m.rowCount() == n // 4


def test_a_cell_of_only_spaces_is_shown_apart_from_an_empty_one(tmp_path):
    from PySide6.QtCore import Qt

    from datemend.core.readers import read_table
    from datemend.gui.cells_model import SPACE_MARK

    path = tmp_path / "club.csv"
    path.write_text("id,joined\n1,   \n2,\n3,\t\n4,2024-01-05\n", encoding="utf-8")
    raw = read_table(path)
    col = raw.column("joined")
    m = CellsModel()
    m.set_source(CellsSource(col, None, raw.source_rows))
    got = texts(m, Column.RAW)
    # by hand: three spaces, an empty field, one tab, a date
    assert got == [SPACE_MARK * 3, "", SPACE_MARK, "2024-01-05"]
    c = m.column_of(Column.RAW)
    tip = m.data(m.index(0, c), Qt.ItemDataRole.ToolTipRole)
    assert "Only white space (3 characters)" in tip
    assert m.data(m.index(1, c), Qt.ItemDataRole.ToolTipRole) is None
    assert m.data(m.index(3, c), Qt.ItemDataRole.ToolTipRole) is None
    assert not col.materialised  # cells shown one by one
