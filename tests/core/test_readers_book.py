"""XLSX/XLSM and ODS reader: cell kinds, the 1904 date system, sheets, headers, notes, errors.

Workbooks are built here with openpyxl (XLSX) and pandas' odf engine (ODS); expected values are
written by hand or come from the source named beside them.
"""

import datetime as dt
import zipfile

import numpy as np
import openpyxl
import pandas as pd
import pytest
from openpyxl.utils.datetime import CALENDAR_MAC_1904

from datemend.core.readers import list_sheets, read_table
from datemend.core.readers_book import cell_kinds
from datemend.core.table import CellKind, ReadError, kinds_of

K = CellKind


def _book(path, rows, *, epoch1904=False, setup=None):
    wb = openpyxl.Workbook()
    if epoch1904:
        wb.epoch = CALENDAR_MAC_1904
    ws = wb.active
    ws.title = "Members"
    for r in rows:
        ws.append(r)
    if setup:
        setup(wb, ws)
    wb.save(path)
    return path


def _errors(wb, ws):
    ws["A9"] = "#N/A"
    ws["A9"].data_type = "e"
    ws["A10"] = "#DIV/0!"
    ws["A10"].data_type = "e"


def test_each_cell_keeps_its_kind(tmp_path):
    rows = [
        ["v"],
        ["0012"],
        [42],
        [2.5],
        [dt.date(2026, 10, 3)],
        [dt.datetime(2026, 10, 3, 14, 30)],
        [dt.time(6, 45)],
        [True],
    ]
    p = _book(tmp_path / "k.xlsx", rows, setup=_errors)
    t = read_table(p)
    col = t.column("v")
    expected = [
        ("0012", K.TEXT),
        (42, K.INT),
        (2.5, K.FLOAT),
        (dt.date(2026, 10, 3), K.DATE),
        (dt.datetime(2026, 10, 3, 14, 30), K.DATETIME),
        (dt.time(6, 45), K.TIME),
        (True, K.BOOL),
        ("#N/A", K.ERROR),
        ("#DIV/0!", K.ERROR),
    ]
    assert [(v, K(k)) for v, k in zip(col.values, col.kinds)] == expected
    assert type(col.values[1]) is int
    assert t.facts.format == "xlsx"
    assert t.facts.sheet == "Members"
    assert t.source_rows.tolist() == list(range(2, 11))


def test_empty_cells_inside_the_data(tmp_path):
    p = _book(tmp_path / "e.xlsx", [["a", "b"], [1, None], [None, "x"], ["", 3]])
    t = read_table(p)
    assert list(t.column("a").kinds) == [K.INT, K.EMPTY, K.EMPTY]
    assert list(t.column("b").values) == [None, "x", 3]


# ISO/IEC 29500-1 §18.17.4 (Date Conversion for Serial Values), via REFERENCES.md:
# 1904 system: 2225 → 1910-02-03, 37287 → 2006-02-01, 0.5 → 1904-01-01 12:00;
# 1900 system: 3687 → 1910-02-03, 38749 → 2006-02-01.
SERIALS = [
    (True, 2225, dt.date(1910, 2, 3), "ISO/IEC 29500-1 §18.17.4, 1904 system"),
    (True, 37287, dt.date(2006, 2, 1), "ISO/IEC 29500-1 §18.17.4, 1904 system"),
    (False, 3687, dt.date(1910, 2, 3), "ISO/IEC 29500-1 §18.17.4, 1900 system"),
    (False, 38749, dt.date(2006, 2, 1), "ISO/IEC 29500-1 §18.17.4, 1900 system"),
]


@pytest.mark.parametrize(("is1904", "serial", "expected", "source"), SERIALS)
def test_serial_date_cells_follow_the_workbooks_date_system(
    tmp_path, is1904, serial, expected, source
):
    def fmt(wb, ws):
        ws["A2"].number_format = "yyyy-mm-dd"

    p = _book(tmp_path / "s.xlsx", [["d"], [serial]], epoch1904=is1904, setup=fmt)
    # the raw number is in the file as written, and the flag is set (or not) on workbookPr
    with zipfile.ZipFile(p) as z:
        assert (b'date1904="1"' in z.read("xl/workbook.xml")) == is1904
        assert f"<v>{serial}</v>".encode() in z.read("xl/worksheets/sheet1.xml")
    t = read_table(p)
    assert t.facts.date_system == (1904 if is1904 else 1900)
    value = t.column("d").values[0]
    assert value == expected, source
    assert K(t.column("d").kinds[0]) == K.DATE


