"""Export never harms: never the source path, atomic replace, nothing left behind on failure,
text that looks like a formula stays text (OWASP CSV-injection guidance for the CSV option)."""

from __future__ import annotations

import csv
import errno
import os
import subprocess
import sys
import textwrap

import numpy as np
import openpyxl
import pandas as pd
import pyarrow.parquet as pq
import pytest
from test_export_book import HEADER_ROW, build_book, clean_table, sha256

from datemend.core import export_flat, export_stream
from datemend.core.clean import CellState, CleanTable, ParsedColumn
from datemend.core.export import ExportError, ExportOptions, export_table
from datemend.core.progress import Cancelled, Progress
from datemend.core.table import RawColumn, RawTable, SourceFacts, kinds_of

INJECTION = ["=1+1", "@SUM(A1)", "+1-2", "-3+4", '=HYPERLINK("http://x")', "plain"]


def _leftovers(folder, keep):
    return sorted(p.name for p in folder.iterdir() if p.name not in keep)


@pytest.fixture
def book(tmp_path):
    src = build_book(tmp_path / "club.xlsx")
    return src, clean_table(src), sha256(src)


# --------------------------------------------------------------------------- the target


def test_source_path_is_refused(book, tmp_path):
    src, table, before = book
    for target in (src, tmp_path / "." / "club.xlsx", tmp_path / "sub" / ".." / "club.xlsx"):
        (tmp_path / "sub").mkdir(exist_ok=True)
        with pytest.raises(ExportError, match=r"club\.xlsx is the file being read"):
            export_table(table, target, overwrite=True)
    assert sha256(src) == before


def test_source_reached_through_a_link_is_refused(book, tmp_path):
    src, table, before = book
    hard = tmp_path / "hard.xlsx"
    os.link(src, hard)
    soft = tmp_path / "soft.xlsx"
    soft.symlink_to(src)
    for target in (hard, soft):
        with pytest.raises(ExportError, match="is the file being read"):
            export_table(table, target, overwrite=True)
    assert sha256(src) == before


def test_existing_target_needs_overwrite(book, tmp_path):
    _, table, _ = book
    target = tmp_path / "out.xlsx"
    target.write_bytes(b"old contents")
    with pytest.raises(ExportError, match=r"out\.xlsx already exists"):
        export_table(table, target)
    assert target.read_bytes() == b"old contents"
    export_table(table, target, overwrite=True)
    assert openpyxl.load_workbook(target).sheetnames[0] == "Members"
    assert _leftovers(tmp_path, {"club.xlsx", "out.xlsx"}) == []


@pytest.mark.parametrize(
    ("name", "message"),
    [
        ("out.ods", "ODS is read but not written"),
        ("out.json", "choose a name ending in .xlsx, .csv or .parquet"),
        ("missing/out.xlsx", "is not a folder"),
    ],
)
def test_targets_refused_with_one_sentence(book, tmp_path, name, message):
    _, table, _ = book
    with pytest.raises(ExportError, match=message) as err:
        export_table(table, tmp_path / name)
    assert str(err.value).count(". ") == 0 and str(err.value).endswith(".")


def test_bad_options_refused(book, tmp_path):
    _, table, _ = book
    with pytest.raises(ExportError, match="not a known time zone"):
        export_table(table, tmp_path / "a.csv", options=ExportOptions(zone="Mars/Olympus"))
    with pytest.raises(ExportError, match="delimiter"):
        export_table(table, tmp_path / "a.csv", options=ExportOptions(delimiter='"'))


def test_source_changed_since_opened(book, tmp_path):
    src, table, _ = book
    wb = openpyxl.load_workbook(src)
    wb["Members"]["A3"] = "changed"
    wb.save(src)
    with pytest.raises(ExportError, match="changed since it was opened"):
        export_table(table, tmp_path / "out.xlsx")
    assert not (tmp_path / "out.xlsx").exists()


