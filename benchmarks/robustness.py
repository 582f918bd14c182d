"""Robustness summary (issue 9 point 6): inputs tried, files tried, crashes, cells lost.

1. **Values**: seeded columns of arbitrary cells (the generator of ``tests/property/test_fuzz.py``:
   date-like text from a small grammar, odd strings, huge and tiny numbers, NaN, booleans, date,
   date-time and time cells, error cells) go through ``scan_column`` and ``parse_column`` with the
   best suggestion and a few changed specs. A *crash* is any exception; a *lost cell* is one the
   result does not account for (wrong length, a PARSED cell without a date, an unresolved cell
   without a reason, BLANK for a cell that is neither empty nor a blank token).
2. **Files**: the malformed files made by ``tests/malformed/make_malformed.py`` (when that script
   exists) are opened with ``read_table``; each must open or give a ``DatemendError`` of one
   sentence naming the file. Opened tables are scanned and parsed as above. A crash is an
   exception that is not a ``DatemendError``.

    python benchmarks/robustness.py [--columns 200] [--seed S]
"""

from __future__ import annotations

import argparse
import importlib.util
import inspect
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


class Tally:
    def __init__(self) -> None:
        self.inputs = 0
        self.columns = 0
        self.files = 0
        self.opened = 0
        self.refused = 0
        self.crashes = 0
        self.lost = 0
        self.notes: list[str] = []

    def note(self, text: str) -> None:
        if len(self.notes) < 12:
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
        tally.lost += len(bad)
        for b in bad[:2]:
            tally.note(f"{where}: {b[:200]}")


def values_part(columns: int, seed: int, tally: Tally) -> None:
    rng = random.Random(seed)
    for k in range(columns):
        exercise(make_column(rng.randrange(2**32), []), None, tally, f"generated column {k}")


def _make_files(folder: Path) -> list[Path]:
    """Run the readers' malformed-file maker into ``folder``; return the files it made."""
    spec = importlib.util.spec_from_file_location("make_malformed", MAKER)
    assert spec is not None and spec.loader is not None
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    for name in ("make_all", "make_malformed", "generate", "build", "main"):
        fn = getattr(mod, name, None)
        if fn is None:
            continue
        params = inspect.signature(fn).parameters
        result = fn([str(folder)]) if name == "main" and "argv" in params else fn(folder)
        if isinstance(result, list | tuple) and result and isinstance(result[0], str | Path):
            return [Path(p) for p in result]
        break
    return sorted(p for p in folder.rglob("*") if p.is_file())


def files_part(tally: Tally) -> str:
    from datemend.core.readers import read_table

    if not MAKER.exists():
        return f"files: skipped ({MAKER.relative_to(ROOT)} does not exist yet)"
    with tempfile.TemporaryDirectory() as tmp:
        try:
            paths = _make_files(Path(tmp))
        except Exception as err:
            return f"files: skipped (the maker failed: {err!r})"
        for path in paths:
            tally.files += 1
            try:
                table = read_table(path)
            except DatemendError as err:
                tally.refused += 1
                text = str(err)
                if "\n" in text or not text.strip():
                    tally.lost += 1
                    tally.note(f"{path.name}: refusal is not one sentence: {text!r}")
                continue
            except Exception as err:
                tally.crashes += 1
                tally.note(f"{path.name}: read crashed: {err!r}")
                continue
            tally.opened += 1
            for col in table.columns:
                if len(col) != table.n_rows:
                    tally.lost += 1
                exercise(col, table.facts, tally, f"{path.name}/{col.name}")
    return f"files: {tally.files} tried, {tally.opened} opened, {tally.refused} refused clearly"


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
    print(f"crashes: {tally.crashes}")
    print(f"cells lost: {tally.lost}")
    for n in tally.notes:
        print("  -", n)
    return 0 if tally.crashes == 0 and tally.lost == 0 else 1


if __name__ == "__main__":
    raise SystemExit(main())
