"""What the reader takes from an XLSX's own sheet XML: error cells and hidden rows are found,
and a sheet XML the search cannot decode is told as damaged in one sentence.

Expected values are written by hand (the error cell text is what the test puts in the file).
"""

import zipfile

import openpyxl
import pytest

from datemend.core.readers import read_table
from datemend.core.table import CellKind, ReadError


def _book(path, setup=None):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Members"
    for r in [["Member no", "Joined"], [1, "03/04/2021"], [2, "x"], [3, "y"]]:
        ws.append(r)
    if setup:
        setup(ws)
    wb.save(path)
    return path


def _patched(path, old: bytes, new: bytes):
    """A copy of the workbook whose sheet XML has ``old`` replaced by ``new``."""
    out = path.with_name("patched_" + path.name)
    with zipfile.ZipFile(path) as src, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for item in src.infolist():
            data = src.read(item.filename)
            if item.filename == "xl/worksheets/sheet1.xml":
                assert old in data
                data = data.replace(old, new)
            dst.writestr(item, data)
    return out


def test_error_cells_and_hidden_rows_found_in_the_sheet_xml(tmp_path) -> None:
    def setup(ws):
        ws["B3"] = "#N/A"
        ws["B3"].data_type = "e"
        ws.row_dimensions[4].hidden = True

    t = read_table(_book(tmp_path / "e.xlsx", setup))
    col = t.column("Joined")
    assert list(col.values) == ["03/04/2021", "#N/A", "y"]
    assert [CellKind(k) for k in col.kinds] == [CellKind.TEXT, CellKind.ERROR, CellKind.TEXT]
    assert any("1 row(s) are hidden" in n and "rows 4" in n for n in t.facts.notes)


def test_damaged_sheet_xml_is_still_told_as_damaged(tmp_path) -> None:
    # An error cell whose text is not UTF-8: the search cannot decode it, so the sheet is damaged.
    def setup(ws):
        ws["B3"] = "#N/A"
        ws["B3"].data_type = "e"

    p = _patched(_book(tmp_path / "d.xlsx", setup), b"<v>#N/A</v>", b"<v>\xff\xfe</v>")
    with pytest.raises(ReadError) as err:
        read_table(p)
    msg = str(err.value)
    assert 'patched_d.xlsx, sheet "Members" is damaged' in msg