def test_rows_that_no_longer_match_are_refused(book, tmp_path):
    """A date written into the wrong row would be silently wrong: if the sheet row of a cell to
    change does not hold the value that was read, nothing is written."""
    _, table, _ = book
    shifted = RawTable(table.raw.columns, table.raw.facts, table.raw.source_rows + 1)
    with pytest.raises(ExportError, match='row 4 of column "Joined" no longer matches'):
        export_table(table.evolve(raw=shifted), tmp_path / "out.xlsx")
    assert _leftovers(tmp_path, {"club.xlsx"}) == []


# --------------------------------------------------------------------------- failures mid-way


def _partial_then(exc):
    def fake(*args, **kwargs):
        target = args[1] if len(args) > 1 else kwargs.get("filename")
        with open(target, "wb") as fh:
            fh.write(b"PK\x03\x04 half a workbook")
        raise exc

    return fake


FAULTS = [
    ("exception", RuntimeError("writer broke"), RuntimeError),
    ("disk full", OSError(errno.ENOSPC, "No space left on device"), ExportError),
    ("permission", PermissionError(errno.EACCES, "Permission denied"), ExportError),
]


@pytest.mark.parametrize(("why", "exc", "raised"), FAULTS, ids=[f[0] for f in FAULTS])
@pytest.mark.parametrize("existing", [False, True], ids=["no-target", "old-target"])
def test_workbook_write_failing_midway(book, tmp_path, monkeypatch, why, exc, raised, existing):
    src, table, before = book
    target = tmp_path / "out.xlsx"
    if existing:
        target.write_bytes(b"previous export")
    monkeypatch.setattr(openpyxl.Workbook, "save", _partial_then(exc))
    with pytest.raises(raised) as err:
        export_table(table, target, overwrite=True)
    if why == "disk full":
        assert str(err.value) == "Could not write out.xlsx: the disk is full."
    assert sha256(src) == before
    assert _leftovers(tmp_path, {"club.xlsx", "out.xlsx"}) == []  # no temporary file
    if existing:
        assert target.read_bytes() == b"previous export"
    else:
        assert not target.exists()


@pytest.mark.parametrize("fmt", ["csv", "parquet", "streaming-xlsx"])
def test_flat_writes_failing_midway(book, tmp_path, monkeypatch, fmt):
    src, table, before = book
    target = tmp_path / ("out.xlsx" if fmt == "streaming-xlsx" else f"out.{fmt}")
    target.write_bytes(b"previous export")
    full = OSError(errno.ENOSPC, "No space left on device")
    if fmt == "csv":
        calls = []
        real = pd.DataFrame.to_csv

        def to_csv(self, fh, **kw):
            calls.append(1)
            if len(calls) > 1:
                raise full
            return real(self, fh, **kw)

        monkeypatch.setattr(export_flat, "_CHUNK", 3)  # several chunks: fail on the second
        monkeypatch.setattr(pd.DataFrame, "to_csv", to_csv)
    elif fmt == "parquet":
        monkeypatch.setattr(pq, "write_table", _partial_then(full))
    else:

        def package(*args):
            raise full  # after the sheet data has been written into the temporary file

        monkeypatch.setattr(export_stream, "_write_package", package)
    opts = ExportOptions(streaming=True) if fmt == "streaming-xlsx" else None
    with pytest.raises(ExportError, match="the disk is full"):
        export_table(table, target, overwrite=True, options=opts)
    assert target.read_bytes() == b"previous export"
    assert sha256(src) == before
    assert _leftovers(tmp_path, {"club.xlsx", target.name}) == []


def test_cancel_leaves_nothing(book, tmp_path):
    _, table, _ = book
    progress = Progress()
    progress.cancel()
    with pytest.raises(Cancelled):
        export_table(table, tmp_path / "out.csv", progress=progress)
    assert _leftovers(tmp_path, {"club.xlsx"}) == []


