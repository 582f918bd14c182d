"""Raw values survive read → export → read back, whitespace-only cells included.

A workbook, a CSV and a Parquet file are generated here; each is read with datemend's reader,
its date columns are fixed with the engine, and it is exported by every writer (kept workbook,
streaming XLSX, CSV, Parquet). The output is read back with independent readers (openpyxl,
python-calamine, pyarrow) and every non-date cell is compared with the source value, written out
by hand below. Why each cell is there: leading zeros, > 15 digits, "1e5" (must stay text), very
long text, a newline inside a cell, booleans, error cells, whitespace-only cells (spaces, a tab,
a no-break space), a duplicate header (renamed on reading), a title row above the header.
"""

from __future__ import annotations

import datetime as dt
import zipfile

import numpy as np
import openpyxl
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv
import pyarrow.parquet as pq
import pytest
from python_calamine import CalamineWorkbook

from datemend.core.clean import CellState, CleanTable
from datemend.core.export import ExportOptions, export_table
from datemend.core.parse import parse_column
from datemend.core.patterns import PATTERNS
from datemend.core.readers import read_table
from datemend.core.spec import ParseSpec
from datemend.core.table import CellKind as K
from datemend.core.table import RawTable

LONG = (
    "Stroke side, " * 2000
)  # 26,000 characters: under the 32,767 a cell holds (value from memory)
NBSP = "\xa0"

#: Non-date columns: header → cells as (value, kind), by hand. "Err" cells are set as errors.
SOURCE = {
    "Member no": [(1, K.INT), (2, K.INT), (3, K.INT), (4, K.INT)],
    "Name": [("Ann Oar", K.TEXT), ("   ", K.EMPTY), ("\t", K.EMPTY), (NBSP, K.EMPTY)],
    "Code": [
        ("0012", K.TEXT),  # leading zeros: text, not the number 12
        ("12345678901234567890", K.TEXT),  # 20 digits: beyond a float's 15-16
        ("1e5", K.TEXT),  # not 100000
        ("  0012  ", K.TEXT),  # padding is part of the value
    ],
    "Note": [("line one\nline two", K.TEXT), (LONG, K.TEXT), (True, K.BOOL), (3.5, K.FLOAT)],
    "Err": [("#N/A", K.ERROR), ("#DIV/0!", K.ERROR), (7, K.INT), (" ", K.EMPTY)],
}
#: Date columns: both headed "Joined" in the file (the reader renames the second).
JOINED = ["2024-01-05", "   ", "2024-02-29", "2023-10-01"]
JOINED_2 = ["2023-12-31", "2023-11-30", NBSP, "2023-09-30"]
HEADERS = [*SOURCE, "Joined", "Joined"]
TITLE_ROWS = 2  # a title, then an empty row, above the header


def _no_repeats():
    for cells in SOURCE.values():
        texts = [repr(v) for v, _ in cells]
        assert len(texts) == len(set(texts))


