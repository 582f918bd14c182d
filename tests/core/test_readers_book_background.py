"""The sheet XML of an XLSX is searched on a thread while calamine loads the sheet
(``readers_book._Background``): results and errors must come out as if searched in line.

Expected values are written by hand (the error cell text is what the test puts in the file).
"""

import zipfile

import openpyxl
import pytest

from datemend.core.readers import read_table
from datemend.core.readers_book import _Background
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


# (call, arguments, expected result or exception type, why)
CALLS = [
    (sum, ([1, 2, 3],), 6, "a value comes back"),
    (int, ("x",), ValueError, "an error is raised by result(), as the call raised it"),
    (dict, (), {}, "a call with no arguments"),
]


def test_no_call_repeats() -> None:
    keys = [(c.__name__, repr(a)) for c, a, _, _ in CALLS]
    assert len(set(keys)) == len(keys)


@pytest.mark.parametrize(("fn", "args", "expected", "why"), CALLS, ids=[c[3] for c in CALLS])
def test_background_hands_back_what_the_call_did(fn, args, expected, why) -> None:
    job = _Background(fn, *args)
    if isinstance(expected, type) and issubclass(expected, BaseException):
        with pytest.raises(expected):
            job.result()
    else:
        assert job.result() == expected, why


def test_error_cells_and_notes_found_on_the_thread(tmp_path) -> None:
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