def test_serial_table_has_no_repeats():
    assert len({(s[0], s[1]) for s in SERIALS}) == len(SERIALS)


def test_1904_fraction_is_time_of_day(tmp_path):
    # ISO/IEC 29500-1 §18.17.4: in the 1904 system 0.5 is 1904-01-01T12:00:00; 37287.5 is noon.
    def fmt(wb, ws):
        ws["A2"].number_format = "yyyy-mm-dd hh:mm"

    p = _book(tmp_path / "f.xlsx", [["d"], [37287.5]], epoch1904=True, setup=fmt)
    assert read_table(p).column("d").values[0] == dt.datetime(2006, 2, 1, 12, 0)


def test_1904_date_cells_round_trip(tmp_path):
    # openpyxl (reference library) writes these dates as 1904 serials; they must come back equal.
    days = [dt.date(1910, 2, 3), dt.date(2006, 2, 1), dt.date(2026, 10, 31)]
    p = _book(tmp_path / "r.xlsx", [["d"]] + [[d] for d in days], epoch1904=True)
    assert list(read_table(p).column("d").values) == days
    back = openpyxl.load_workbook(p, read_only=True)
    assert [r[0] for r in back.active.iter_rows(min_row=2, values_only=True)] == [
        dt.datetime.combine(d, dt.time()) for d in days
    ]


def test_hidden_first_sheet_and_sheet_choice(tmp_path):
    wb = openpyxl.Workbook()
    hidden = wb.active
    hidden.title = "Lookup"
    hidden.sheet_state = "hidden"
    hidden.append(["code"])
    hidden.append(["x"])
    visible = wb.create_sheet("October")
    visible.append(["Member no"])
    visible.append([7])
    very = wb.create_sheet("Secret")
    very.sheet_state = "veryHidden"
    very.append(["s"])
    p = tmp_path / "multi.xlsx"
    wb.save(p)
    sheets = list_sheets(p)
    assert [(s.name, s.visible, s.state) for s in sheets] == [
        ("Lookup", False, "hidden"),
        ("October", True, "visible"),
        ("Secret", False, "very hidden"),
    ]
    t = read_table(p)
    assert t.facts.sheet == "October"
    assert t.facts.sheets == ("Lookup", "October", "Secret")
    assert t.names == ["Member no"]
    assert read_table(p, sheet="Lookup").names == ["code"]
    with pytest.raises(ReadError) as err:
        read_table(p, sheet="November")
    assert "multi.xlsx" in str(err.value) and '"November"' in str(err.value)


def test_header_detection_and_renaming(tmp_path):
    rows = [[None, None], ["Club export", None], ["Born", "Born"], [None, "x"], ["1990", None]]

    def blank_header(wb, ws):
        ws["C3"] = None
        ws["C5"] = "z"

    p = _book(tmp_path / "h.xlsx", rows, setup=blank_header)
    t = read_table(p)
    # by hand: row 2 fills one cell (a title), row 3 two, the most any row fills: the header
    assert t.facts.header_row == 3
    assert any("like a title" in n for n in t.facts.notes)
    assert read_table(p, header_row=2).facts.header_row == 2
    t = read_table(p, header_row=3)
    assert t.names == ["Born", "Born (2)", "column C"]
    assert t.source_rows.tolist() == [4, 5]
    notes = " ".join(t.facts.notes)
    assert "Duplicate" in notes and "no header" in notes


