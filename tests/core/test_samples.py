"""The bundled samples: regenerating gives the same files, truth.json agrees with the files.

The checks read the files with reference libraries, not with datemend: openpyxl for XLSX cells,
python-calamine for ODS, the csv module for the CSV; dates from Python's datetime.strptime
and openpyxl.utils.datetime.from_excel (1900 serial system).
"""

import csv
import datetime as dt
import importlib.util
import io
import json
import re
from pathlib import Path

import openpyxl
import pytest
from openpyxl.utils.datetime import from_excel

SAMPLES = Path(__file__).resolve().parents[2] / "sample_files"
FILES = [
    "rowing_club_2026-10.xlsx",
    "rowing_club_2026-10.csv",
    "rowing_club_2026-10.ods",
    "rowing_club_2026-11.xlsx",
    "truth.json",
]


def _load_script():
    spec = importlib.util.spec_from_file_location("make_samples", SAMPLES / "make_samples.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


@pytest.fixture(scope="module")
def regenerated(tmp_path_factory):
    out = tmp_path_factory.mktemp("samples")
    _load_script().make_all(out)
    return out


@pytest.fixture(scope="module")
def truth():
    return json.loads((SAMPLES / "truth.json").read_text(encoding="utf-8"))


def _xlsx_cells(path):
    wb = openpyxl.load_workbook(path, read_only=True)
    ws = wb["Members"]
    rows = [list(r) for r in ws.iter_rows(values_only=True)]
    wb.close()
    return rows


def _csv_rows(path):
    text = path.read_bytes().decode("cp1252")
    return list(csv.reader(io.StringIO(text, newline=""), delimiter=";"))


@pytest.mark.parametrize("name", FILES)
def test_committed_and_small(name):
    p = SAMPLES / name
    assert p.is_file()
    assert p.stat().st_size < 200 * 1024


def test_regenerating_gives_identical_csv_and_truth(regenerated):
    for name in ("rowing_club_2026-10.csv", "truth.json"):
        assert (regenerated / name).read_bytes() == (SAMPLES / name).read_bytes(), name


@pytest.mark.parametrize("name", ["rowing_club_2026-10.xlsx", "rowing_club_2026-11.xlsx"])
def test_regenerating_gives_the_same_xlsx_cells(regenerated, name):
    assert _xlsx_cells(regenerated / name) == _xlsx_cells(SAMPLES / name)


def _ods_cells(path):
    from python_calamine import CalamineWorkbook

    book = CalamineWorkbook.from_path(path)
    try:
        return book.get_sheet_by_name("Members").to_python(skip_empty_area=False)
    finally:
        book.close()


def test_regenerating_gives_the_same_ods_cells(regenerated):
    name = "rowing_club_2026-10.ods"
    assert _ods_cells(regenerated / name) == _ods_cells(SAMPLES / name)


def test_csv_is_windows_1252_with_non_ascii_text():
    data = (SAMPLES / "rowing_club_2026-10.csv").read_bytes()
    with pytest.raises(UnicodeDecodeError):
        data.decode("utf-8")  # ë, ü, – are single bytes in Windows-1252, invalid UTF-8 here
    text = data.decode("cp1252")
    assert "ë" in text and "ü" in text
    assert text.splitlines()[0].count(";") == 7


def _strptime(text, fmt):
    return dt.datetime.strptime(text, fmt.replace("%-d", "%d").replace("%-m", "%m")).date()


def _check_cell(cell, export):
    """One truth entry checked against its own text with Python's datetime (reference)."""
    iso, category, text, fmt = cell[:4]
    want = None if iso is None else dt.date.fromisoformat(iso)
    if category == "blank":
        assert text == "" and want is None
    elif category == "placeholder":
        assert text in {"unknown", "n/a", "-", "tbc"} and want is None
    elif category == "impossible":
        assert want is None
        with pytest.raises(ValueError):
            _strptime(text, fmt)  # 31 April / 29 February 2025 do not exist (datetime, calendar)
    elif category in ("serial", "serial_text"):
        assert from_excel(int(text)).date() == want  # openpyxl.utils.datetime, 1900 system
    elif category == "two_digit_year":
        got = _strptime(text, fmt)
        # Python's %y pivot (POSIX: 69-99 → 19xx) may pick the wrong century; day, month and
        # the last two digits of the year must still agree, and the intended year be plausible
        assert (got.day, got.month, got.year % 100) == (want.day, want.month, want.year % 100)
        assert 1950 <= want.year <= 2013
    elif fmt == "cell":
        assert _strptime(text, "%d/%m/%Y") == want
    else:
        assert _strptime(text, fmt) == want
    if len(cell) > 4:
        assert cell[4] == "ambiguous"
        assert want.day <= 12 and want.day != want.month


@pytest.mark.parametrize("month", ["2026-10", "2026-11"])
def test_truth_agrees_with_each_cell_text(truth, month):
    export = dt.date.fromisoformat(truth["export_dates"][month])
    for row in truth["months"][month]["rows"]:
        for cell in row["cells"]:
            _check_cell(cell, export)


def test_truth_agrees_with_the_october_csv(truth):
    rows = _csv_rows(SAMPLES / "rowing_club_2026-10.csv")
    month = truth["months"]["2026-10"]
    assert rows[0] == month["columns"]
    assert len(rows) - 1 == len(month["rows"])
    for r in month["rows"]:
        line = rows[r["row"] - 1]
        assert line[0] == r["member_no"]
        for col, cell in zip(truth["date_columns"], r["cells"]):
            assert line[month["columns"].index(col)] == cell[2]


@pytest.mark.parametrize("month", ["2026-10", "2026-11"])
def test_truth_agrees_with_the_workbook_cells(truth, month):
    cells = _xlsx_cells(SAMPLES / f"rowing_club_{month}.xlsx")
    mt = truth["months"][month]
    assert cells[0] == mt["columns"]
    for r in mt["rows"]:
        line = cells[r["row"] - 1]
        assert line[0] == r["member_no"]
        for col, cell in zip(truth["date_columns"], r["cells"]):
            value = line[mt["columns"].index(col)]
            iso, category, text = cell[:3]
            if category == "date_cell":
                assert isinstance(value, dt.datetime) and value.date().isoformat() == iso
            elif category == "serial":
                assert value == int(text)
            elif category == "blank":
                assert value is None
            else:
                assert value == text


def test_ods_matches_the_xlsx_for_october():
    ods = _ods_cells(SAMPLES / "rowing_club_2026-10.ods")
    xlsx = _xlsx_cells(SAMPLES / "rowing_club_2026-10.xlsx")
    assert ods[0] == xlsx[0]
    assert len(ods) == len(xlsx)
    for i, line in enumerate(xlsx[1:]):
        for j, v in enumerate(line):
            o = ods[i + 1][j]
            if v is None:
                assert o == ""
            elif isinstance(v, dt.datetime):
                assert o == v.date()
            else:
                assert o == v or (isinstance(v, int) and float(o) == v), (i, j, v, o)


def test_planted_scenario(truth):
    cols = truth["date_columns"]
    for month, mt in truth["months"].items():
        export = dt.date.fromisoformat(truth["export_dates"][month])
        by_col = {c: [r["cells"][k] for r in mt["rows"]] for k, c in enumerate(cols)}
        outings = [c for c in by_col["Last outing"] if c[0] is not None]
        # undecidable by design: both readings of every written value are real dates, neither
        # after the export date (checked with datetime.strptime both ways)
        for _iso, _cat, text, *_ in outings:
            a = _strptime(text, "%d/%m/%Y")
            b = _strptime(text, "%m/%d/%Y")
            assert a <= export and b <= export
        # decidable by evidence: a day above 12 written first in day-first text
        for col in ("Born", "Safety course", "Renewal due"):
            assert any(
                c[0] and c[3] in ("%d/%m/%Y", "%d/%m/%y", "%d.%m.%Y") and int(c[2][:2]) > 12
                for c in by_col[col]
            ), col
        cats = {c[1] for v in by_col.values() for c in v}
        assert {"blank", "placeholder", "impossible", "serial", "two_digit_year"} <= cats
    nov = truth["months"]["2026-11"]
    octo = truth["months"]["2026-10"]
    drift = {d["kind"]: d for d in truth["november_drift"]}
    moved = drift["column_moved"]
    assert octo["columns"].index(moved["column"]) + 1 == moved["from_position"]
    assert nov["columns"].index(moved["column"]) + 1 == moved["to_position"]
    k = cols.index(drift["new_format"]["column"])
    pattern = re.compile(r"^[A-Z][a-z]{2} \d{1,2}, \d{4}$")  # "Nov 3, 2027"
    assert not any(pattern.match(r["cells"][k][2]) for r in octo["rows"])
    assert any(pattern.match(r["cells"][k][2]) for r in nov["rows"])
    k = cols.index(drift["new_placeholder"]["column"])
    word = drift["new_placeholder"]["value"]
    assert not any(r["cells"][k][2] == word for r in octo["rows"])
    assert any(r["cells"][k][2] == word for r in nov["rows"])
    o = {r["member_no"] for r in octo["rows"]}
    n = {r["member_no"] for r in nov["rows"]}
    assert sorted(o - n) == drift["members_left"]["member_nos"]
    assert sorted(n - o) == drift["members_joined"]["member_nos"]
    assert len(o & n) > 280


def test_samples_open_with_datemend_readers(truth):
    from datemend.core.readers import read_table
    from datemend.core.table import CellKind

    for name in FILES[:4]:
        t = read_table(SAMPLES / name)
        month = name[12:19]
        assert t.names == truth["months"][month]["columns"], name
        assert t.n_rows == len(truth["months"][month]["rows"])
        joined = t.column("Joined")
        if name.endswith(".csv"):
            assert set(joined.kinds.tolist()) <= {CellKind.TEXT, CellKind.EMPTY}
            assert t.facts.encoding == "windows-1252" and t.facts.delimiter == ";"
        else:
            assert CellKind.INT in joined.kinds and CellKind.DATE in t.column("Born").kinds
