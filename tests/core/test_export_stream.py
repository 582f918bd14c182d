"""The streaming XLSX writer: serial numbers against ISO/IEC 29500-1 §18.17.4 (REFERENCES.md) and
openpyxl's ``to_excel``, and the file read back with openpyxl and python-calamine."""

from __future__ import annotations

import datetime as dt
import re
import zipfile

import numpy as np
import openpyxl
import pandas as pd
import pytest
import python_calamine
from openpyxl.utils.datetime import to_excel
from test_export_book import JOINED, OUTING, B, P, build_book, clean_table, parsed

from datemend.core.clean import CleanTable, DerivedColumn
from datemend.core.export import ExportOptions, export_table
from datemend.core.export_stream import serials
from datemend.core.table import RawColumn, RawTable, SourceFacts, kinds_of

SERIALS = [
    # (date-time, 1900-system serial, source)
    ("1900-01-01", 1, "§18.17.4: serial 1 is 1900-01-01"),
    ("1900-02-28", 59, "§18.17.4: serial 59 is 1900-02-28"),
    ("1900-03-01", 61, "§18.17.4: serial 61 is 1900-03-01 (60 is the invented 29 February)"),
    ("1910-02-03", 3687, "REFERENCES.md check value"),
    ("2006-02-01", 38749, "REFERENCES.md check value"),
    ("9999-12-31", 2958465, "REFERENCES.md check value"),
    ("2006-02-01T12:00:00", 38749.5, "§18.17.4: the fraction is the time of day"),
]


def test_serial_table_has_no_repeats():
    assert len({s[0] for s in SERIALS}) == len(SERIALS)


@pytest.mark.parametrize(("when", "serial", "why"), SERIALS, ids=[s[0] for s in SERIALS])
def test_serials_match_the_standard(when, serial, why):
    got = serials(np.array([when], dtype="datetime64[us]"))[0]
    assert got == serial, why
    assert got == to_excel(dt.datetime.fromisoformat(when))  # openpyxl as a second reference


def test_serials_keep_microseconds_like_openpyxl():
    values = [dt.datetime(2022, 7, 1, 12, 30, 15, 250000), dt.datetime(1985, 4, 12, 23, 20, 50)]
    got = serials(np.array(values, dtype="datetime64[us]"))
    assert list(got) == pytest.approx([to_excel(v) for v in values], abs=1e-9)


def _stored(path, sheet="sheet1"):
    with zipfile.ZipFile(path) as z:
        text = z.read(f"xl/worksheets/{sheet}.xml").decode()
    return dict(re.findall(r'<c r="([A-Z]+\d+)"[^>]*><v>([^<]*)</v></c>', text))


def test_stream_round_trip_openpyxl_and_calamine(tmp_path):
    src = build_book(tmp_path / "club.xlsx")
    table = clean_table(src)
    out = tmp_path / "stream.xlsx"
    result = export_table(table, out, options=ExportOptions(streaming=True, log_sheet=True),
                          log_lines=["=step one", "step <two> & more"])  # fmt: skip
    assert result.writer == "streaming"
    stored = _stored(out)
    assert float(stored["B2"]) == 3687 and float(stored["B4"]) == 2958465  # REFERENCES.md
    book = openpyxl.load_workbook(out)
    assert book.sheetnames == ["Members", "Fix log"]
    ws = book["Members"]
    cal = python_calamine.CalamineWorkbook.from_path(str(out))
    rows = cal.get_sheet_by_name("Members").to_python(skip_empty_area=False)
    assert rows[0] == [c.value for c in ws[1]]
    for i, (state, value, _) in enumerate(JOINED):
        cell = ws.cell(i + 2, 2)
        if state == P:
            assert cell.is_date and cell.value == value
            assert rows[i + 1][1] == value.date()  # calamine: a date-only format gives a date
        elif state == B:
            assert cell.value is None and rows[i + 1][1] == ""
        else:
            assert cell.value == table.raw.column("Joined").values[i]
    outing = [ws.cell(i + 2, 6).value for i in range(len(OUTING))]
    assert outing[5] == dt.datetime(2022, 7, 1, 12, 30, 15, 250000)  # a hand-set value
    raw = table.raw
    for j, rc in enumerate(raw.columns, 1):
        if rc.name in table.parsed:
            continue
        for i, v in enumerate(rc.values):
            have = ws.cell(i + 2, j).value
            if isinstance(v, dt.date) and not isinstance(v, dt.datetime):
                have = have.date()
            assert have == v, (rc.name, i)
    fee = [ws.cell(i + 2, 3) for i in range(raw.n_rows)]
    assert fee[4].data_type == "e" and fee[7].value is True
    note = ws.cell(2, 5)
    assert (note.value, note.data_type) == ("=1+1", "s")
    log = list(book["Fix log"].iter_rows(values_only=True))
    assert log == [("Step", "What it does"), (1, "=step one"), (2, "step <two> & more")]


