"""Malformed and odd files: each opens as a sensible RawTable or gives one clear sentence.

The files are generated at test time (make_malformed.py, at least 200 of them); the expected
outcome and shape of each is stated where the file is built. The command-line scan is run on
them too: it must exit 0, 4 or 3 (README's exit codes) and never print a traceback.
"""

from __future__ import annotations

import contextlib
import io
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
from make_malformed import Case, make_all

from datemend.core.readers import read_table
from datemend.core.table import CellKind, RawTable, ReadError

#: Wider than this, the command-line scan is skipped (its cost grows with columns; the reader
#: part still runs on those files).
CLI_MAX_COLUMNS = 200


@pytest.fixture(scope="module")
def cases(tmp_path_factory) -> list[Case]:
    return make_all(tmp_path_factory.mktemp("malformed"))


def _shape_problems(case: Case, t: RawTable) -> list[str]:
    out = []
    if case.n_cols is not None and len(t.columns) != case.n_cols:
        out.append(f"{len(t.columns)} columns, expected {case.n_cols}")
    if case.n_rows is not None and t.n_rows != case.n_rows:
        out.append(f"{t.n_rows} rows, expected {case.n_rows}")
    names = t.names
    if any(not n.strip() for n in names) or len(set(names)) != len(names):
        out.append("blank or repeated column names")
    rows = t.source_rows
    if len(rows) != t.n_rows or (len(rows) > 1 and not np.all(np.diff(rows) > 0)):
        out.append("source rows not increasing")
    if len(rows) and rows[0] <= t.facts.header_row:
        out.append("a data row at or above the header row")
    valid = {int(k) for k in CellKind}
    for c in t.columns:
        if not set(np.unique(c.kinds).tolist()) <= valid:
            out.append(f"column {c.name!r} has an unknown kind")
        empty = c.kinds == CellKind.EMPTY
        is_none = np.array([v is None for v in c.values], dtype=bool)
        if not np.array_equal(empty, is_none):
            out.append(f"column {c.name!r}: EMPTY kinds and None values disagree")
    return out


def _message_problems(case: Case, err: ReadError) -> list[str]:
    msg = str(err)
    out = []
    if case.path.name not in msg:
        out.append(f"message does not name the file: {msg!r}")
    if "\n" in msg or "Traceback" in msg or not msg.endswith("."):
        out.append(f"message is not one sentence: {msg!r}")
    return out


def test_at_least_200_files(cases):
    assert len(cases) >= 200
    assert len({c.path.name for c in cases}) == len(cases)  # no file twice


def test_each_file_opens_or_gives_one_clear_sentence(cases):
    problems: list[str] = []
    opened = refused = 0
    for case in cases:
        try:
            table = read_table(case.path)
        except ReadError as err:
            refused += 1
            if case.expect == "ok":
                problems.append(f"{case.path.name} ({case.why}): refused: {err}")
            problems += [f"{case.path.name}: {p}" for p in _message_problems(case, err)]
            continue
        except Exception as err:  # the failure this test exists to catch
            problems.append(f"{case.path.name} ({case.why}): raw {type(err).__name__}: {err}")
            continue
        opened += 1
        if case.expect == "error":
            problems.append(f"{case.path.name} ({case.why}): opened, expected a refusal")
        problems += [f"{case.path.name}: {p}" for p in _shape_problems(case, table)]
    print(f"\nmalformed files tried: {len(cases)}, opened {opened}, refused {refused}, crashes 0")
    assert problems == []


def test_specific_contents_survive(cases):
    by_name = {c.path.name: c.path for c in cases}
    long = read_table(by_name["long_cell.csv"])
    assert len(long.column("b").values[0]) == 1 << 20  # 1 MiB written, 1 MiB read
    nul = read_table(by_name["nul_0.csv"])
    assert nul.column("b").values[0] == "\x002"
    errs = read_table(by_name["error_cells.xlsx"]).column("errs")
    assert list(errs.values) == ["#N/A", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#NULL!"]
    assert set(errs.kinds.tolist()) == {CellKind.ERROR}
    cached = read_table(by_name["formulas_cached.xlsx"]).column("f")
    assert (cached.values[0], CellKind(cached.kinds[0])) == ("#DIV/0!", CellKind.ERROR)
    nocache = read_table(by_name["formulas_no_cache.xlsx"])
    assert set(nocache.column("f").kinds.tolist()) == {CellKind.EMPTY}
    assert any("no saved result" in n for n in nocache.facts.notes)
    merged = read_table(by_name["merged_header.xlsx"])
    assert merged.names == ["Dates", "column B", "x"]
    assert any("A1:B1" in n for n in merged.facts.notes)
    wide = read_table(by_name["wide_2000.xlsx"])
    assert wide.names[-1] == "c1999" and wide.column("c1999").values[0] == 1999


def test_command_line_scan_exits_cleanly(cases, capsys):
    from datemend.cli import main

    bad: list[str] = []
    ran = skipped = 0
    for case in cases:
        try:
            width = len(read_table(case.path).columns)
        except ReadError:
            width = 0
        ordinary = case.path.name.startswith("ordinary_")
        if width > CLI_MAX_COLUMNS or (ordinary and not case.path.stem.endswith(("0", "5"))):
            skipped += 1  # very wide, or one of the many ordinary files (a fifth are scanned)
            continue
        with contextlib.redirect_stdout(io.StringIO()):
            try:
                code = main(["scan", str(case.path)])
            except SystemExit as exc:  # argparse only; never expected here
                code = exc.code
        err = capsys.readouterr().err
        ran += 1
        if code not in (0, 3, 4) or "Traceback" in err:
            bad.append(f"{case.path.name}: exit {code}, stderr {err[:200]!r}")
        elif code == 3 and case.path.name not in err:
            bad.append(f"{case.path.name}: exit 3 but stderr does not name the file: {err!r}")
    with capsys.disabled():
        print(f"\ncommand-line scan on {ran} files ({skipped} very wide or ordinary ones skipped)")
    assert bad == []
