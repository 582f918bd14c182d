"""Arrow-held columns: a CSV's text stays in Arrow string arrays, and scanning, replaying and
exporting it give exactly what the same cells held as Python objects give — without building
one Python object per cell (the memory goal of issue 8).

Expected values are worked out by hand from the CSV text written in each test; the object-held
copy of the same table is a second, independent path through the engine (it was the only path
before Arrow-held columns existed).
"""

from __future__ import annotations

import pickle

import numpy as np
import pyarrow as pa
import pytest

from datemend.core.export import export_table
from datemend.core.fixlog import apply_log, make_auto_log
from datemend.core.infer import scan
from datemend.core.parse import distinct_texts
from datemend.core.progress import Cancelled, Progress
from datemend.core.readers import read_table
from datemend.core.table import CellKind, RawColumn, RawTable, object_cells

K = CellKind
NBSP = "\xa0"

CSV = (
    "Member no,Name,Joined,Born\r\n"
    "101,Ada Quill,14/03/2021,1981-03-04\r\n"
    "102,   ,n/a,\r\n"
    f"103,Bo Lantern,{NBSP},1990-12-31\r\n"
    "104,Cy Drummond,31/12/2020,1975-02-28\r\n"
    "105,,01/02/2022,unknown\r\n"
)


@pytest.fixture()
def club(tmp_path):
    path = tmp_path / "club.csv"
    path.write_bytes(CSV.encode("utf-8"))
    return path


def object_copy(raw: RawTable) -> RawTable:
    """The same cells held as Python objects (the reference path)."""
    cols = tuple(RawColumn(c.name, np.array(c.values, dtype=object), c.kinds.copy()) for c in raw)
    return RawTable(cols, raw.facts, raw.source_rows)


def test_a_csv_is_read_into_arrow_strings_with_empty_cells_as_nulls(club):
    raw = read_table(club)
    name = raw.column("Name")
    assert all(c.arrow is not None for c in raw)
    assert not name.materialised
    # by hand from CSV: an empty field has no value, a whitespace-only one keeps its text
    assert name.arrow.to_pylist() == ["Ada Quill", "   ", "Bo Lantern", "Cy Drummond", None]
    assert [K(k) for k in name.kinds] == [K.TEXT, K.EMPTY, K.TEXT, K.TEXT, K.EMPTY]
    assert [K(k) for k in raw.column("Joined").kinds] == [K.TEXT, K.TEXT, K.EMPTY, K.TEXT, K.TEXT]
    assert raw.column("Joined").value(2) == NBSP
    assert name.value(4) is None
    assert not name.materialised  # value() builds no object array
    assert list(name.values) == ["Ada Quill", "   ", "Bo Lantern", "Cy Drummond", None]
    assert name.materialised


def test_take_text_and_object_cells_match_the_object_form(club):
    raw = read_table(club)
    col = raw.column("Name")
    ref = RawColumn(col.name, np.array(col.arrow.to_pylist(), dtype=object), col.kinds.copy())
    rows = np.array([4, 0, 1])
    assert col.take(rows).arrow.to_pylist() == [None, "Ada Quill", "   "]
    assert list(col.take(rows).kinds) == list(ref.take(rows).kinds)
    mask = np.array([True, False, True, False, True])
    assert col.take(mask).arrow.to_pylist() == ["Ada Quill", "Bo Lantern", None]
    assert (
        col.text().tolist()
        == ref.text().tolist()
        == [
            "Ada Quill",
            None,
            "Bo Lantern",
            "Cy Drummond",
            None,
        ]
    )
    assert list(object_cells(col.arrow, slice(1, 3))) == ["   ", "Bo Lantern"]
    assert list(object_cells(col.arrow, np.array([3]))) == ["Cy Drummond"]
    assert not col.materialised


def test_an_arrow_held_column_holds_only_text_and_empty_cells():
    with pytest.raises(ValueError, match="only hold text and empty"):
        RawColumn("n", pa.array(["1"]), np.array([K.INT], dtype=np.int8))
    with pytest.raises(TypeError, match="strings"):
        RawColumn("n", pa.array([1]), np.array([K.TEXT], dtype=np.int8))
    with pytest.raises(ValueError, match="values but"):
        RawColumn("n", pa.array(["a", "b"]), np.array([K.TEXT], dtype=np.int8))


def test_a_column_never_changes_and_pickles_in_its_own_form(club):
    col = read_table(club).column("Born")
    with pytest.raises(AttributeError):
        col.name = "other"  # type: ignore[misc]
    back = pickle.loads(pickle.dumps(col))
    assert back.arrow is not None and back.arrow.equals(col.arrow)
    assert list(back.kinds) == list(col.kinds)


