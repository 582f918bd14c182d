"""Nothing lost (issue 9.5): read a file with the real reader, fix its date columns with the real
engine, export, and check every cell: a non-date cell equals the source, a date cell is its
parsed date, its raw value, or empty where it was blank.

Runs on every file in sample_files/ and on the generated workbook (both date systems).
"""

from __future__ import annotations

import datetime as dt
import pathlib

import numpy as np
import openpyxl
import pyarrow as pa
import pyarrow.csv as pacsv
import pytest
from test_export_book import build_book, sha256

from datemend.core.clean import NAIVE, CellState, CleanTable
from datemend.core.export import ExportOptions, export_table
from datemend.core.readers import read_table

ROOT = pathlib.Path(__file__).resolve().parents[2]
SAMPLES = sorted(
    p for p in (ROOT / "sample_files").glob("*") if p.suffix.lower() in {".xlsx", ".csv", ".ods"}
)


DATE_COLUMNS = ("Born", "Joined", "Last outing", "Renewal due", "Safety course")  # truth.json
AUTO = {"rowing_club_2026-10.xlsx"}  # the full scan is slow: run it on one file


def _fix(raw, auto: bool) -> CleanTable:
    """The CLI's ``auto`` (accept the best reading of every date column), or, faster, the
    engine's parse_column with every pattern and no day order chosen on the known date columns
    (then day/month-undecidable cells stay ambiguous, which export must also keep)."""
    if auto:
        from datemend.core.fixlog import auto_fix

        return auto_fix(raw)[1]
    from datemend.core.parse import parse_column
    from datemend.core.patterns import PATTERNS
    from datemend.core.spec import ParseSpec

    spec = ParseSpec(patterns=tuple(PATTERNS), date_system=raw.facts.date_system)
    clean = CleanTable(raw)
    for name in DATE_COLUMNS:
        if name in raw and name not in clean.parsed:
            clean = clean.with_parsed(parse_column(raw.column(name), spec, raw.facts))
    return clean


def _expected(clean: CleanTable, source: str, i: int):
    """The date a fixed cell should hold: the parsed wall-clock value, moved to UTC (with
    Python's datetime) where it carried an offset; a date for a date-only column."""
    pc = clean.parsed[source]
    value = pc.value[i].astype("datetime64[us]").astype(dt.datetime)
    if pc.offset_min[i] != NAIVE:
        value -= dt.timedelta(minutes=int(pc.offset_min[i]))
    ok = np.isin(pc.state, (CellState.PARSED, CellState.MANUAL))
    if pc.date_only or not pc.has_time[ok].any():
        return value.date()
    return value


def _generated(tmp_path, epoch1904):
    path = build_book(tmp_path / "club.xlsx", epoch1904=epoch1904)
    return path, {"sheet": "Members", "header_row": 2}


INPUTS = [("generated-1900", False), ("generated-1904", True)] + [(p.name, p) for p in SAMPLES]


@pytest.fixture(scope="module", params=INPUTS, ids=[i[0] for i in INPUTS])
def fixed(request, tmp_path_factory):
    """Read and fix each input once for both tests (the scan is the slow part)."""
    _, what = request.param
    if isinstance(what, bool):
        path, kw = _generated(tmp_path_factory.mktemp("book"), what)
    else:
        path, kw = what, {}
    raw = read_table(path, **kw)
    clean = _fix(raw, path.name in AUTO)
    assert clean.parsed, f"no date column was fixed in {path.name}"
    return path, clean


def test_workbook_export_loses_nothing(fixed, tmp_path):
    path, clean = fixed
    before = sha256(path)
    out = tmp_path / "out.xlsx"
    result = export_table(clean, out)
    assert sha256(path) == before
    raw = clean.raw
    got = openpyxl.load_workbook(out)
    if result.writer == "workbook":
        src = openpyxl.load_workbook(path)
        assert got.sheetnames == src.sheetnames
        sheet = raw.facts.sheet or src.sheetnames[0]
        _compare_kept(src, got, sheet, clean)
    else:  # a new workbook: header row, then one row per data row
        ws = got.active
        names = [c.value for c in ws[1]]
        for rc in raw.columns:
            pc = clean.parsed.get(rc.name)
            j = names.index(rc.name if pc is None else pc.output_name) + 1
            for i, v in enumerate(rc.values):
                cell = ws.cell(i + 2, j)
                _check_cell(cell.value, v, clean, rc.name, i, pc is not None)


