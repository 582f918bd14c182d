"""Replay and the drift report: small hand-worked tables, then the October/November samples."""

from __future__ import annotations

import datetime as dt
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from datemend.core.clean import CellState
from datemend.core.fixlog import FixLog, apply_log, auto_fix
from datemend.core.replay import ReplayReport, _is_placeholder, replay, shape_of
from datemend.core.spec import ParseSpec
from datemend.core.steps import ApplyContext, BlankTokens, ReadDates, SetCell
from datemend.core.table import RawTable, SourceFacts

ISO = ParseSpec(patterns=("iso-date",))
SAMPLES = Path(__file__).resolve().parents[2] / "sample_files"

# ----------------------------------------------------------------------- shapes, tokens

SHAPES = [
    ("Nov 3, 2027", "aaa 9, 9999", "letters → a, digits → 9"),
    ("31/04/2026", "99/99/9999", "separators kept"),
    ("  12   Mär  2024 ", "99 aaa 9999", "non-ASCII letters count; spaces squeezed and trimmed"),
    ("tbc", "aaa", "a word"),
    ("٣/٤/٢٠٢٤", "9/9/9999", "Unicode decimal digits (Arabic-Indic) are digits too"),
]


def test_shape_inputs_do_not_repeat():
    assert len({s[0] for s in SHAPES}) == len(SHAPES)


@pytest.mark.parametrize(("text", "shape", "why"), SHAPES, ids=[s[2] for s in SHAPES])
def test_shape_of(text, shape, why):
    # Python's re \d matches Unicode category Nd (re module docs), so Arabic-Indic digits count.
    assert shape_of(text) == shape


PLACEHOLDERS = [
    ("tbc", 1, True, "a common stand-in word, even once (common practice, no source)"),
    ("pending review", 2, True, "a recurring word without digits"),
    ("pending review", 1, False, "a one-off phrase is not a placeholder"),
    ("00/00/0000", 1, True, "a date of zeros"),
    ("31/04/2026", 3, False, "an impossible date is a failure, not a placeholder"),
    ("?", 1, True, "a question mark"),
]


def test_placeholder_inputs_do_not_repeat():
    assert len({(p[0], p[1]) for p in PLACEHOLDERS}) == len(PLACEHOLDERS)


@pytest.mark.parametrize(
    ("token", "n", "expected", "why"), PLACEHOLDERS, ids=[p[3] for p in PLACEHOLDERS]
)
def test_placeholder_looking(token, n, expected, why):
    assert _is_placeholder(token, n) is expected


# --------------------------------------------------------------------- small tables


def _raw(cols: dict, name: str = "oct.csv") -> RawTable:
    return RawTable.from_dataframe(pd.DataFrame(cols), SourceFacts(path=name, format="csv"))


OCT = {
    "Member no": ["M1", "M2", "M3", "M4"],
    "Name": ["Ann", "Bo", "Cy", "Di"],
    "Born": ["1950-03-04", "2010-05-06", "n/a", "1980-13-45"],
}


def _oct_log() -> tuple[FixLog, RawTable]:
    raw = _raw(OCT)
    log = (
        FixLog(key_column="Member no")
        .add(ReadDates("Born", ISO, "ISO 8601"))
        .add(BlankTokens(("n/a",)))
        .add(SetCell("Born", "M2", "2010-05-07", "Member no", raw="2010-05-06"))
    )
    return log.with_source(apply_log(log, raw)), raw


def test_log_facts_hold_ranges_keys_and_known_failures():
    log, _ = _oct_log()
    src = log.source
    assert src is not None
    # worked by hand: the earliest read value is 1950-03-04, the latest the hand-set 2010-05-07
    assert src.ranges["Born"] == ("1950-03-04T00:00:00", "2010-05-07T00:00:00")
    assert src.unresolved["Born"] == ("1980-13-45",)
    assert src.unresolved_shapes["Born"] == ("9999-99-99",)
    assert src.keys == ("M1", "M2", "M3", "M4")
    assert src.columns == ("Member no", "Name", "Born")
    assert FixLog.loads(log.to_json()) == log


def test_replay_on_the_same_table_has_no_drift():
    log, raw = _oct_log()
    r = replay(log, raw)
    assert not r.has_drift, str(r)
    assert r.unresolved == 1  # the known failure still counts as unresolved (for --strict)
    assert r.column("Born").groups[0].seen_before
    assert "No drift found." in r.lines()