def test_stream_unresolved_sheet(tmp_path):
    src = build_book(tmp_path / "club.xlsx")
    out = tmp_path / "stream.xlsx"
    opts = ExportOptions(streaming=True, unresolved_sheet=True, sheet_name="Roster: Oct?")
    export_table(clean_table(src), out, options=opts)
    book = openpyxl.load_workbook(out)
    assert book.sheetnames == ["Roster_ Oct_", "Unresolved cells"]  # [ ] : * ? / \ not allowed
    un = list(book["Unresolved cells"].iter_rows(values_only=True))
    want = [
        ("Roster_ Oct_", "M-004", 6, "Member since", "soon", JOINED[3][2]),
        ("Roster_ Oct_", "M-006", 8, "Member since", "04/05/2020", JOINED[5][2]),
        ("Roster_ Oct_", "M-009", 11, "Member since", "=1+1", JOINED[8][2]),
        ("Roster_ Oct_", "M-005", 7, "Last outing", "junk", OUTING[4][4]),
        ("Roster_ Oct_", "M-009", 11, "Last outing", "=A1", OUTING[8][4]),
    ]
    assert un[1:] == want


def test_stream_raw_kinds_and_derived(tmp_path):
    """Every raw kind keeps its kind; derived columns get their own types."""
    values = np.array(
        [
            "text & <tags>",
            7,
            2.5,
            True,
            dt.date(2026, 4, 1),
            dt.datetime(2026, 4, 1, 6, 30),
            dt.time(18, 45),
            None,
            "#N/A",
            "a\x01b",
        ],
        dtype=object,
    )
    kinds = kinds_of(values)
    kinds[8] = 8  # CellKind.ERROR
    raw = RawTable((RawColumn("Mixed", values, kinds),), SourceFacts(format="csv"))
    n = len(values)
    derived = {
        "Age": DerivedColumn("Age", pd.Series(pd.array([41] + [None] * (n - 1), dtype="Int64"))),
        "Flag": DerivedColumn("Flag", pd.Series(pd.array([True] + [None] * (n - 1)))),
        "Due": DerivedColumn(
            "Due", pd.Series(pd.to_datetime(["2030-01-02"] + [None] * (n - 1)).as_unit("us"))
        ),
    }
    table = CleanTable(raw, derived=derived)
    out = tmp_path / "kinds.xlsx"
    result = export_table(table, out)
    assert result.writer == "streaming"
    ws = openpyxl.load_workbook(out).active
    got = [ws.cell(r, 1) for r in range(2, n + 2)]
    assert [c.value for c in got[:4]] == ["text & <tags>", 7, 2.5, True]
    assert got[4].value == dt.datetime(2026, 4, 1) and got[4].is_date
    assert got[5].value == dt.datetime(2026, 4, 1, 6, 30)
    assert got[6].value == dt.time(18, 45)
    assert got[7].value is None
    assert (got[8].value, got[8].data_type) == ("#N/A", "e")
    assert got[9].value == "a\ufffdb"
    assert any("control characters" in note for note in result.notes)
    assert [ws.cell(1, j).value for j in (2, 3, 4)] == ["Age", "Flag", "Due"]
    assert (ws["B2"].value, ws["C2"].value, ws["D2"].value) == (41, True, dt.datetime(2030, 1, 2))
    assert ws["B3"].value is None


def test_stream_early_dates_are_text(tmp_path):
    """§18.17.4: no serial before 1900-01-01, so such a day is ISO 8601 text, never a wrong date."""
    df = pd.DataFrame({"Built": ["1899-12-31", "1900-01-01"]})
    raw = RawTable.from_dataframe(df, SourceFacts(format="csv"), text_only=True)
    col = parsed(
        "Built", [(P, dt.datetime(1899, 12, 31), None), (P, dt.datetime(1900, 1, 1), None)]
    )
    out = tmp_path / "early.xlsx"
    result = export_table(CleanTable(raw).with_parsed(col), out)
    ws = openpyxl.load_workbook(out).active
    assert (ws["A2"].value, ws["A2"].data_type) == ("1899-12-31", "s")
    assert ws["A3"].value == dt.datetime(1900, 1, 1)
    assert float(_stored(out)["A3"]) == 1  # serial 1
    assert any("before 1900-01-01" in n for n in result.notes)


def test_stream_number_formats_are_the_chosen_ones(tmp_path):
    src = build_book(tmp_path / "club.xlsx")
    out = tmp_path / "fmt.xlsx"
    opts = ExportOptions(streaming=True, date_format="dd.mm.yyyy", datetime_format="d/m/yy h:mm")
    export_table(clean_table(src), out, options=opts)
    ws = openpyxl.load_workbook(out).active
    assert ws["B2"].number_format == "dd.mm.yyyy" and ws["B2"].is_date
    assert ws["F2"].number_format == "d/m/yy h:mm" and ws["F2"].is_date
    # a raw cell of an unfixed column keeps a plain ISO form for its kind (openpyxl read this
    # date cell as a datetime, so the table holds a DATETIME)
    assert ws["G2"].number_format == "yyyy-mm-dd hh:mm:ss" and ws["G2"].is_date
