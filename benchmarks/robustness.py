"""Robustness summary (issue 9 point 6): inputs tried, files tried, crashes, cells lost.

1. **Values**: seeded columns of arbitrary cells (the generator of ``tests/property/test_fuzz.py``:
   date-like text from a small grammar, odd strings, huge and tiny numbers, NaN, booleans, date,
   date-time and time cells, error cells) go through ``scan_column`` and ``parse_column`` with the
   best suggestion and a few changed specs. A *crash* is any exception; a *lost cell* is one the
   result drops (a missing row, a PARSED cell without a date); a cell *against the contract* is
   present but misreported (an unresolved cell without a reason, BLANK for a cell that is
   neither empty nor a blank token of the spec).
2. **Files**: the malformed files made by ``tests/malformed/make_malformed.py`` (when that script
   exists) are opened with ``read_table``; each must open or give a ``DatemendError`` of one
   sentence, as the maker expects for that file; fewer cells than the maker's expected shape
   count as lost. Opened tables are scanned and parsed as above. A crash is an exception that is
   not a ``DatemendError``.

    python benchmarks/robustness.py [--columns 200] [--seed S]
"""

from __future__ import annotations

import argparse
import importlib.util
import random
import sys
import tempfile
import traceback
from dataclasses import replace
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests" / "property"))

from test_fuzz import make_column, problems  # noqa: E402 (the fuzz test's generator, checks)

from datemend.core.infer import scan_column  # noqa: E402
from datemend.core.table import DatemendError, RawColumn, SourceFacts  # noqa: E402

MAKER = ROOT / "tests" / "malformed" / "make_malformed.py"
COLUMNS_PER_FILE = 12  # a scan costs up to a second; wide sheets would take many minutes


class Tally:
    def __init__(self) -> None:
        self.inputs = 0
        self.columns = 0
        self.files = 0
        self.opened = 0
        self.refused = 0
        self.crashes = 0
        self.lost = 0
        self.breaches = 0  # cells accounted for, but against the contract (see problems())
        self.misjudged = 0
        self.notes: list[str] = []
        self._kinds: dict[str, int] = {}
        self.skipped_columns = 0

    def note(self, text: str, kind: str | None = None) -> None:
        """Keep a few examples of each kind of problem (kind: the text up to its first colon)."""
        kind = kind or text.split(":")[0]
        self._kinds[kind] = self._kinds.get(kind, 0) + 1
        if self._kinds[kind] <= 2 and len(self.notes) < 16:
            self.notes.append(text)


def exercise(col: RawColumn, facts: SourceFacts | None, tally: Tally, where: str) -> None:
    """Scan and parse one column every way we try; count crashes and unaccounted cells."""
    tally.columns += 1
    tally.inputs += len(col)
    try:
        report = scan_column(col, facts, reference_year=2026)
    except Exception:
        tally.crashes += 1
        tally.note(f"scan crashed on {where}: {traceback.format_exc(limit=2).splitlines()[-1]}")
        return
    specs = [s.spec for s in report.suggestions[:3]]
    if report.best is not None:
        specs.append(replace(report.best.spec, day_order="mdy", century="past", pivot_year=2026))
        specs.append(replace(report.best.spec, date_system=1904, blank_tokens=("n/a", "-")))
    for spec in specs:
        try:
            bad = problems(col, spec)
        except Exception:
            tally.crashes += 1
            tally.note(
                f"parse crashed on {where}: {traceback.format_exc(limit=2).splitlines()[-1]}"
            )
            continue
        for b in bad:
            # a missing row or a PARSED cell without a date loses the cell; the rest are cells
            # present but reported against the contract (BLANK for a non-empty cell, no reason)
            lost = b.startswith(("PARSED without", "unknown state")) or " has " in b[:30]
            tally.lost += lost
            tally.breaches += not lost
        for b in bad[:2]:
            tally.note(f"{where}: {b[:200]}", kind=b.split(":")[0])


def values_part(columns: int, seed: int, tally: Tally) -> None:
    rng = random.Random(seed)
    for k in range(columns):
        exercise(make_column(rng.randrange(2**32), []), None, tally, f"generated column {k}")


def _load_maker():  # type: ignore[no-untyped-def]
    spec = importlib.util.spec_from_file_location("make_malformed", MAKER)
    assert spec is not None and spec.loader is not None
    mod = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = mod  # dataclasses in the module look themselves up here
    spec.loader.exec_module(mod)
    return mod


def files_part(tally: Tally) -> str:
    from datemend.core.readers import read_table

    if not MAKER.exists():
        return f"files: skipped ({MAKER.relative_to(ROOT)} does not exist yet)"
    with tempfile.TemporaryDirectory() as tmp:
        try:
            cases = _load_maker().make_all(Path(tmp))
        except Exception as err:
            return f"files: skipped (the maker failed: {err!r})"
        for case in cases:
            path = Path(case.path)
            tally.files += 1
            try:
                table = read_table(path)
            except DatemendError as err:
                tally.refused += 1
                text = str(err)
                if "\n" in text or not text.strip():
                    tally.breaches += 1
                    tally.note(f"{path.name}: refusal is not one sentence: {text!r}")
                if case.expect == "ok":
                    tally.misjudged += 1
                    tally.note(f"{path.name} should open ({case.why}) but: {text}")
                continue
            except Exception as err:
                tally.crashes += 1
                tally.note(f"{path.name}: read crashed: {err!r}")
                continue
            tally.opened += 1
            if case.expect == "error":
                tally.misjudged += 1
                tally.note(f"{path.name} should be refused ({case.why}) but opened")
            if case.expect == "ok" and case.n_cols is not None and case.n_rows is not None:
                want = case.n_cols * case.n_rows
                got = len(table.columns) * table.n_rows
                if got < want:
                    tally.lost += want - got
                    tally.note(
                        f"{path.name}: {len(table.columns)}×{table.n_rows} cells read, "
                        f"{case.n_cols}×{case.n_rows} expected ({case.why})"
                    )
            for k, col in enumerate(table.columns):
                if len(col) != table.n_rows:
                    tally.lost += abs(table.n_rows - len(col))
                if k >= COLUMNS_PER_FILE:  # very wide sheets: read all, scan the first few
                    tally.skipped_columns += 1
                    continue
                exercise(col, table.facts, tally, f"{path.name}/{col.name}")
    return (
        f"files: {tally.files} tried, {tally.opened} opened, {tally.refused} refused with a "
        f"sentence, {tally.misjudged} against the maker's expectation"
    )


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--columns", type=int, default=200, help="generated columns (210 cells each)")
    ap.add_argument("--seed", type=int, default=20261201)
    args = ap.parse_args(argv)
    tally = Tally()
    values_part(args.columns, args.seed, tally)
    generated = tally.inputs
    files_line = files_part(tally)
    print(
        f"inputs tried: {tally.inputs:,} cell values in {tally.columns:,} columns "
        f"({generated:,} generated, {tally.inputs - generated:,} from files)"
    )
    print(f"files tried: {tally.files}")
    print(f"  {files_line}")
    if tally.skipped_columns:
        print(
            f"  ({tally.skipped_columns:,} columns of wide sheets read but not scanned: "
            f"at most {COLUMNS_PER_FILE} scanned per file)"
        )
    print(f"crashes: {tally.crashes}")
    print(f"cells lost: {tally.lost}")
    print(
        f"cells against the contract (present, but e.g. BLANK though not empty): {tally.breaches}"
    )
    for n in tally.notes:
        print("  -", n)
    return 0 if tally.crashes == tally.lost == tally.breaches == 0 else 1


if __name__ == "__main__":
    raise SystemExit(main())