def test_distinct_texts_are_the_same_for_both_forms(club):
    raw = read_table(club)
    for col in raw:
        ref = object_copy(raw).column(col.name)
        rows_a, codes_a, uniq_a = distinct_texts(col)
        rows_o, codes_o, uniq_o = distinct_texts(ref)
        assert list(rows_a) == list(rows_o)
        assert list(uniq_a[codes_a]) == list(uniq_o[codes_o])  # same text for every cell
    rows, codes, uniq = distinct_texts(raw.column("Joined"))
    # by hand: the text cells of Joined are rows 0, 1, 3, 4 (row 2 holds only a no-break space)
    assert list(rows) == [0, 1, 3, 4]
    assert list(uniq[codes]) == ["14/03/2021", "n/a", "31/12/2020", "01/02/2022"]


def test_scan_replay_and_export_build_no_object_per_cell(club, tmp_path):
    raw = read_table(club)
    reports = {r.column: r for r in scan(raw)}
    log = make_auto_log(raw)
    clean = apply_log(log, raw)
    for fmt in ("csv", "parquet", "xlsx"):
        export_table(clean, tmp_path / f"out.{fmt}", overwrite=True)
    assert [c.name for c in raw if c.materialised] == []
    # the same answers as the object-held copy
    ref = object_copy(raw)
    ref_reports = {r.column: r for r in scan(ref)}
    for name, rep in reports.items():
        assert rep.best is not None and ref_reports[name].best is not None
        assert rep.best.label == ref_reports[name].best.label
    ref_clean = apply_log(log, ref)
    for name, pc in clean.parsed.items():
        assert np.array_equal(pc.value, ref_clean.parsed[name].value, equal_nan=True)
        assert list(pc.state) == list(ref_clean.parsed[name].state)
    for fmt in ("csv", "xlsx"):
        export_table(ref_clean, tmp_path / f"ref.{fmt}", overwrite=True)
    assert (tmp_path / "out.csv").read_bytes() == (tmp_path / "ref.csv").read_bytes()


def test_exported_csv_is_what_the_cells_say(club, tmp_path):
    raw = read_table(club)
    clean = apply_log(make_auto_log(raw), raw)
    out = tmp_path / "out.csv"
    export_table(clean, out)
    body = out.read_bytes().decode("utf-8").split("\r\n")
    # by hand: Joined is D/M/YYYY (14/03 and 31/12 decide), n/a a placeholder (blank), the
    # whitespace-only Name cell written back as it was, the empty Name cell empty
    assert body[0] == "Member no,Name,Joined,Born"
    assert body[1] == "101,Ada Quill,2021-03-14,1981-03-04"
    assert body[2] == "102,   ,,"
    assert body[4] == "104,Cy Drummond,2020-12-31,1975-02-28"
    assert body[5].startswith("105,,2022-02-01,")


def test_a_scan_can_be_stopped_between_its_steps(club):
    raw = read_table(club)
    checks = []

    class Counting(Progress):
        def check(self) -> None:
            checks.append(1)
            super().check()

    from datemend.core.infer import scan_column

    scan_column(raw.column("Joined"), raw.facts, progress=Counting())
    assert len(checks) >= 5  # several steps, each checked

    stop = Progress()
    stop.cancel()
    with pytest.raises(Cancelled):
        scan_column(raw.column("Joined"), raw.facts, progress=stop)

    seen = []

    class StopAfterTwo(Progress):
        def check(self) -> None:
            seen.append(1)
            if len(seen) == 2:
                self.cancel()
            super().check()

    with pytest.raises(Cancelled):
        scan(raw, progress=StopAfterTwo())


def test_keys_are_found_one_by_one_and_many_at_once_alike(tmp_path):
    from datemend.core.rowkey import find_rows, is_key_column, key_of_row, prefetch_rows

    path = tmp_path / "keys.csv"
    path.write_text("id,dup,gap\n A7 ,x,1\nB8,x,\nC9,y,3\n", encoding="utf-8")
    raw = read_table(path)
    # by hand: "id" is unique once trimmed; "dup" repeats x; "gap" has an empty cell
    assert is_key_column(raw.column("id"))
    assert not is_key_column(raw.column("dup"))
    assert not is_key_column(raw.column("gap"))
    one = {k: list(find_rows(raw, "dup", k)) for k in ("x", "y", "z")}
    assert one == {"x": [0, 1], "y": [2], "z": []}
    prefetch_rows(raw, "dup", ["x", " y ", "z"])
    assert {k: list(find_rows(raw, "dup", k)) for k in ("x", "y", "z")} == one
    assert list(find_rows(raw, "id", "A7")) == [0]  # the cell " A7 " trimmed
    assert key_of_row(raw, "id", 0) == "A7"
    assert not raw.column("id").materialised