def test_replay_reports_planted_drift_on_a_small_table():
    log, _ = _oct_log()
    nov = _raw(
        {
            "Member no": ["M1", "M3", "M5", "M6", "M7"],
            "Date of birth": ["1950-03-04", "tbc", "1900-01-01", "1990-05-12", "1935-01-01"],
            "Name": ["Ann", "Cy", "Ed", "Flo", "Gus"],
            "Email": ["a@x", "c@x", "e@x", "f@x", "g@x"],
        },
        "nov.csv",
    )
    r = replay(log, nov)
    assert r.has_drift
    # "Born" renamed: found by content (4 of its 5 cells read as ISO dates) despite the name
    (m,) = r.missing
    assert (m.name, m.likely) == ("Born", "Date of birth")
    assert m.content_share == pytest.approx(4 / 5)  # 4 of the 5 cells are ISO dates
    assert r.added == ("Date of birth", "Email")
    assert r.rows_new == ("M5", "M6", "M7") and r.rows_gone == ("M2", "M4")
    (lost,) = r.lost_keys
    assert (lost.step, lost.key, lost.why) == (3, "M2", 'column "Born" is gone')


def test_unmatched_groups_tokens_range_and_lost_keys():
    log, _ = _oct_log()
    nov = _raw(
        {
            "Member no": ["M1", "M3", "M4", "M5", "M6", "M7", "M8"],
            "Name": ["Ann", "Cy", "Di", "Ed", "Flo", "Gus", "Hal"],
            "Born": [
                "1950-03-04",
                "tbc",
                "1980-13-45",
                "1900-01-01",
                "12.05.1990",
                "1935-06-01",
                "13.05.1991",
            ],
        },
        "nov.csv",
    )
    r = replay(log, nov)
    born = r.column("Born")
    assert (born.matched, born.unmatched, born.blank) == (3, 4, 0)
    shapes = {g.shape: g for g in born.groups}
    assert set(shapes) == {"99.99.9999", "aaa", "9999-99-99"}
    assert shapes["99.99.9999"].count == 2 and not shapes["99.99.9999"].seen_before
    assert shapes["99.99.9999"].rows == (6, 8)  # sheet rows: header is row 1
    assert shapes["9999-99-99"].seen_before  # 1980-13-45 failed in October too
    assert born.new_tokens == (("tbc", 1),)
    # Range 1950-03-04 .. 2010-05-07 (60.2 years): margin a quarter of that, about 15 years,
    # so 1935-06-01 is inside (1935-01-?? is the edge) and 1900-01-01 is far outside.
    assert born.out_of_range == 1
    assert born.out_of_range_examples[0][:2] == (5, "1900-01-01")
    (lost,) = r.lost_keys
    assert (lost.key, lost.why) == ("M2", "no row has this key")
    assert r.moved == ()


def test_hand_set_cell_whose_raw_value_changed_is_reported_not_applied():
    log, _ = _oct_log()
    nov = _raw({"Member no": ["M2"], "Name": ["Bo"], "Born": ["2010-05-08"]}, "nov.csv")
    r = replay(log, nov)
    assert r.lost_keys[0].why == 'its raw value changed from "2010-05-06" to "2010-05-08"'
    assert r.table.parsed["Born"].state[0] == CellState.PARSED
    assert r.table.parsed["Born"].value[0] == np.datetime64("2010-05-08", "us")


def test_moved_columns_by_order():
    log, _ = _oct_log()
    nov = _raw({"Born": ["1950-03-04"], "Member no": ["M1"], "Name": ["Ann"]}, "nov.csv")
    r = replay(log, nov)
    # difflib's longest matching run keeps Member no, Name in order; Born moved
    assert r.moved == ("Born",)
    assert r.missing == () and r.added == ()


def test_report_json_round_trip_and_merge_of_partitions():
    log, _ = _oct_log()
    cols = {
        "Member no": [f"M{i}" for i in range(1, 9)],
        "Name": list("abcdefgh"),
        "Born": ["1950-03-04", "tbc", "12.05.1990", "1960-01-01", "tbc", "1.2.1990", "", "?"],
    }
    nov = _raw(cols, "nov.csv")
    whole = replay(log, nov)
    d = json.loads(json.dumps(whole.to_dict()))
    assert d["has_drift"] is True and d["unresolved"] == whole.unresolved
    assert ReplayReport.from_dict(d).to_dict() == whole.to_dict()
    parts = [replay(log, nov.take(np.arange(0, 4))), replay(log, nov.take(np.arange(4, 8)))]
    merged = ReplayReport.merge(parts)
    a, b = merged.column("Born"), whole.column("Born")
    assert (a.matched, a.unmatched, a.blank, a.new_tokens) == (
        b.matched,
        b.unmatched,
        b.blank,
        b.new_tokens,
    )
    assert {(g.shape, g.count) for g in a.groups} == {(g.shape, g.count) for g in b.groups}
    assert set(merged.rows_gone) == set(whole.rows_gone)