def test_merged_hidden_and_formulas_noted(tmp_path):
    def setup(wb, ws):
        ws.merge_cells("A1:B1")
        ws.row_dimensions[3].hidden = True
        ws.column_dimensions["B"].hidden = True
        ws["C2"] = "=1+1"

    p = _book(tmp_path / "m.xlsx", [["Dates", None, "c"], [1, 2], [3, 4]], setup=setup)
    t = read_table(p)
    notes = " ".join(t.facts.notes)
    assert "A1:B1" in notes
    assert "rows 3" in notes
    assert "columns B" in notes
    assert "formulas" in notes and "no saved result" in notes


def test_duration_cell_read_as_days(tmp_path):
    def fmt(wb, ws):
        ws["A2"].number_format = "[h]:mm"

    p = _book(tmp_path / "dur.xlsx", [["d"], [dt.timedelta(hours=30)]], setup=fmt)
    t = read_table(p)
    assert t.column("d").values[0] == pytest.approx(1.25)  # 30 h = 1.25 days, by hand
    assert K(t.column("d").kinds[0]) == K.FLOAT
    assert any("durations" in n for n in t.facts.notes)


def test_cell_kinds_agrees_with_kinds_of():
    # kinds_of (table.py) is the reference for plain Python values; integral floats differ on
    # purpose (a spreadsheet holds every number as a float, whole ones are INT here).
    vals = [None, "", "  ", "x", True, False, 2.5, float("nan"), dt.date(2026, 1, 2)]
    vals += [dt.datetime(2026, 1, 2, 3), dt.time(4, 5), "#N/A", 7]
    flat = np.array(vals, dtype=object)
    ref = kinds_of(flat.copy())
    kinds, _ = cell_kinds(flat)
    assert kinds.tolist() == ref.tolist()


def _cells(values) -> list:
    """A column's cells as Python objects, whether held as objects or as Arrow strings."""
    if hasattr(values, "to_pylist"):
        return values.to_pylist()
    return list(values)


