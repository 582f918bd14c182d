"""XLSX export round trips: read the output back with openpyxl and python-calamine.

Expected dates come from the hand-typed table in test_export_book.py; the serial numbers stored in
the file are checked against ISO/IEC 29500-1 §18.17.4 (REFERENCES.md) and openpyxl's
``from_excel``; offset-carrying values are moved to UTC with Python's datetime and zoneinfo.
"""

from __future__ import annotations

import datetime as dt
import re
import zipfile
from zoneinfo import ZoneInfo

import numpy as np
import openpyxl
import pytest
import python_calamine
from openpyxl.utils.datetime import CALENDAR_MAC_1904, CALENDAR_WINDOWS_1900, from_excel
from test_export_book import (
    HEADER_ROW,
    HEADERS,
    JOINED,
    OUTING,
    B,
    P,
    build_book,
    clean_table,
    member_rows,
    sha256,
)

from datemend.core.clean import CellState
from datemend.core.export import ExportOptions, export_table

JOINED_COL, OUTING_COL = 2, 6
FIXED = {JOINED_COL, OUTING_COL}


def _utc(text: str) -> dt.datetime:
    """Reference: Python's datetime reads the ISO 8601 text and moves it to UTC."""
    return dt.datetime.fromisoformat(text).astimezone(dt.UTC).replace(tzinfo=None)


def expected_outing(i: int, zone: str = "UTC") -> dt.datetime | None:
    state, value, offset, _, _ = OUTING[i]
    if state not in (CellState.PARSED, CellState.MANUAL):
        return None
    if offset is None:
        return value
    aware = dt.datetime.fromisoformat(member_rows(False)[i][5])
    return aware.astimezone(ZoneInfo(zone)).replace(tzinfo=None)


@pytest.fixture(params=[False, True], ids=["1900-system", "1904-system"])
def exported(request, tmp_path):
    src = build_book(tmp_path / "club.xlsx", epoch1904=request.param)
    before = sha256(src)
    out = tmp_path / "club-clean.xlsx"
    result = export_table(clean_table(src), out)
    assert sha256(src) == before  # the source is never written
    return src, out, result, request.param


def test_writer_and_counts(exported):
    _, out, result, _ = exported
    assert result.writer == "workbook" and result.format == "xlsx" and result.path == out
    dates = sum(r[0] in (P, CellState.MANUAL) for r in JOINED + OUTING)
    assert result.dates_written == dates
    bad = (CellState.FAILED, CellState.AMBIGUOUS)
    assert result.unresolved == sum(r[0] in bad for r in JOINED + OUTING) == 5
    assert any("Formulas are kept" in n for n in result.notes)


def test_every_other_cell_is_kept_openpyxl(exported):
    """Value, kind (data_type), number format of every cell outside the fixed cells."""
    src, out, _, _ = exported
    a = openpyxl.load_workbook(src)
    b = openpyxl.load_workbook(out)
    assert b.sheetnames == a.sheetnames
    assert b.epoch == a.epoch
    for name in a.sheetnames:
        wa, wb_ = a[name], b[name]
        assert wb_.max_row == wa.max_row and wb_.max_column == wa.max_column
        assert sorted(map(str, wb_.merged_cells.ranges)) == sorted(map(str, wa.merged_cells.ranges))
        for key, dim in wa.column_dimensions.items():
            assert wb_.column_dimensions[key].width == dim.width, (name, key)
        for row in wa.iter_rows():
            for ca in row:
                fixed = name == "Members" and ca.column in FIXED and ca.row > HEADER_ROW
                renamed = name == "Members" and ca.row == HEADER_ROW and ca.column == JOINED_COL
                if fixed or renamed:
                    continue
                cb = wb_.cell(ca.row, ca.column)
                assert cb.value == ca.value, ca.coordinate
                if ca.value is not None:  # openpyxl gives empty cells assorted types
                    assert cb.data_type == ca.data_type, ca.coordinate
                assert cb.number_format == ca.number_format, ca.coordinate