def test_report_text_is_readable():
    log, _ = _oct_log()
    nov = _raw({"Member no": ["M1"], "Name": ["Ann"], "Born": ["tbc"]}, "nov.csv")
    text = str(replay(log, nov))
    assert text.splitlines()[0].startswith(
        "Replay on nov.csv (1 rows); the log was made on oct.csv"
    )
    assert 'New placeholder-looking tokens, not blank in the log: "tbc" ×1.' in text


# ------------------------------------------------------------------------- the samples


def _truth() -> dict:
    return json.loads((SAMPLES / "truth.json").read_text(encoding="utf-8"))


def _cells(truth: dict, month: str) -> dict[str, dict[str, list]]:
    """member no → column → truth cell, whether cells are stored by name or in column order."""
    out = {}
    for row in truth["months"][month]["rows"]:
        cells = row["cells"]
        if isinstance(cells, list):
            cells = dict(zip(truth["date_columns"], cells))
        out[row["member_no"]] = cells
    return out


needs_samples = pytest.mark.skipif(
    not (SAMPLES / "rowing_club_2026-11.xlsx").exists() or not (SAMPLES / "truth.json").exists(),
    reason="sample files not generated",
)

LEFT_MEMBER_FIX = "1970-01-01"


@pytest.fixture(scope="module")
def october():
    from datemend.core.readers import read_table

    raw = read_table(SAMPLES / "rowing_club_2026-10.xlsx")
    # "Last outing" cannot be decided by its own evidence: the user states day-first (--day-first)
    log, clean = auto_fix(raw, prefer_day_order="dmy")
    return raw, log, clean


@pytest.fixture(scope="module")
def november():
    from datemend.core.readers import read_table

    return read_table(SAMPLES / "rowing_club_2026-11.xlsx")


@needs_samples
def test_replay_on_the_october_file_reproduces_auto_cell_for_cell(october, tmp_path):
    raw, log, clean = october
    path = tmp_path / "october.datemend.json"
    log.save(path)
    r = replay(FixLog.load(path), raw)
    assert not r.has_drift, str(r)
    assert r.same_file is True
    assert set(r.table.parsed) == set(clean.parsed)
    for name, pc in clean.parsed.items():
        got = r.table.parsed[name]
        assert np.array_equal(got.value, pc.value, equal_nan=True), name
        for arr in ("state", "offset_min", "has_time", "pattern"):
            assert np.array_equal(getattr(got, arr), getattr(pc, arr)), (name, arr)
        assert list(got.reason) == list(pc.reason)
    assert r.table.to_dataframe().equals(clean.to_dataframe())


@needs_samples
def test_replaying_october_on_november_reports_exactly_the_planted_drift(october, november):
    _, log, _ = october
    truth = _truth()
    planted = {d["kind"]: d for d in truth["november_drift"]}
    left = planted["members_left"]["member_nos"]
    # the user had set one cell by hand in October for a member who then left
    log = log.add(SetCell("Born", left[0], LEFT_MEMBER_FIX, "Member no"))
    nov = _cells(truth, "2026-11")
    r = replay(log, november)

    assert r.has_drift
    assert r.moved == (planted["column_moved"]["column"],)
    assert november.names.index("Safety course") + 1 == planted["column_moved"]["to_position"]
    assert r.missing == () and r.added == ()
    assert sorted(r.rows_gone) == sorted(left)
    assert sorted(r.rows_new) == sorted(planted["members_joined"]["member_nos"])
    (lost,) = r.lost_keys
    assert (lost.column, lost.key, lost.why) == ("Born", left[0], "no row has this key")

    drifted = {c.column for c in r.columns if c.has_drift}
    assert drifted == {planted["new_format"]["column"], planted["new_placeholder"]["column"]}
    assert all(c.out_of_range == 0 for c in r.columns)

    # the new format: every new group is made of exactly the cells written that way
    col = planted["new_format"]["column"]
    renewal = r.column(col)
    new_groups = [g for g in renewal.groups if not g.seen_before]
    want = [m for m, c in nov.items() if c[col][1] == "text_new_format"]
    assert sum(g.count for g in new_groups) == len(want)
    fmt = planted["new_format"]["format"].replace("%-d", "%d")  # strptime reads 3 for %d
    for g in new_groups:
        assert g.suggestion, g
        for ex in g.examples:
            dt.datetime.strptime(ex, fmt)  # Python's datetime reads each example that way
    known = [g for g in renewal.groups if g.seen_before]
    impossible = [m for m, c in nov.items() if c[col][1] == "impossible"]
    assert sum(g.count for g in known) == len(impossible)

    # the new placeholder, and no other token
    col = planted["new_placeholder"]["column"]
    token = planted["new_placeholder"]["value"]
    count = sum(1 for c in nov.values() if c[col][1] == "placeholder" and c[col][2] == token)
    assert r.column(col).new_tokens == ((token, count),)
    for c in r.columns:
        if c.column != col:
            assert c.new_tokens == (), c.column