# Columns as calamine hands them over (an empty cell is ""), each with a header row and more
# rows than the typed top rows, so the per-column passes run on the body.
_BODY = 80
GRID_COLUMNS = [
    (["Name", *[f"n{i}" for i in range(_BODY)]], "text only: held as Arrow strings"),
    (["Notes", *(["", "  ", "x", "\u00a0"] * (_BODY // 4))], "text with blanks and whitespace"),
    (["No", *[float(100000 + i) for i in range(_BODY)]], "whole numbers: INT"),
    (["Fee", *[i + 0.25 for i in range(_BODY - 1)], float("nan")], "fractions and a NaN"),
    (["Born", *[dt.date(1990, 1, 1 + i % 28) for i in range(_BODY)]], "dates only"),
    (["At", *[dt.datetime(2026, 1, 1, i % 24) for i in range(_BODY)]], "date-times only"),
    (["Mixed", *([dt.date(2020, 1, 2), "soon", "", 3.0] * (_BODY // 4))], "mixed kinds"),
    (["Both", *([dt.date(2020, 1, 2), dt.datetime(2020, 1, 2, 3)] * (_BODY // 2))],
     "dates and date-times: one kind each, not one for the column"),
    (["Flags", *([True, False] * (_BODY // 2))], "booleans only"),
    ([*[f"title {i}" for i in range(3)], "Head", *[float(i) for i in range(_BODY)]],
     "title rows above a number column"),
    ([*[float(i) for i in range(40)], *[f"t{i}" for i in range(_BODY)]],
     "numbers in the top rows, text below: objects"),
    (["Odd", *([None, "a"] * (_BODY // 2))], "text with None cells: not held as Arrow"),
    (["Late", *[f"t{i}" for i in range(_BODY - 1)], 4.0], "text, then a number at the end"),
    (["Early", 4.0, *[f"t{i}" for i in range(_BODY - 1)]], "a number, then text"),
]  # fmt: skip


def test_grid_columns_cases_do_not_repeat():
    assert len({why for _, why in GRID_COLUMNS}) == len(GRID_COLUMNS)


@pytest.mark.parametrize("cells, why", GRID_COLUMNS, ids=[w for _, w in GRID_COLUMNS])
def test_grid_columns_agree_with_cell_kinds(cells, why):
    # cell_kinds (checked against kinds_of above) is the reference for every faster pass
    from datemend.core.readers_book import _grid_columns

    height = max(len(c) for c, _ in GRID_COLUMNS)
    col = list(cells) + [""] * (height - len(cells))
    rows = [[v] for v in col]
    values, kinds, _ = _grid_columns(rows, [], (0, 0))
    ref = np.array(col, dtype=object)
    ref_kinds, _ = cell_kinds(ref)
    assert kinds[0].tolist() == ref_kinds.tolist(), why
    got = _cells(values[0])
    want = list(ref)
    assert [type(v) for v in got] == [type(v) for v in want], why
    assert got == want, why


def test_grid_columns_hold_text_as_arrow_but_errors_as_objects():
    from datemend.core.readers_book import _grid_columns

    rows = [["Name", "Score"], *[[f"n{i}", f"s{i}"] for i in range(60)]]
    values, kinds, _ = _grid_columns(rows, [(5, 1, "#DIV/0!")], (0, 0))
    assert hasattr(values[0], "to_pylist")  # text only: Arrow strings
    assert not hasattr(values[1], "to_pylist")  # an error cell there: Python objects
    assert values[1][5] == "#DIV/0!" and K(kinds[1][5]) == K.ERROR


def test_text_column_of_a_workbook_is_arrow_held(tmp_path):
    p = _book(tmp_path / "t.xlsx", [["Name", "Joined"], *[[f"n{i}", i] for i in range(50)]])
    t = read_table(p)
    assert t.column("Name").arrow is not None
    assert t.column("Name").values[:2].tolist() == ["n0", "n1"]
    assert t.column("Joined").arrow is None  # numbers stay Python objects
    assert t.column("Joined").values[:2].tolist() == [0, 1]


def _ods(path, df, patch=None):
    with pd.ExcelWriter(path, engine="odf") as w:
        df.to_excel(w, sheet_name="Members", index=False)
    if patch:
        with zipfile.ZipFile(path) as z:
            parts = {n: z.read(n) for n in z.namelist()}
        parts["content.xml"] = patch(parts["content.xml"].decode()).encode()
        with zipfile.ZipFile(path, "w") as z:
            z.writestr("mimetype", parts.pop("mimetype"))
            for n, b in parts.items():
                z.writestr(n, b, zipfile.ZIP_DEFLATED)
    return path


def test_ods_kinds(tmp_path):
    df = pd.DataFrame(
        {
            "v": ["0012", 3, 2.5, True],
            "d": [dt.date(2026, 10, 3), dt.datetime(2026, 10, 3, 9, 0), None, None],
        }
    )
    t = read_table(_ods(tmp_path / "k.ods", df))
    assert t.facts.format == "ods"
    v = t.column("v")
    assert [(x, K(k)) for x, k in zip(v.values, v.kinds)] == [
        ("0012", K.TEXT),
        (3, K.INT),
        (2.5, K.FLOAT),
        (True, K.BOOL),
    ]
    d = t.column("d")
    assert list(d.values) == [dt.date(2026, 10, 3), dt.datetime(2026, 10, 3, 9, 0), None, None]


def test_ods_null_date_and_error_cells(tmp_path):
    # OpenDocument 1.2 part 1 §19.642 table:null-date: serials count from this date.
    calc = "urn:org:documentfoundation:names:experimental:calc:xmlns:calcext:1.0"

    def patch(c):
        c = c.replace("xmlns:table=", f'xmlns:calcext="{calc}" xmlns:table=', 1)
        c = c.replace(
            "<office:spreadsheet>",
            "<office:spreadsheet><table:calculation-settings>"
            '<table:null-date table:date-value="1904-01-01"/></table:calculation-settings>',
            1,
        )
        return c.replace(
            '<table:table-cell office:value-type="string" office:string-value="x">'
            "<text:p>x</text:p></table:table-cell>",
            '<table:table-cell table:formula="of:=1/0" office:value-type="float" '
            'office:value="0" calcext:value-type="error"><text:p>#DIV/0!</text:p>'
            "</table:table-cell>",
            1,
        )

    t = read_table(_ods(tmp_path / "e.ods", pd.DataFrame({"v": ["x", "y"]}), patch))
    assert t.facts.date_system == 1904
    assert [(x, K(k)) for x, k in zip(t.column("v").values, t.column("v").kinds)] == [
        ("#DIV/0!", K.ERROR),
        ("y", K.TEXT),
    ]


UNREADABLE = [
    ("notzip.xlsx", b"Member no,Name\n1,x\n", "not a zip archive"),
    ("corrupt.xlsx", b"PK\x03\x04" + b"\x00" * 40, "damaged"),
    ("ole.xlsx", bytes.fromhex("D0CF11E0A1B11AE1") + b"\x00" * 504, "password-protected"),
    ("empty.xlsx", b"", "empty"),
    ("data.docx", b"PK\x03\x04", "extension"),
    ("notods.ods", b"hello", "not a zip archive"),
]


@pytest.mark.parametrize(("name", "data", "fragment"), UNREADABLE, ids=[u[0] for u in UNREADABLE])
def test_unreadable_workbooks_give_one_clear_sentence(tmp_path, name, data, fragment):
    p = tmp_path / name
    p.write_bytes(data)
    with pytest.raises(ReadError) as err:
        read_table(p)
    msg = str(err.value)
    assert name in msg and fragment in msg
    assert msg.count(". ") == 0 and msg.endswith(".")


def test_zip_that_is_not_a_workbook(tmp_path):
    p = tmp_path / "photos.xlsx"
    with zipfile.ZipFile(p, "w") as z:
        z.writestr("a.txt", "hello")
    with pytest.raises(ReadError, match=r"photos\.xlsx is a zip archive but not an XLSX"):
        read_table(p)


def test_missing_file_and_header_past_end(tmp_path):
    with pytest.raises(ReadError, match=r"nothere\.xlsx was not found"):
        read_table(tmp_path / "nothere.xlsx")
    p = _book(tmp_path / "short.xlsx", [["a"], [1]])
    with pytest.raises(ReadError, match=r"Header row 50 is past the end of short\.xlsx"):
        read_table(p, header_row=50)


def test_ods_merged_and_hidden_rows_noted(tmp_path):
    def patch(c):
        c = c.replace(
            '<table:table-cell office:value-type="string" office:string-value="a">',
            '<table:table-cell table:number-columns-spanned="2" office:value-type="string" '
            'office:string-value="a">',
            1,
        )
        first = c.index("<table:table-row>")
        second = c.index("<table:table-row>", first + 1)
        return c[:second] + '<table:table-row table:visibility="collapse">' + c[second + 17 :]

    df = pd.DataFrame({"a": ["x", "y"], "b": [1, 2]})
    t = read_table(_ods(tmp_path / "m.ods", df, patch))
    notes = " ".join(t.facts.notes)
    assert "A1:B1" in notes  # the spanned header cell
    assert "rows 2" in notes  # the first data row is collapsed (hidden)
    assert t.n_rows == 2


def test_xlsm_reads_like_xlsx(tmp_path):
    p = _book(tmp_path / "macro.xlsm", [["Joined"], [dt.date(2019, 3, 14)]])
    t = read_table(p)
    assert t.facts.format == "xlsm"
    assert t.column("Joined").values[0] == dt.date(2019, 3, 14)


def test_calamine_behaviour_the_reader_relies_on(tmp_path):
    """Pins what python-calamine does, so an upgrade that changes it fails here first.

    1) it applies date1904 itself (ISO/IEC 29500-1 §18.17.4: 1904 serial 2225 is 1910-02-03), so
    the reader must not shift dates again; 2) it returns error cells as empty text, which is why
    the reader takes them from the sheet XML.
    """
    from python_calamine import CalamineWorkbook

    def setup(wb, ws):
        ws["A2"].number_format = "yyyy-mm-dd"
        ws["A3"] = "#N/A"
        ws["A3"].data_type = "e"

    p = _book(tmp_path / "pin.xlsx", [["d"], [2225]], epoch1904=True, setup=setup)
    book = CalamineWorkbook.from_path(p)
    rows = book.get_sheet_by_index(0).to_python()
    book.close()
    assert rows[1][0] == dt.date(1910, 2, 3)
    assert rows[2][0] == ""