def test_fixed_cells_are_dates_openpyxl(exported):
    src, out, _, _ = exported
    a = openpyxl.load_workbook(src)["Members"]
    ws = openpyxl.load_workbook(out)["Members"]
    assert ws.cell(HEADER_ROW, JOINED_COL).value == "Member since"  # output name
    assert ws.cell(HEADER_ROW, OUTING_COL).value == "Last outing"
    assert "UTC" in ws.cell(HEADER_ROW, OUTING_COL).comment.text  # the note on the zone
    for i, (state, value, _) in enumerate(JOINED):
        cell, was = ws.cell(HEADER_ROW + 1 + i, JOINED_COL), a.cell(HEADER_ROW + 1 + i, JOINED_COL)
        if state == P:
            assert cell.is_date and cell.value == value, cell.coordinate
            assert cell.number_format == "yyyy-mm-dd"
        elif state == B:
            assert cell.value is None, cell.coordinate
        else:  # unresolved: the raw value and kind stay
            assert (cell.value, cell.data_type) == (was.value, was.data_type), cell.coordinate
    for i, row in enumerate(OUTING):
        cell, was = ws.cell(HEADER_ROW + 1 + i, OUTING_COL), a.cell(HEADER_ROW + 1 + i, OUTING_COL)
        want = expected_outing(i)
        if want is not None:
            assert cell.is_date and cell.value == want, cell.coordinate
            assert cell.number_format == "yyyy-mm-dd hh:mm:ss"
        elif row[0] == B:
            assert cell.value is None
        else:
            assert (cell.value, cell.data_type) == (was.value, was.data_type)


def test_rfc3339_offset_moved_to_utc(exported):
    # RFC 3339 §5.8: 1996-12-19T16:39:57-08:00 is the instant 1996-12-20T00:39:57Z.
    _, out, _, _ = exported
    ws = openpyxl.load_workbook(out)["Members"]
    assert ws.cell(HEADER_ROW + 3, OUTING_COL).value == dt.datetime(1996, 12, 20, 0, 39, 57)
    assert _utc("1996-12-19T16:39:57-08:00") == dt.datetime(1996, 12, 20, 0, 39, 57)


SERIALS = [
    # (row index in JOINED, 1900-system serial, 1904-system serial, source)
    (0, 3687, 2225, "ISO/IEC 29500-1 §18.17.4 via REFERENCES.md: 1910-02-03"),
    (1, 38749, 37287, "ISO/IEC 29500-1 §18.17.4 via REFERENCES.md: 2006-02-01"),
    (2, 2958465, 2957003, "ISO/IEC 29500-1 §18.17.4 via REFERENCES.md: 9999-12-31"),
]


def _stored_values(path, sheet_xml="xl/worksheets/sheet1.xml") -> dict[str, str]:
    with zipfile.ZipFile(path) as z:
        text = z.read(sheet_xml).decode()
    return dict(re.findall(r'<c r="([A-Z]+\d+)"[^>]*>(?:<f>[^<]*</f>)?<v>([^<]*)</v>', text))


@pytest.mark.parametrize(("i", "s1900", "s1904", "why"), SERIALS, ids=[s[3] for s in SERIALS])
def test_stored_serials_match_the_standard(exported, i, s1900, s1904, why):
    _, out, _, epoch1904 = exported
    stored = _stored_values(out)[f"B{HEADER_ROW + 1 + i}"]
    serial = s1904 if epoch1904 else s1900
    assert float(stored) == serial, why
    epoch = CALENDAR_MAC_1904 if epoch1904 else CALENDAR_WINDOWS_1900
    assert from_excel(float(stored), epoch) == JOINED[i][1]  # openpyxl as a second reference


def test_serial_table_has_no_repeats():
    assert len({s[0] for s in SERIALS}) == len(SERIALS)


def _calamine(path, sheet):
    book = python_calamine.CalamineWorkbook.from_path(str(path))
    return book.get_sheet_by_name(sheet).to_python(skip_empty_area=False)


def _as_datetime(v):
    # calamine gives a date for a date-time cell whose time is midnight
    if isinstance(v, dt.date) and not isinstance(v, dt.datetime):
        return dt.datetime(v.year, v.month, v.day)
    return v