def test_killed_process_leaves_target_as_it_was(book, tmp_path):
    """A process killed mid-write (SIGKILL, no chance to clean up) never touches the target:
    the half-written data is only in the hidden temporary file."""
    src, _, before = book
    target = tmp_path / "out.xlsx"
    target.write_bytes(b"previous export")
    ready = tmp_path / "ready"
    script = textwrap.dedent(
        f"""
        import sys, time, pathlib, openpyxl
        sys.path.insert(0, {str(os.path.dirname(__file__))!r})
        from test_export_book import clean_table
        from datemend.core.export import export_table
        def save(self, filename):
            open(filename, "wb").write(b"PK half")
            pathlib.Path({str(ready)!r}).touch()
            time.sleep(60)
        openpyxl.Workbook.save = save
        export_table(clean_table(pathlib.Path({str(src)!r})), {str(target)!r}, overwrite=True)
        """
    )
    proc = subprocess.Popen([sys.executable, "-c", script])
    try:
        for _ in range(600):
            if ready.exists() or proc.poll() is not None:
                break
            import time

            time.sleep(0.05)
        assert ready.exists(), "the child never reached the write"
        proc.kill()
        proc.wait(timeout=30)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert target.read_bytes() == b"previous export"
    assert sha256(src) == before
    left = _leftovers(tmp_path, {"club.xlsx", "out.xlsx", "ready"})
    assert all(name.startswith(".out.") and name.endswith(".part") for name in left)
    # the next export of the same target removes the killed one's leftover once it is old
    # (an hour: an export still running elsewhere is never that old), and says so
    for name in left:
        os.utime(tmp_path / name, (0, 0))
    res = export_table(clean_table(src), target, overwrite=True)
    assert _leftovers(tmp_path, {"club.xlsx", "out.xlsx", "ready"}) == []
    assert any("stopped before it finished" in n for n in res.notes), res.notes


# --------------------------------------------------------------------------- formula-like text


def _text_table(values: list[str], fmt: str = "csv") -> CleanTable:
    df = pd.DataFrame({"Note": values, "Raced": ["2024-05-0" + str(i % 9 + 1) for i in range(6)]})
    raw = RawTable.from_dataframe(df, SourceFacts(format=fmt), text_only=True)
    col = ParsedColumn.empty("Raced", len(values)).evolve(
        value=np.array([f"2024-05-0{i % 9 + 1}" for i in range(6)], dtype="datetime64[us]"),
        state=np.full(6, CellState.PARSED, dtype=np.int8),
    )
    return CleanTable(raw).with_parsed(col)