def _make_xlsx(path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Members"
    ws["A1"] = "Rowing club monthly export"
    ws.append([])
    ws.append(HEADERS)
    for i in range(4):
        row = [cells[i][0] for cells in SOURCE.values()] + [JOINED[i], JOINED_2[i]]
        ws.append(row)
    for r in (4, 5):  # the two error cells
        ws.cell(r, 5).data_type = "e"
    wb.save(path)
    _preserve_spaces(path)
    return path


def _preserve_spaces(path):
    """Mark every inline string xml:space="preserve", as spreadsheet programs write them:
    openpyxl leaves the mark off a whitespace-only string, and then XML readers may drop it
    (XML 1.0 §2.10)."""
    with zipfile.ZipFile(path) as z:
        parts = {n: z.read(n) for n in z.namelist()}
    sheet = "xl/worksheets/sheet1.xml"
    parts[sheet] = parts[sheet].replace(b"<t>", b'<t xml:space="preserve">')
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for n, b in parts.items():
            z.writestr(n, b)


def _fix(raw) -> CleanTable:
    spec = ParseSpec(patterns=tuple(PATTERNS), date_system=raw.facts.date_system)
    clean = CleanTable(raw)
    for name in ("Joined", "Joined (2)"):
        clean = clean.with_parsed(parse_column(raw.column(name), spec, raw.facts))
    return clean


def test_table_rows_do_not_repeat():
    _no_repeats()


def test_reader_keeps_whitespace_text_with_kind_empty(tmp_path):
    raw = read_table(_make_xlsx(tmp_path / "club.xlsx"), header_row=3)
    assert raw.names == [*SOURCE, "Joined", "Joined (2)"]
    assert raw.facts.header_row == 3
    for name, cells in SOURCE.items():
        col = raw.column(name)
        assert list(col.values) == [v for v, _ in cells], name
        assert [K(k) for k in col.kinds] == [k for _, k in cells], name
    # the engine sees them as blank: text() gives None for an EMPTY cell
    assert raw.column("Name").text().tolist() == ["Ann Oar", None, None, None]
    clean = _fix(raw)
    assert CellState(clean.parsed["Joined"].state[1]) == CellState.BLANK
    assert CellState(clean.parsed["Joined (2)"].state[2]) == CellState.BLANK


def _openpyxl_cells(path, first_row, col_of):
    """(value, kind) of each source column's cells as openpyxl reads them."""
    ws = openpyxl.load_workbook(path)["Members"] if "kept" in path.name else None
    if ws is None:
        ws = openpyxl.load_workbook(path).worksheets[0]
    out = {}
    for name in SOURCE:
        cells = []
        for i in range(4):
            c = ws.cell(first_row + i, col_of[name])
            cells.append((c.value, c.data_type))
        out[name] = cells
    return ws, out


#: openpyxl's data_type for each kind (ISO/IEC 29500-1 §18.18.11 ST_CellType: n, s, b, e).
_TYPE = {K.TEXT: "s", K.EMPTY: "s", K.INT: "n", K.FLOAT: "n", K.BOOL: "b", K.ERROR: "e"}


@pytest.mark.parametrize("writer", ["kept", "streaming"])
def test_xlsx_exports_keep_every_non_date_cell(tmp_path, writer):
    src = _make_xlsx(tmp_path / "club.xlsx")
    clean = _fix(read_table(src, header_row=3))
    out = tmp_path / f"{writer}.xlsx"
    res = export_table(clean, out, options=ExportOptions(streaming=writer == "streaming"))
    assert res.writer == ("workbook" if writer == "kept" else "streaming")
    if writer == "kept":
        first, col_of = TITLE_ROWS + 2, {n: j + 1 for j, n in enumerate(SOURCE)}
    else:
        first, col_of = 2, {n: j + 1 for j, n in enumerate(SOURCE)}
    ws, got = _openpyxl_cells(out, first, col_of)
    for name, cells in SOURCE.items():
        assert [v for v, _ in got[name]] == [v for v, _ in cells], name
        assert [t for _, t in got[name]] == [_TYPE[k] for _, k in cells], name
    if writer == "kept":
        # the header keeps the source's text, not the reader's unique name
        assert [ws.cell(3, j).value for j in range(1, 8)] == HEADERS
        assert ws["A1"].value == "Rowing club monthly export"
        # blank date cells are cleared (clear_blank_tokens, the default)
        assert ws.cell(5, 6).value is None and ws.cell(6, 7).value is None
        assert ws.cell(4, 6).value == dt.datetime(2024, 1, 5)
    else:
        assert [ws.cell(1, j).value for j in range(1, 8)] == [*SOURCE, "Joined", "Joined (2)"]
        assert ws.cell(3, 6).value is None and ws.cell(4, 7).value is None


def test_streaming_xlsx_read_by_calamine_keeps_whitespace(tmp_path):
    clean = _fix(read_table(_make_xlsx(tmp_path / "club.xlsx"), header_row=3))
    out = tmp_path / "s.xlsx"
    export_table(clean, out, options=ExportOptions(streaming=True))
    rows = CalamineWorkbook.from_path(str(out)).get_sheet_by_index(0).to_python()
    assert [r[1] for r in rows[1:5]] == ["Ann Oar", "   ", "\t", NBSP]
    assert [r[2] for r in rows[1:5]] == ["0012", "12345678901234567890", "1e5", "  0012  "]
    assert rows[2][3] == LONG and rows[1][3] == "line one\nline two"
    assert rows[4][4] == " "


def _csv_expected():
    """Each source cell as CSV text: numbers as written, TRUE/FALSE, the error's text."""

    def text(v):
        if isinstance(v, bool):
            return "TRUE" if v else "FALSE"
        return v if isinstance(v, str) else {1: "1", 2: "2", 3: "3", 4: "4", 3.5: "3.5", 7: "7"}[v]

    return {name: [text(v) for v, _ in cells] for name, cells in SOURCE.items()}


def test_csv_export_keeps_every_non_date_cell(tmp_path):
    clean = _fix(read_table(_make_xlsx(tmp_path / "club.xlsx"), header_row=3))
    out = tmp_path / "out.csv"
    export_table(clean, out)
    names = [*SOURCE, "Joined", "Joined (2)"]
    t = pacsv.read_csv(
        out,
        parse_options=pacsv.ParseOptions(newlines_in_values=True),
        convert_options=pacsv.ConvertOptions(
            column_types={n: pa.string() for n in names}, strings_can_be_null=False
        ),
    )
    assert t.column_names == names
    for name, expected in _csv_expected().items():
        assert t.column(name).to_pylist() == expected, name
    assert t.column("Joined").to_pylist() == ["2024-01-05", "", "2024-02-29", "2023-10-01"]


def test_csv_source_round_trips_whitespace_through_csv_and_streaming(tmp_path):
    src = tmp_path / "club.csv"
    src.write_text('id,name,joined\r\n1,"   ",2024-01-05\r\n2,\t,\xa0\r\n3,x,\r\n', "utf-8")
    raw = read_table(src)
    assert list(raw.column("name").values) == ["   ", "\t", "x"]
    assert [K(k) for k in raw.column("name").kinds] == [K.EMPTY, K.EMPTY, K.TEXT]
    assert list(raw.column("joined").values) == ["2024-01-05", NBSP, None]
    spec = ParseSpec(patterns=tuple(PATTERNS))
    clean = CleanTable(raw).with_parsed(parse_column(raw.column("joined"), spec, raw.facts))
    export_table(clean, tmp_path / "o.csv")
    # by hand: the whitespace cells of the unfixed column come back; the blank date cell is
    # written empty (clear_blank_tokens)
    body = (tmp_path / "o.csv").read_bytes().decode("utf-8")
    assert body == "id,name,joined\r\n1,   ,2024-01-05\r\n2,\t,\r\n3,x,\r\n"
    export_table(clean, tmp_path / "o.xlsx")
    rows = CalamineWorkbook.from_path(str(tmp_path / "o.xlsx")).get_sheet_by_index(0).to_python()
    assert [r[1] for r in rows[1:]] == ["   ", "\t", "x"]


def test_keeping_blank_tokens_keeps_whitespace_in_fixed_columns(tmp_path):
    src = tmp_path / "club.csv"
    src.write_text("id,joined\n1,2024-01-05\n2,\xa0\n3,\n", "utf-8")
    raw = read_table(src)
    spec = ParseSpec(patterns=tuple(PATTERNS))
    clean = CleanTable(raw).with_parsed(parse_column(raw.column("joined"), spec, raw.facts))
    opts = ExportOptions(clear_blank_tokens=False)
    export_table(clean, tmp_path / "o.csv", options=opts)
    assert (tmp_path / "o.csv").read_bytes().decode(
        "utf-8"
    ) == "id,joined\r\n1,2024-01-05\r\n2,\xa0\r\n3,\r\n"
    export_table(clean, tmp_path / "o.xlsx", options=opts)
    rows = CalamineWorkbook.from_path(str(tmp_path / "o.xlsx")).get_sheet_by_index(0).to_python()
    assert [r[1] for r in rows[1:]] == [dt.date(2024, 1, 5), NBSP, ""]  # calamine: a date-only cell


def test_parquet_export_keeps_every_non_date_cell(tmp_path):
    clean = _fix(read_table(_make_xlsx(tmp_path / "club.xlsx"), header_row=3))
    out = tmp_path / "out.parquet"
    res = export_table(clean, out)
    t = pq.read_table(out)
    assert t.schema.field("Member no").type == pa.int64()
    assert t.column("Member no").to_pylist() == [1, 2, 3, 4]
    assert t.schema.field("Name").type == pa.string()
    assert t.column("Name").to_pylist() == ["Ann Oar", "   ", "\t", NBSP]
    assert t.column("Code").to_pylist() == [v for v, _ in SOURCE["Code"]]
    # mixed kinds are written as text (the writer says so in a note)
    assert t.column("Note").to_pylist() == ["line one\nline two", LONG, "TRUE", "3.5"]
    assert t.column("Err").to_pylist() == ["#N/A", "#DIV/0!", "7", " "]
    assert any('"Note" mixes kinds' in n for n in res.notes)
    assert t.column("Joined").to_pylist() == [
        dt.date(2024, 1, 5),
        None,
        dt.date(2024, 2, 29),
        dt.date(2023, 10, 1),
    ]


def test_parquet_source_round_trips_whitespace(tmp_path):
    src = tmp_path / "club.parquet"
    pq.write_table(pa.table({"name": ["   ", None, "", "\t", "Bo"], "n": [1, 2, None, 4, 5]}), src)
    raw = read_table(src)
    assert list(raw.column("name").values) == ["   ", None, None, "\t", "Bo"]
    assert [K(k) for k in raw.column("name").kinds] == [K.EMPTY] * 4 + [K.TEXT]
    export_table(CleanTable(raw), tmp_path / "o.parquet")
    t = pq.read_table(tmp_path / "o.parquet")
    # by hand: "" has no value on reading, so it comes back null; whitespace comes back as is
    assert t.column("name").to_pylist() == ["   ", None, None, "\t", "Bo"]
    assert t.column("n").to_pylist() == [1, 2, None, 4, 5]


def test_ods_reader_keeps_whitespace(tmp_path):
    import pandas as pd

    p = tmp_path / "club.ods"
    df = pd.DataFrame({"name": ["Ann", "   ", NBSP], "id": [1, 2, 3]})
    with pd.ExcelWriter(p, engine="odf") as w:
        df.to_excel(w, sheet_name="Members", index=False)
    raw = read_table(p)
    assert list(raw.column("name").values) == ["Ann", "   ", NBSP]
    assert [K(k) for k in raw.column("name").kinds] == [K.TEXT, K.EMPTY, K.EMPTY]
    assert np.array_equal(raw.column("id").values, np.array([1, 2, 3], dtype=object))


# (value, kind expected, why): Python's str.isspace and Arrow's utf8_trim_whitespace are the two
# definitions of whitespace in play; kinds_of (table.py) and cell_kinds (readers_book.py) agree.
BLANKS = [
    ("   ", K.EMPTY, "spaces"),
    ("\t", K.EMPTY, "a tab"),
    (NBSP, K.EMPTY, "U+00A0 no-break space (Unicode Zs)"),
    ("\u2003", K.EMPTY, "U+2003 em space (Unicode Zs)"),
    ("\u3000", K.EMPTY, "U+3000 ideographic space (Unicode Zs)"),
    ("\u200b", K.TEXT, "U+200B zero width space is Cf, not whitespace, in both definitions"),
    ("", K.EMPTY, "empty text"),
    (" x ", K.TEXT, "padded text"),
]


def test_blank_rows_do_not_repeat():
    assert len({b[0] for b in BLANKS}) == len(BLANKS)


@pytest.mark.parametrize(("value", "kind", "why"), BLANKS, ids=[b[2] for b in BLANKS])
def test_cell_kinds_and_kinds_of_agree_on_whitespace(value, kind, why):
    from datemend.core.readers_book import cell_kinds
    from datemend.core.table import kinds_of

    flat = np.array([value, 1.0], dtype=object)
    kinds, _ = cell_kinds(flat)
    assert K(kinds[0]) == kind
    assert K(kinds_of(np.array([value], dtype=object))[0]) == kind
    # the string is kept unless it is "" (no value at all)
    assert flat[0] == (None if value == "" else value)


def test_parquet_keeps_offsets_of_an_untouched_timestamp_column(tmp_path):
    # A zone-aware timestamp column that is not fixed must keep its instants and its zone:
    # 12:00 at +02:00 is 10:00 UTC (by hand), never a naive 10:00 or 12:00.
    plus2 = dt.timezone(dt.timedelta(hours=2))
    src = tmp_path / "club.parquet"
    at = [dt.datetime(2024, 1, 1, 12, tzinfo=plus2), None]
    pq.write_table(pa.table({"t": pa.array(at, type=pa.timestamp("us", tz="+02:00"))}), src)
    raw = read_table(src)
    export_table(CleanTable(raw), tmp_path / "o.parquet")
    t = pq.read_table(tmp_path / "o.parquet")
    assert t.schema.field("t").type.tz is not None
    got = t.column("t").to_pylist()
    assert got[0] == dt.datetime(2024, 1, 1, 10, tzinfo=dt.UTC)
    assert got[0].utcoffset() == dt.timedelta(hours=2)  # the zone written is the source's
    assert got[1] is None


def test_parquet_writes_mixed_naive_and_zoned_timestamps_as_text(tmp_path):
    # one timestamp type cannot hold 09:00 (no zone) and 12:00+02:00 as read: text, ISO 8601
    plus2 = dt.timezone(dt.timedelta(hours=2))
    df = pd.DataFrame(
        {"t": pd.Series([dt.datetime(2024, 1, 1, 9), dt.datetime(2024, 1, 1, 12, tzinfo=plus2)])}
    )
    raw = RawTable.from_dataframe(df.astype(object))
    assert [K(k) for k in raw.column("t").kinds] == [K.DATETIME, K.DATETIME]
    export_table(CleanTable(raw), tmp_path / "o.parquet")
    t = pq.read_table(tmp_path / "o.parquet")
    assert t.column("t").to_pylist() == ["2024-01-01T09:00:00", "2024-01-01T12:00:00+02:00"]


def test_csv_writes_each_timestamp_with_its_own_offset(tmp_path):
    # a zoned value after a naive one must keep its offset (RFC 3339 text, written by hand)
    plus2 = dt.timezone(dt.timedelta(hours=2))
    df = pd.DataFrame(
        {"t": [dt.datetime(2024, 1, 1, 9), dt.datetime(2024, 1, 1, 12, tzinfo=plus2)]}
    )
    raw = RawTable.from_dataframe(df.astype(object))
    export_table(CleanTable(raw), tmp_path / "o.csv")
    body = (tmp_path / "o.csv").read_bytes().decode("utf-8")
    assert body == "t\r\n2024-01-01T09:00:00\r\n2024-01-01T12:00:00+02:00\r\n"


def test_kept_workbook_finds_a_renamed_column_past_a_dropped_empty_one(tmp_path):
    # Sheet columns: A "Name", B (no header, no cells: left out on reading), C "Joined",
    # D "Joined" (read as "Joined (2)"). Fixing "Joined (2)" must change column D only, by hand.
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Members"
    ws.append(["Name", None, "Joined", "Joined"])
    ws.append(["Ann", None, "first", "2024-01-05"])
    ws.append(["Bo", None, "second", "2023-12-31"])
    wb.save(tmp_path / "club.xlsx")
    raw = read_table(tmp_path / "club.xlsx")
    assert raw.names == ["Name", "Joined", "Joined (2)"]
    spec = ParseSpec(patterns=tuple(PATTERNS))
    clean = CleanTable(raw).with_parsed(parse_column(raw.column("Joined (2)"), spec, raw.facts))
    export_table(clean, tmp_path / "o.xlsx", options=ExportOptions(streaming=False))
    out = openpyxl.load_workbook(tmp_path / "o.xlsx")["Members"]
    assert [c.value for c in out[1]] == ["Name", None, "Joined", "Joined"]
    assert [out.cell(r, 3).value for r in (2, 3)] == ["first", "second"]
    assert [out.cell(r, 4).value for r in (2, 3)] == [
        dt.datetime(2024, 1, 5),
        dt.datetime(2023, 12, 31),
    ]


@pytest.mark.parametrize("target", ["o.csv", "o.xlsx", "o.parquet"])
def test_new_file_exports_say_rows_above_the_header_are_not_written(tmp_path, target):
    # the title row above the header is kept by the kept-workbook writer (tested above); a new
    # file holds only the table, and the result must say so rather than drop it silently
    raw = read_table(_make_xlsx(tmp_path / "club.xlsx"), header_row=3)
    opts = ExportOptions(streaming=True)
    res = export_table(_fix(raw), tmp_path / target, options=opts)
    assert any("above the header" in n and "not written" in n for n in res.notes), res.notes
    kept = export_table(_fix(raw), tmp_path / "k.xlsx", options=ExportOptions(streaming=False))
    assert not any("not written" in n for n in kept.notes)


def test_parquet_writes_dates_among_datetimes_as_timestamps(tmp_path):
    # a workbook reader gives a midnight date-time cell as a date: the column mixes DATE and
    # DATETIME cells, which one timestamp column holds exactly (a date is its midnight), as
    # INT among FLOAT cells is written float64 — not the whole column as text
    at = [dt.datetime(2024, 2, 29, 23, 59, 59, 500000), dt.date(2024, 1, 1), None]
    raw = RawTable.from_dataframe(pd.DataFrame({"t": pd.Series(at, dtype=object)}))
    assert [K(k) for k in raw.column("t").kinds] == [K.DATETIME, K.DATE, K.EMPTY]
    res = export_table(CleanTable(raw), tmp_path / "o.parquet")
    t = pq.read_table(tmp_path / "o.parquet")
    assert t.schema.field("t").type == pa.timestamp("us")
    assert t.column("t").to_pylist() == [at[0], dt.datetime(2024, 1, 1), None]
    assert not any("mixes kinds" in n for n in res.notes)


def test_streaming_xlsx_keeps_text_longer_than_a_cell_shows_and_says_so(tmp_path):
    # spreadsheet programs hold at most 32,767 characters in a cell (value from memory of their
    # published limits): the text is written whole, and the result warns that it may be cut
    src = tmp_path / "club.csv"
    long = "x" * 40_000
    src.write_text(f"id,note\n1,{long}\n2,short\n", "utf-8")
    res = export_table(CleanTable(read_table(src)), tmp_path / "o.xlsx")
    rows = CalamineWorkbook.from_path(str(tmp_path / "o.xlsx")).get_sheet_by_index(0).to_python()
    assert rows[1][1] == long
    assert any("1 text cell" in n and "32,767" in n for n in res.notes), res.notes


def test_ragged_csv_keeps_whitespace_too(tmp_path):
    # a short row sends the reader to its standard-library path, which must keep them as well
    src = tmp_path / "rag.csv"
    src.write_bytes(b"a,b\n1,   \n2\n3,\t,x\n")
    raw = read_table(src)
    assert list(raw.column("b").values) == ["   ", None, "\t"]
    assert [K(k) for k in raw.column("b").kinds] == [K.EMPTY, K.EMPTY, K.EMPTY]
    assert list(raw.column("column 3").values) == [None, None, "x"]


def test_kept_workbook_zone_suffix_goes_on_the_source_header_text(tmp_path):
    # "Joined" twice: the second is read as "Joined (2)"; with zone_in_header the written header
    # is the sheet's own text plus the zone, "Joined (UTC)", never "Joined (2) (UTC)"
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Members"
    ws.append(["Name", "Joined", "Joined"])
    ws.append(["Ann", "x", "2024-01-05T10:00:00+02:00"])
    wb.save(tmp_path / "club.xlsx")
    raw = read_table(tmp_path / "club.xlsx")
    spec = ParseSpec(patterns=tuple(PATTERNS))
    clean = CleanTable(raw).with_parsed(parse_column(raw.column("Joined (2)"), spec, raw.facts))
    assert clean.parsed["Joined (2)"].offset_min[0] == 120  # read with its offset
    opts = ExportOptions(streaming=False, zone_in_header=True)
    export_table(clean, tmp_path / "o.xlsx", options=opts)
    out = openpyxl.load_workbook(tmp_path / "o.xlsx")["Members"]
    assert [c.value for c in out[1]] == ["Name", "Joined", "Joined (UTC)"]
    assert out.cell(2, 3).value == dt.datetime(2024, 1, 5, 8)  # 10:00+02:00 is 08:00 UTC