def test_round_trip_calamine(exported):
    """A second reader: fixed cells are dates with the right values; every other cell reads the
    same, except formulas, whose cached results are dropped (they would be stale once dates
    change) and recalculated when a spreadsheet program opens the file."""
    src, out, _, _ = exported
    formulas = {
        (c.row, c.column)
        for c in openpyxl.load_workbook(src)["Members"].iter_rows()
        for c in c
        if c.data_type == "f"
    }
    a, b = _calamine(src, "Members"), _calamine(out, "Members")
    assert len(a) == len(b)
    for r, (ra, rb) in enumerate(zip(a, b), 1):
        assert len(ra) == len(rb)
        for c, (va, vb) in enumerate(zip(ra, rb), 1):
            i = r - HEADER_ROW - 1
            if i >= 0 and c == JOINED_COL and JOINED[i][0] == P:
                assert vb == JOINED[i][1].date(), (r, c)  # date-only format: a date
            elif i >= 0 and c == OUTING_COL and expected_outing(i) is not None:
                assert _as_datetime(vb) == expected_outing(i), (r, c)
            elif i >= 0 and c in FIXED and (JOINED if c == 2 else OUTING)[i][0] == B:
                assert vb == "", (r, c)
            elif (r, c) in formulas:
                assert vb == "", (r, c)  # no cached result is written
            elif r == HEADER_ROW and c == JOINED_COL:
                assert vb == "Member since"
            else:
                assert (type(vb), vb) == (type(va), va), (r, c)
    for sheet in ("Notes", "Lookup"):
        sa, sb = _calamine(src, sheet), _calamine(out, sheet)
        if sheet == "Notes":
            assert sa[2][1] == 111.5 and sb[2][1] == ""  # the one formula there
            sa[2][1] = sb[2][1] = None
        assert sa == sb


def test_zone_option_and_header_suffix(tmp_path):
    src = build_book(tmp_path / "club.xlsx")
    out = tmp_path / "zoned.xlsx"
    opts = ExportOptions(zone="Pacific/Auckland", zone_in_header=True, date_format="dd.mm.yyyy")
    export_table(clean_table(src), out, options=opts)
    ws = openpyxl.load_workbook(out)["Members"]
    assert ws.cell(HEADER_ROW, OUTING_COL).value == "Last outing (Pacific/Auckland)"
    assert ws.cell(HEADER_ROW, OUTING_COL).comment is None
    for i in range(len(OUTING)):
        want = expected_outing(i, "Pacific/Auckland")  # zoneinfo is the reference
        if want is not None:
            assert ws.cell(HEADER_ROW + 1 + i, OUTING_COL).value == want
    # 2021-03-04T10:00+02:00 is 08:00Z, 21:00 in Auckland (NZDT, +13:00, zoneinfo)
    assert ws.cell(HEADER_ROW + 1, OUTING_COL).value == dt.datetime(2021, 3, 4, 21, 0)
    assert ws.cell(HEADER_ROW + 1, JOINED_COL).number_format == "dd.mm.yyyy"


def test_keep_raw_unresolved_and_log_sheets(tmp_path):
    src = build_book(tmp_path / "club.xlsx")
    out = tmp_path / "full.xlsx"
    opts = ExportOptions(keep_raw=True, unresolved_sheet=True, log_sheet=True)
    lines = ["Read Joined as day.month.year.", "=HYPERLINK(1) is only text"]
    result = export_table(clean_table(src), out, options=opts, log_lines=lines)
    wb = openpyxl.load_workbook(out)
    assert wb.sheetnames == ["Members", "Notes", "Lookup", "Unresolved cells", "Fix log"]
    ws = wb["Members"]
    a = openpyxl.load_workbook(src)["Members"]
    # raw copies appended at the right end, in the order of the fixed columns
    assert ws.cell(HEADER_ROW, 8).value == "Joined (raw)"
    assert ws.cell(HEADER_ROW, 9).value == "Last outing (raw)"
    for r in range(HEADER_ROW + 1, a.max_row + 1):
        for src_col, raw_col in ((JOINED_COL, 8), (OUTING_COL, 9)):
            was, now = a.cell(r, src_col), ws.cell(r, raw_col)
            assert now.value == was.value, (r, raw_col)
            if was.value is not None:
                assert now.data_type == was.data_type, (r, raw_col)
    assert ws.cell(11, 8).value == "=1+1" and ws.cell(11, 8).data_type == "s"
    un = list(wb["Unresolved cells"].iter_rows(values_only=True))
    assert un[0] == ("Sheet", "Row key", "Source row", "Column", "Raw value", "Reason")
    want = [
        ("Members", "M-004", 6, "Member since", "soon", JOINED[3][2]),
        ("Members", "M-006", 8, "Member since", "04/05/2020", JOINED[5][2]),
        ("Members", "M-009", 11, "Member since", "=1+1", JOINED[8][2]),
        ("Members", "M-005", 7, "Last outing", "junk", OUTING[4][4]),
        ("Members", "M-009", 11, "Last outing", "=A1", OUTING[8][4]),
    ]
    assert un[1:] == want
    assert wb["Unresolved cells"]["E4"].data_type == "s"  # "=1+1" stays text
    log = list(wb["Fix log"].iter_rows(values_only=True))
    assert log[1:] == [(1, lines[0]), (2, lines[1])]
    assert wb["Fix log"]["B3"].data_type == "s"
    assert result.columns == len(HEADERS) + 2