@needs_samples
def test_replayed_november_values_match_the_truth(october, november):
    """No cell the replay reads is silently wrong (truth.json is ground truth by construction)."""
    _, log, _ = october
    truth = _truth()
    nov = _cells(truth, "2026-11")
    r = replay(log, november, ApplyContext(today=dt.date(2026, 11, 30)))
    keys = [str(k).strip() for k in november.column("Member no").values]
    for name, pc in r.table.parsed.items():
        for i, member in enumerate(keys):
            if pc.state[i] == CellState.PARSED:
                intended = nov[member][name][0]
                got = str(pc.value[i].astype("datetime64[D]"))
                assert got == intended, (name, member, nov[member][name])


def test_a_log_follows_renamed_columns():
    log, _ = _oct_log()
    nov = _raw(
        {
            "Member": ["M1", "M2"],
            "Name": ["Ann", "Bo"],
            "Date of birth": ["1950-03-04", "2010-05-06"],
        },
        "nov.csv",
    )
    r = replay(log, nov)
    assert r.likely_renames == {"Born": "Date of birth", "Member no": "Member"}
    moved = log.with_columns_renamed(r.likely_renames)
    assert moved.key_column == "Member"
    step = moved.entries[2].step
    assert (step.column, step.key_column, step.key) == ("Date of birth", "Member", "M2")
    again = replay(moved, nov)
    assert again.missing == () and again.lost_keys == ()
    pc = again.table.parsed["Date of birth"]
    assert list(pc.state) == [CellState.PARSED, CellState.MANUAL]


_cell = st.one_of(
    st.dates(dt.date(1900, 1, 1), dt.date(2099, 12, 31)).map(dt.date.isoformat),
    st.dates(dt.date(1950, 1, 1), dt.date(2030, 12, 31)).map(lambda d: d.strftime("%d/%m/%Y")),
    st.sampled_from(["", "n/a", "unknown", "-", "31/04/2026", "soon"]),
    st.text(alphabet="abcxyz0123456789/-. ", max_size=12),
)


@settings(max_examples=12, deadline=None)
@given(st.lists(_cell, min_size=1, max_size=60), st.integers(0, 150))
def test_replay_on_its_own_file_never_drifts(cells, junk):
    """Whatever the column holds (even more distinct failures than the log keeps values of),
    a log replayed on the file it was made on finds no drift and the same cells."""
    cells = cells + [f"junk {i} x{i * 7}" for i in range(junk)]
    raw = _raw({"Member no": [f"M{i}" for i in range(len(cells))], "When": cells})
    log, clean = auto_fix(raw)
    log = FixLog.loads(log.to_json())
    r = replay(log, raw)
    assert not r.has_drift, str(r)
    for name, pc in clean.parsed.items():
        assert np.array_equal(r.table.parsed[name].value, pc.value, equal_nan=True)
        assert np.array_equal(r.table.parsed[name].state, pc.state)


@needs_samples
@pytest.mark.parametrize("name", ["rowing_club_2026-10.csv", "rowing_club_2026-10.ods"])
def test_the_october_log_reads_the_same_export_in_another_format(october, name):
    """The CSV (all text, Windows-1252) and ODS exports of October hold the same cells: the log
    made on the workbook gives the same dates there, and no drift."""
    from datemend.core.readers import read_table

    _, log, clean = october
    r = replay(log, read_table(SAMPLES / name))
    assert not r.has_drift, str(r)
    for col, pc in clean.parsed.items():
        assert np.array_equal(r.table.parsed[col].value, pc.value, equal_nan=True), col
        assert np.array_equal(r.table.parsed[col].state, pc.state), col