def _compare_kept(src, got, sheet, clean):
    raw = clean.raw
    rows = {int(r): i for i, r in enumerate(raw.source_rows)}
    hrow = raw.facts.header_row
    header = {str(c.value).strip(): c.column for c in src[sheet][hrow] if c.value is not None}
    fixed_cols = {}
    for j, rc in enumerate(raw.columns):
        if rc.name in clean.parsed:
            fixed_cols[header.get(rc.name, src[sheet].min_column + j)] = rc.name
    lost = []
    for name in src.sheetnames:
        a, b = src[name], got[name]
        for row in a.iter_rows():
            for ca in row:
                cb = b.cell(ca.row, ca.column)
                col = fixed_cols.get(ca.column) if name == sheet else None
                if col is not None and ca.row in rows and ca.data_type != "f":
                    i = rows[ca.row]
                    if not _fixed_ok(cb, ca, clean, col, i):
                        lost.append((name, ca.coordinate, ca.value, cb.value))
                elif col is not None and ca.row == hrow:
                    continue  # the header may carry the output name
                elif cb.value != ca.value or (
                    ca.value is not None and cb.data_type != ca.data_type
                ):
                    lost.append((name, ca.coordinate, ca.value, cb.value))
    assert lost == []


def _fixed_ok(cb, ca, clean, col, i) -> bool:
    pc = clean.parsed[col]
    state = pc.state[i]
    if state in (CellState.PARSED, CellState.MANUAL) and not np.isnat(pc.value[i]):
        want = _expected(clean, col, i)
        have = (
            cb.value.date()
            if isinstance(want, dt.date)
            and not isinstance(want, dt.datetime)
            and isinstance(cb.value, dt.datetime)
            else cb.value
        )
        return cb.is_date and have == want
    if state == CellState.BLANK:
        return cb.value is None
    return cb.value == ca.value and cb.data_type == ca.data_type


def _check_cell(have, raw_value, clean, col, i, is_fixed):
    if not is_fixed:
        if isinstance(raw_value, dt.date) and not isinstance(raw_value, dt.datetime):
            have = have.date() if isinstance(have, dt.datetime) else have
        assert have == raw_value, (col, i)
        return
    pc = clean.parsed[col]
    if pc.state[i] in (CellState.PARSED, CellState.MANUAL) and not np.isnat(pc.value[i]):
        want = _expected(clean, col, i)
        if isinstance(have, dt.datetime) and not isinstance(want, dt.datetime):
            have = have.date()
        assert have == want, (col, i)
    elif pc.state[i] == CellState.BLANK:
        assert have is None, (col, i)
    else:
        assert have == raw_value, (col, i)


def test_csv_export_loses_nothing(fixed, tmp_path):
    """Every CSV field: the raw cell's text (RawColumn.text, the reader's own view) or the ISO
    8601 text of its date (Python's isoformat), or empty where the cell was blank."""
    _, clean = fixed
    out = tmp_path / "out.csv"
    export_table(clean, out, options=ExportOptions(keep_raw=True))
    raw = clean.raw
    with open(out, encoding="utf-8", newline="") as fh:
        names = next(iter(__import__("csv").reader(fh)))
    t = pacsv.read_csv(
        out,
        convert_options=pacsv.ConvertOptions(
            column_types=dict.fromkeys(names, pa.string()), strings_can_be_null=False
        ),
    )
    for rc in raw.columns:
        text = ["" if v is None else v for v in rc.text().tolist()]
        pc = clean.parsed.get(rc.name)
        if pc is None:
            assert t[rc.name].to_pylist() == text, rc.name
            continue
        assert t[f"{rc.name} (raw)"].to_pylist() == text
        got = t[pc.output_name].to_pylist()
        for i, have in enumerate(got):
            if pc.state[i] in (CellState.PARSED, CellState.MANUAL) and not np.isnat(pc.value[i]):
                want = _expected(clean, rc.name, i)
                iso = want.isoformat()
                if pc.offset_min[i] != NAIVE:
                    iso += "+00:00"
                assert have == iso, (rc.name, i)
            elif pc.state[i] == CellState.BLANK:
                assert have == "", (rc.name, i)
            else:
                assert have == text[i], (rc.name, i)