def test_formula_like_text_stays_text_in_csv(tmp_path):
    out = tmp_path / "notes.csv"
    export_table(_text_table(INJECTION), out)
    with open(out, newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    assert [r[0] for r in rows[1:]] == INJECTION  # default: values unchanged


def test_csv_formula_guard_prefixes_a_quote(tmp_path):
    # OWASP "CSV Injection": prefix cells beginning with = + - @ (and tab, CR) with a quote.
    out = tmp_path / "guarded.csv"
    export_table(_text_table(INJECTION), out, options=ExportOptions(csv_formula_guard=True))
    with open(out, newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    want = ["'=1+1", "'@SUM(A1)", "'+1-2", "'-3+4", '\'=HYPERLINK("http://x")', "plain"]
    assert [r[0] for r in rows[1:]] == want
    assert [r[1] for r in rows[1:]] == [f"2024-05-0{i + 1}" for i in range(6)]  # dates untouched


def test_formula_like_text_stays_text_in_new_xlsx(tmp_path):
    out = tmp_path / "notes.xlsx"
    result = export_table(_text_table(INJECTION), out)
    assert result.writer == "streaming"
    ws = openpyxl.load_workbook(out).active
    cells = [ws.cell(r, 1) for r in range(2, 8)]
    assert [c.value for c in cells] == INJECTION
    assert {c.data_type for c in cells} == {"s"}
    assert ws.cell(2, 2).is_date


def test_formula_like_text_stays_text_in_kept_workbook(book, tmp_path):
    _, table, _ = book
    out = tmp_path / "out.xlsx"
    export_table(table, out, options=ExportOptions(keep_raw=True))
    ws = openpyxl.load_workbook(out)["Members"]
    for ref in ("E3", "E4", "E10"):  # "=1+1", "@SUM(A1)", "=2+2" typed as text in the source
        assert ws[ref].data_type == "s", ref
    assert ws["E3"].value == "=1+1" and ws["E4"].value == "@SUM(A1)"
    assert ws["D3"].data_type == "f" and ws["D3"].value == "=C3*2"  # a formula stays a formula
    assert (
        ws.cell(HEADER_ROW + 9, 2).value == "=1+1" and ws.cell(HEADER_ROW + 9, 2).data_type == "s"
    )


def test_injection_rows_have_no_repeats():
    assert len(set(INJECTION)) == len(INJECTION)


def test_xlsm_source_to_xlsx_drops_macros_with_a_note(tmp_path):
    src = build_book(tmp_path / "club.xlsm")
    result = export_table(clean_table(src), tmp_path / "out.xlsx")
    assert result.writer == "workbook"
    assert any("Macros were not copied" in n for n in result.notes)
    with pytest.raises(ExportError, match="XLSM file can only come from an XLSM source"):
        xl = build_book(tmp_path / "plain.xlsx")
        export_table(clean_table(xl), tmp_path / "out.xlsm")


def test_control_characters_are_replaced_and_counted(tmp_path):
    out = tmp_path / "nul.xlsx"
    result = export_table(_text_table(["a\x00b", "ok", "x", "y", "z", "w"]), out)
    assert openpyxl.load_workbook(out).active["A2"].value == "a\ufffdb"
    assert any("control characters" in n for n in result.notes)
    csv_out = tmp_path / "nul.csv"
    export_table(_text_table(["a\x00b", "ok", "x", "y", "z", "w"]), csv_out)
    assert csv_out.read_text(encoding="utf-8").splitlines()[1].startswith("a\x00b")


def _add_macros(path, blob: bytes) -> None:
    """Make a macro-enabled package as a spreadsheet program writes one: a vbaProject part, its
    relationship and content types (ECMA-376 Part 2 packaging; the part's bytes are opaque)."""
    import zipfile

    wb_type = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"
    with zipfile.ZipFile(path) as z:
        items = [(i, z.read(i.filename)) for i in z.infolist()]
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for info, data in items:
            text = data.decode() if info.filename.endswith((".xml", ".rels")) else None
            if info.filename == "[Content_Types].xml":
                text = text.replace(wb_type, "application/vnd.ms-excel.sheet.macroEnabled.main+xml")
                text = text.replace(
                    "<Default Extension=",
                    '<Default Extension="bin" ContentType="application/vnd.ms-office.vbaProject"/>'
                    "<Default Extension=",
                    1,
                )
            if info.filename == "xl/_rels/workbook.xml.rels":
                text = text.replace(
                    "</Relationships>",
                    '<Relationship Id="rIdVBA" Type="http://schemas.microsoft.com/office/2006/'
                    'relationships/vbaProject" Target="vbaProject.bin"/></Relationships>',
                )
            z.writestr(info, data if text is None else text.encode())
        z.writestr("xl/vbaProject.bin", blob)


def test_xlsm_to_xlsm_keeps_the_macro_part(tmp_path):
    import zipfile

    src = build_book(tmp_path / "club.xlsm")
    blob = b"\xd0\xcf\x11\xe0 opaque macro storage"
    _add_macros(src, blob)
    out = tmp_path / "out.xlsm"
    result = export_table(clean_table(src), out)
    with zipfile.ZipFile(out) as z:
        assert z.read("xl/vbaProject.bin") == blob
        assert "macroEnabled.main+xml" in z.read("[Content_Types].xml").decode()
    assert not any("Macros" in n for n in result.notes)
    ws = openpyxl.load_workbook(out, keep_vba=True)["Members"]
    assert ws.cell(HEADER_ROW + 1, 2).is_date


def test_too_many_rows_for_a_sheet_is_refused(tmp_path, monkeypatch):
    """A sheet holds at most 1,048,576 rows (value from memory of the common spreadsheet
    program's published limits; ISO/IEC 29500 sets none): refuse before writing anything."""
    from datemend.core import export as export_module

    monkeypatch.setattr(export_module, "MAX_XLSX_ROWS", 5)
    table = _text_table(INJECTION)
    with pytest.raises(ExportError, match="do not fit on one XLSX sheet"):
        export_table(table, tmp_path / "big.xlsx")
    export_table(table, tmp_path / "big.csv")  # CSV has no such limit
    assert _leftovers(tmp_path, {"big.csv"}) == []


BAD_TEXT = [
    ("a\x00b", "a\ufffdb", "NUL: not an XML 1.0 character (§2.2)"),
    ("x\x1fy", "x\ufffdy", "unit separator: C0 control"),
    ("lone \udc80 surrogate", "lone \ufffd surrogate", "a lone surrogate (bad decoding)"),
    ("end\uffff", "end\ufffd", "U+FFFF is not a character"),
    ("tab\tand\nline", "tab\tand\nline", "tab and line feed are allowed"),
]


def test_bad_text_rows_have_no_repeats():
    assert len({b[0] for b in BAD_TEXT}) == len(BAD_TEXT)


def test_text_xml_cannot_hold_is_replaced_streaming(tmp_path):
    texts = [b[0] for b in BAD_TEXT]
    raw = RawTable(
        (RawColumn("Note", np.array(texts, dtype=object), kinds_of(texts)),),
        SourceFacts(format="csv"),
    )
    out = tmp_path / "out.xlsx"
    opts = ExportOptions(log_sheet=True)
    result = export_table(CleanTable(raw), out, options=opts, log_lines=texts)
    wb = openpyxl.load_workbook(out)
    assert [c.value for c in wb["Data"]["A"][1:]] == [b[1] for b in BAD_TEXT]
    assert [c.value for c in wb["Fix log"]["B"][1:]] == [b[1] for b in BAD_TEXT]
    assert any("control characters" in n for n in result.notes)
    export_table(
        CleanTable(raw), tmp_path / "out.csv", options=ExportOptions(csv_formula_guard=True)
    )


def test_text_xml_cannot_hold_is_replaced_workbook(book, tmp_path):
    _, table, _ = book
    out = tmp_path / "out.xlsx"
    texts = [b[0] for b in BAD_TEXT]
    result = export_table(table, out, options=ExportOptions(log_sheet=True), log_lines=texts)
    wb = openpyxl.load_workbook(out)
    assert [c.value for c in wb["Fix log"]["B"][1:]] == [b[1] for b in BAD_TEXT]
    assert any("control characters" in n for n in result.notes)


def test_only_old_leftovers_of_the_same_target_are_swept(tmp_path):
    import time

    from datemend.core.export import LEFTOVER_AGE_S, sweep_leftovers

    target = tmp_path / "out.csv"
    names = {
        ".out.abcd1234.part": True,  # ours, for this target, old
        ".out.zz_9zz9z.part": False,  # ours, but recent: maybe still being written
        ".other.abcd1234.part": True,  # another target's
        ".out.final.part": True,  # not a name atomic_write makes (a user's file)
        "out.abcd1234.part": True,  # not hidden: not ours
    }
    now = time.time()
    for name, old in names.items():
        (tmp_path / name).write_text("x")
        age = LEFTOVER_AGE_S + 10 if old else 5
        os.utime(tmp_path / name, (now - age, now - age))
    assert sweep_leftovers(target, now=now) == 1
    left = sorted(p.name for p in tmp_path.iterdir())
    assert left == sorted(n for n in names if n != ".out.abcd1234.part")
