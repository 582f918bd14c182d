"""A generated workbook for the export tests, and the CleanTable a reader and engine would make.

The table is built by hand here (values loaded with openpyxl, parsed dates typed in), so the
export tests do not depend on the reader or the parse engine. The data is an invented rowing-club
membership list. The tests in this file check the fixture itself, so a broken fixture cannot make
the export tests pass by accident.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import hashlib
import re
import zipfile
from pathlib import Path

import numpy as np
import openpyxl
from openpyxl.utils.datetime import CALENDAR_MAC_1904

from datemend.core.clean import NAIVE, CellState, CleanTable, ParsedColumn
from datemend.core.table import CellKind, RawColumn, RawTable, SourceFacts, kinds_of

P, F, A, B, M = (
    CellState.PARSED,
    CellState.FAILED,
    CellState.AMBIGUOUS,
    CellState.BLANK,
    CellState.MANUAL,
)
HEADERS = ["Member", "Joined", "Fee", "Double fee", "Note", "Last outing", "Renewal"]
HEADER_ROW = 2  # row 1 is a merged title


def serial_2006_02_01(epoch1904: bool) -> int:
    # ISO/IEC 29500-1 §18.17.4 (REFERENCES.md): 2006-02-01 is 38749 (1900) or 37287 (1904).
    return 37287 if epoch1904 else 38749


def member_rows(epoch1904: bool) -> list[list[object]]:
    """Data rows (sheet rows 3..). "Joined" and "Last outing" are the columns to fix."""
    return [
        ["M-001", "1910-02-03", 40, "=C3*2", "=1+1", "2021-03-04T10:00:00+02:00", "renewal"],
        ["M-002", "01.02.2006", 42.5, "=C4*2", "@SUM(A1)", "2021-03-04 08:00", None],
        ["M-003", "31/12/9999", None, "=C5*2", "+44 20 7946 0000", "1996-12-19T16:39:57-08:00"],
        ["M-004", "soon", 10, "=SUM(C3:C6)", "-5", "", None],
        ["M-005", "", "#N/A", None, "keeps", "junk", None],
        ["M-006", "04/05/2020", 0, None, "merged note", "2022-07-01 12:30:15.250000", None],
        ["M-007", serial_2006_02_01(epoch1904), 12, None, None, "n/a", None],
        ["M-008", "n/a", True, None, "=2+2", "2021-01-01 00:00", None],
        ["M-009", "=1+1", 7, None, "", "=A1", None],
    ]


# Hand-typed parse results, row by row: (state, value, reason) for "Joined" (date only) ...
JOINED = [
    (P, dt.datetime(1910, 2, 3), None),  # REFERENCES.md: serial 3687 (1900) / 2225 (1904)
    (P, dt.datetime(2006, 2, 1), None),
    (P, dt.datetime(9999, 12, 31), None),  # serial 2958465 (1900) / 2957003 (1904)
    (F, None, "No pattern reads this value."),
    (B, None, None),
    (A, None, "Could be 4 May or 5 April."),
    (P, dt.datetime(2006, 2, 1), None),  # the serial of 2006-02-01 in the book's own system
    (B, None, "Placeholder token."),
    (F, None, "Looks like a formula, not a date."),
]
# ... and (state, wall-clock value, offset minutes or None, has_time, reason) for "Last outing".
OUTING = [
    (P, dt.datetime(2021, 3, 4, 10, 0), 120, True, None),
    (P, dt.datetime(2021, 3, 4, 8, 0), None, True, None),
    (P, dt.datetime(1996, 12, 19, 16, 39, 57), -480, True, None),
    (B, None, None, False, None),
    (F, None, None, False, "No pattern reads this value."),
    (M, dt.datetime(2022, 7, 1, 12, 30, 15, 250000), None, True, None),
    (B, None, None, False, "Placeholder token."),
    (P, dt.datetime(2021, 1, 1), None, True, None),
    (F, None, None, False, "No pattern reads this value."),
]


_BUILT: dict[bool, bytes] = {}  # the same bytes every time: build once per test run


def build_book(path: Path, *, epoch1904: bool = False) -> Path:
    """Three sheets, a merged title, merged data cells, widths, number formats, an error cell,
    formulas with and without cached values, text that looks like formulas."""
    if epoch1904 not in _BUILT:
        _build(path, epoch1904=epoch1904)
        _BUILT[epoch1904] = path.read_bytes()
    path.write_bytes(_BUILT[epoch1904])
    return path


def _build(path: Path, *, epoch1904: bool) -> None:
    wb = openpyxl.Workbook()
    if epoch1904:
        wb.epoch = CALENDAR_MAC_1904
    ws = wb.active
    ws.title = "Members"
    ws["A1"] = "Rowing club members, October"
    ws.merge_cells("A1:G1")
    for j, h in enumerate(HEADERS, 1):
        ws.cell(HEADER_ROW, j, h)
    for i, row in enumerate(member_rows(epoch1904)):
        r = HEADER_ROW + 1 + i
        for j, v in enumerate(row, 1):
            if v is None:
                continue
            cell = ws.cell(r, j)
            cell.value = v
            is_formula = j == 4 and isinstance(v, str)
            if isinstance(v, str) and not is_formula:
                cell.data_type = "e" if v == "#N/A" else "s"
    ws["G3"] = dt.date(2026, 10, 1)
    ws["G3"].number_format = "dd/mm/yyyy"
    ws["G5"] = dt.date(2027, 1, 31)
    ws["G5"].number_format = "dd/mm/yyyy"
    ws["C4"].number_format = "0.00"
    ws.merge_cells("E8:E9")
    ws.column_dimensions["A"].width = 11
    ws.column_dimensions["B"].width = 15
    ws.column_dimensions["E"].width = 31
    notes = wb.create_sheet("Notes")
    notes["A1"] = "Committee notes"
    notes.merge_cells("A1:C1")
    notes["A3"] = "Total fees"
    notes["B3"] = "=SUM(Members!C3:C11)"
    notes["A4"] = "Season opens"
    notes["B4"] = dt.date(2026, 4, 1)
    notes["B4"].number_format = "d mmm yyyy"
    notes["A5"] = 0.125
    notes["A5"].number_format = "0.0%"
    notes.column_dimensions["A"].width = 22
    lookup = wb.create_sheet("Lookup")
    lookup.append(["Boat", "Seats", "Sweep"])
    lookup.append(["Eight", 8, True])
    lookup.append(["Single", 1, False])
    wb.save(path)
    # openpyxl writes no cached formula results; give three formulas one, as a spreadsheet
    # program would, and leave the others without.
    _cache_values(path, {"xl/worksheets/sheet1.xml": {"D3": "80", "D6": "92.5"}})
    _cache_values(path, {"xl/worksheets/sheet2.xml": {"B3": "111.5"}})


def _cache_values(path: Path, patch: dict[str, dict[str, str]]) -> None:
    with zipfile.ZipFile(path) as z:
        items = [(info, z.read(info.filename)) for info in z.infolist()]
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for info, data in items:
            cells = patch.get(info.filename)
            if cells:
                text = data.decode()
                for ref, value in cells.items():
                    pattern = rf'(<c r="{ref}"[^>]*>\s*<f>[^<]*</f>)\s*<v\s*/>'
                    text, n = re.subn(pattern, rf"\1<v>{value}</v>", text)
                    assert n == 1, f"could not cache {ref}"
                data = text.encode()
            z.writestr(info, data)


def sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


_READ: dict[tuple[str, str, int], RawTable] = {}


def raw_table(path: Path, sheet: str = "Members", header_row: int = HEADER_ROW) -> RawTable:
    """What a reader makes of the sheet: cached values, kinds from the Python types, error cells
    marked as errors. Tables are immutable, so one read per distinct file content is kept."""
    key = (sha256(path), sheet, header_row)
    if key not in _READ:
        _READ[key] = _read(path, sheet, header_row)
    table = _READ[key]
    facts = dataclasses.replace(
        table.facts, path=str(path), format="xlsm" if path.suffix == ".xlsm" else "xlsx"
    )
    return RawTable(table.columns, facts, table.source_rows)


def _read(path: Path, sheet: str, header_row: int) -> RawTable:
    wb = openpyxl.load_workbook(path, data_only=True)
    ws = wb[sheet]
    names = [str(c.value) for c in ws[header_row] if c.value is not None]
    cells = list(ws.iter_rows(min_row=header_row + 1, max_col=len(names)))
    cols = []
    for j, name in enumerate(names):
        values = np.array([row[j].value for row in cells], dtype=object)
        kinds = kinds_of(values)
        errors = np.array([row[j].data_type == "e" for row in cells], dtype=bool)
        kinds[errors] = CellKind.ERROR
        cols.append(RawColumn(name, values, kinds))
    facts = SourceFacts(
        path=str(path),
        format="xlsm" if path.suffix == ".xlsm" else "xlsx",
        sheet=sheet,
        sheets=tuple(wb.sheetnames),
        header_row=header_row,
        date_system=1904 if wb.epoch == CALENDAR_MAC_1904 else 1900,
        sha256=sha256(path),
    )
    return RawTable(tuple(cols), facts)


def parsed(source: str, rows: list[tuple], *, name: str | None = None) -> ParsedColumn:
    """A ParsedColumn from hand-typed (state, value, [offset, has_time,] reason) rows."""
    n = len(rows)
    col = ParsedColumn.empty(source, n)
    value = col.value.copy()
    offset = col.offset_min.copy()
    has_time = col.has_time.copy()
    state = np.array([r[0] for r in rows], dtype=np.int8)
    reason = np.array([r[-1] for r in rows], dtype=object)
    for i, r in enumerate(rows):
        if r[1] is not None:
            value[i] = np.datetime64(r[1], "us")
        if len(r) == 5:
            offset[i] = NAIVE if r[2] is None else r[2]
            has_time[i] = r[3]
    return col.evolve(
        value=value,
        offset_min=offset,
        has_time=has_time,
        state=state,
        pattern=np.where(state == P, 0, -1).astype(np.int16),
        patterns=("hand-typed",),
        reason=reason,
        name=name,
    )


def clean_table(path: Path) -> CleanTable:
    raw = raw_table(path)
    table = CleanTable(raw, key_column="Member")
    table = table.with_parsed(parsed("Joined", JOINED, name="Member since"))
    return table.with_parsed(parsed("Last outing", OUTING))


# --------------------------------------------------------------------------- fixture checks


def test_fixture_sheet_rows_and_kinds(tmp_path):
    src = build_book(tmp_path / "club.xlsx")
    raw = raw_table(src)
    assert raw.names == HEADERS
    assert raw.n_rows == len(member_rows(False)) == len(JOINED) == len(OUTING)
    assert list(raw.source_rows) == list(range(3, 3 + raw.n_rows))
    fee = raw.column("Fee")
    assert fee.kinds[4] == CellKind.ERROR and fee.values[4] == "#N/A"
    double = raw.column("Double fee")
    assert double.values[0] == 80 and double.values[1] is None  # cached / not cached
    note = raw.column("Note")
    assert note.values[0] == "=1+1" and note.kinds[0] == CellKind.TEXT


def test_fixture_1904_serial_is_the_reference_value(tmp_path):
    src = build_book(tmp_path / "club.xlsx", epoch1904=True)
    wb = openpyxl.load_workbook(src)
    assert wb.epoch == CALENDAR_MAC_1904
    assert wb["Members"]["B9"].value == 37287  # ISO/IEC 29500-1 §18.17.4: 2006-02-01
    assert wb["Members"]["D3"].data_type == "f"