def test_derived_columns_appended(tmp_path):
    import pandas as pd

    from datemend.core.clean import DerivedColumn

    src = build_book(tmp_path / "club.xlsx")
    table = clean_table(src)
    n = table.raw.n_rows
    days = pd.array([None] * n, dtype="Int64")
    days[0] = 5
    label = pd.Series(["=bad"] + [None] * (n - 1), dtype="string")
    when = pd.Series(np.full(n, np.datetime64("NaT"), dtype="datetime64[us]"))
    when[1] = pd.Timestamp("2030-06-30")
    table = table.evolve(
        derived={
            "Days": DerivedColumn("Days", pd.Series(days), note="Check against the club rules."),
            "Label": DerivedColumn("Label", label),
            "Due": DerivedColumn("Due", when),
        }
    )
    out = tmp_path / "derived.xlsx"
    export_table(table, out)
    ws = openpyxl.load_workbook(out)["Members"]
    assert [ws.cell(HEADER_ROW, c).value for c in (8, 9, 10)] == ["Days", "Label", "Due"]
    assert "club rules" in ws.cell(HEADER_ROW, 8).comment.text
    assert ws.cell(3, 8).value == 5 and ws.cell(4, 8).value is None
    assert ws.cell(3, 9).value == "=bad" and ws.cell(3, 9).data_type == "s"
    assert ws.cell(4, 10).is_date and ws.cell(4, 10).value == dt.datetime(2030, 6, 30)


def test_date_before_the_date_system_is_text(tmp_path):
    """ISO/IEC 29500-1 §18.17.4: the 1900 system starts at 1900-01-01, so 1899-12-31 has no
    serial; it is written as ISO 8601 text rather than a wrong date."""
    src = build_book(tmp_path / "club.xlsx")
    table = clean_table(src)
    col = table.parsed["Joined"]
    value = col.value.copy()
    value[0] = np.datetime64("1899-12-31", "us")
    table = table.with_parsed(col.evolve(value=value))
    out = tmp_path / "old.xlsx"
    result = export_table(table, out)
    cell = openpyxl.load_workbook(out)["Members"].cell(HEADER_ROW + 1, JOINED_COL)
    assert (cell.value, cell.data_type) == ("1899-12-31", "s")
    assert any("before" in n for n in result.notes)


def test_parts_the_writer_cannot_carry_are_named(tmp_path):
    """A part openpyxl does not load (here a slicer, ECMA-376 extension part) is reported, not
    silently dropped; an ordinary workbook gets no such note."""
    import zipfile

    src = build_book(tmp_path / "club.xlsx")
    plain = export_table(clean_table(src), tmp_path / "plain.xlsx")
    assert not any("carried over" in n for n in plain.notes)
    with zipfile.ZipFile(src, "a") as z:
        z.writestr("xl/slicers/slicer1.xml", "<slicers/>")
    table = clean_table(src)  # the file changed, so read it again
    result = export_table(table, tmp_path / "out.xlsx")
    assert "These parts of the source could not be carried over: slicers." in result.notes


def test_tsv_target_uses_tabs(tmp_path):
    src = build_book(tmp_path / "club.xlsx")
    out = tmp_path / "club.tsv"
    export_table(clean_table(src), out)
    head = out.read_text(encoding="utf-8").splitlines()[0]
    assert head.split("\t")[:3] == ["Member", "Member since", "Fee"]
