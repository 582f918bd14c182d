"""Accuracy on the labelled corpus: datemend against three baselines, in the same run.

For every value the result is one of: **right** (the date the truth says), **silently wrong**
(a date that differs from the truth, or any date where the truth is "unresolvable"), or
**unresolved** (no date given: blank, failed, ambiguous). Baselines:

- pandas ``to_datetime(errors="coerce")`` with its defaults, per column;
- pandas ``to_datetime(format="mixed", errors="coerce")``, per column;
- ``dateutil.parser.parse`` per value ("today" pinned to 2026-01-01 so runs repeat).

datemend runs its public path: ``scan_column`` → best suggestion's spec → ``parse_column``
(reference year 2026, no day-order preference). A column the scan does not take for dates
counts as unresolved.

Goal (issue 3): ≥ 99.9% right where the data decides, 0 silently wrong.

    python benchmarks/accuracy.py [--n 800] [--seed S] [--json] [--examples K]
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import sys
import warnings
from collections import defaultdict
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd
from dateutil import parser as du_parser

sys.path.insert(0, str(Path(__file__).resolve().parent))

from corpus import LabelledColumn, build_corpus

from datemend.core.clean import NAIVE, CellState
from datemend.core.infer import scan_column
from datemend.core.parse import parse_column
from datemend.core.table import RawColumn

Result = tuple[dt.datetime | None, int | None]  # (wall clock, offset minutes or None)
REFERENCE_YEAR = 2026
RIGHT, WRONG, UNRESOLVED = "right", "wrong", "unresolved"


def raw_column(col: LabelledColumn) -> RawColumn:
    values = np.empty(len(col.values), dtype=object)
    values[:] = col.values
    return RawColumn(col.name, values, np.asarray([int(k) for k in col.kinds], dtype=np.int8))


# --- the systems measured ----------------------------------------------------------------------


def run_datemend(col: LabelledColumn) -> list[Result]:
    raw = raw_column(col)
    report = scan_column(raw, col.facts, reference_year=REFERENCE_YEAR)
    if report.best is None or not report.is_date:
        return [(None, None)] * len(col)
    parsed = parse_column(raw, report.best.spec, col.facts)
    ok = (parsed.state == CellState.PARSED) | (parsed.state == CellState.MANUAL)
    out: list[Result] = []
    for i in range(len(col)):
        v = parsed.value[i]
        if not ok[i] or np.isnat(v):
            out.append((None, None))
            continue
        off = int(parsed.offset_min[i])
        out.append((v.astype("datetime64[us]").item(), None if off == NAIVE else off))
    return out


def _from_pandas(series: pd.Series | pd.Index) -> list[Result]:
    out: list[Result] = []
    for ts in list(series):
        if ts is None or ts is pd.NaT or (isinstance(ts, float) and np.isnan(ts)):
            out.append((None, None))
            continue
        if not isinstance(ts, dt.datetime):
            out.append((None, None))
            continue
        off = ts.utcoffset()
        wall = ts.replace(tzinfo=None)
        if isinstance(wall, pd.Timestamp):
            wall = wall.to_pydatetime(warn=False)
        out.append((wall, None if off is None else int(off.total_seconds() // 60)))
    return out


def _pandas(col: LabelledColumn, **kwargs: object) -> list[Result]:
    series = pd.Series(col.values, dtype=object)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            got = pd.to_datetime(series, errors="coerce", **kwargs)  # type: ignore[call-overload]
        except (ValueError, TypeError, OverflowError, pd.errors.OutOfBoundsDatetime):
            return [(None, None)] * len(col)
    return _from_pandas(got)


def run_pandas_default(col: LabelledColumn) -> list[Result]:
    return _pandas(col)


def run_pandas_mixed(col: LabelledColumn) -> list[Result]:
    return _pandas(col, format="mixed")


class _PinnedInfo(du_parser.parserinfo):
    """dateutil's two-digit-year window pinned to 2026, so the baseline does not move."""

    def __init__(self) -> None:
        super().__init__()
        self._year = REFERENCE_YEAR
        self._century = REFERENCE_YEAR // 100 * 100


_INFO = _PinnedInfo()
_DEFAULT = dt.datetime(REFERENCE_YEAR, 1, 1)


def run_dateutil(col: LabelledColumn) -> list[Result]:
    out: list[Result] = []
    for v in col.values:
        if v is None:
            out.append((None, None))
            continue
        if isinstance(v, dt.datetime):
            out.append((v, None))
            continue
        if isinstance(v, dt.date):
            out.append((dt.datetime(v.year, v.month, v.day), None))
            continue
        try:
            t = du_parser.parse(str(v), parserinfo=_INFO, default=_DEFAULT)
        except (ValueError, OverflowError, TypeError):
            out.append((None, None))
            continue
        off = t.utcoffset()
        out.append(
            (t.replace(tzinfo=None), None if off is None else int(off.total_seconds() // 60))
        )
    return out


SYSTEMS: dict[str, Callable[[LabelledColumn], list[Result]]] = {
    "datemend": run_datemend,
    "pandas default": run_pandas_default,
    "pandas mixed": run_pandas_mixed,
    "dateutil": run_dateutil,
}


# --- judging -----------------------------------------------------------------------------------


def judge(col: LabelledColumn, i: int, got: Result) -> str:
    wall, off = got
    truth, toff = col.truth[i], col.offsets[i]
    if wall is None:
        return UNRESOLVED
    if truth is None:
        return WRONG
    if off is not None and toff is not None:
        diff = (wall - dt.timedelta(minutes=off)) - (truth - dt.timedelta(minutes=toff))
    else:  # one side naive: the wall clock must match
        diff = wall - truth
    return RIGHT if abs(diff) <= dt.timedelta(microseconds=col.tolerance_us) else WRONG


def measure(corpus: list[LabelledColumn], examples: int = 0) -> dict[str, dict[str, dict]]:
    """Per system, per family: counts of right/wrong/unresolved and decidable values."""
    table: dict[str, dict[str, dict]] = {s: defaultdict(lambda: defaultdict(int)) for s in SYSTEMS}
    samples: dict[str, list[str]] = defaultdict(list)
    for col in corpus:
        for system, fn in SYSTEMS.items():
            try:
                results = fn(col)
            except Exception as exc:  # a crash is reported, and every value counts unresolved
                print(f"!! {system} crashed on {col.family}/{col.name}: {exc!r}", file=sys.stderr)
                table[system][col.family]["crashes"] += 1
                results = [(None, None)] * len(col)
            fam = table[system][col.family]
            for i, got in enumerate(results):
                verdict = judge(col, i, got)
                fam[verdict] += 1
                fam["n"] += 1
                if col.truth[i] is not None:
                    fam["decidable"] += 1
                    if verdict == RIGHT:
                        fam["right_decidable"] += 1
                if (
                    verdict == WRONG
                    and system == "datemend"
                    and len(samples[col.family]) < examples
                ):
                    samples[col.family].append(
                        f"{col.values[i]!r} → {got[0]} (offset {got[1]}), truth {col.truth[i]}"
                    )
    for fam, lines in samples.items():
        print(f"datemend wrong in {fam}:", *lines, sep="\n  ", file=sys.stderr)
    return {s: {f: dict(c) for f, c in fams.items()} for s, fams in table.items()}


def _pct(a: int, b: int) -> str:
    return "   -  " if b == 0 else f"{100 * a / b:6.2f}"


def print_table(result: dict[str, dict[str, dict]]) -> None:
    systems = list(result)
    families = list(result[systems[0]])
    head = f"{'family':30} {'n':>5} |" + "|".join(f" {s:^24} " for s in systems)
    sub = f"{'':30} {'':>5} |" + "|".join(
        f" {'right%':>7}{'wrong':>7}{'unres%':>8}  " for _ in systems
    )
    print(head)
    print(sub)
    print("-" * len(head))
    totals = {s: defaultdict(int) for s in systems}
    for fam in [*families, "ALL"]:
        cells = []
        n = 0
        for s in systems:
            c = totals[s] if fam == "ALL" else result[s][fam]
            if fam != "ALL":
                for k, v in c.items():
                    totals[s][k] += v
            n = c.get("n", 0)
            cells.append(
                f" {_pct(c.get('right_decidable', 0), c.get('decidable', 0)):>7}"
                f"{c.get('wrong', 0):>7}{_pct(c.get('unresolved', 0), n):>8}  "
            )
        if fam == "ALL":
            print("-" * len(head))
        print(f"{fam:30} {n:>5} |" + "|".join(cells))
    print()
    print("right% = right among values the data decides; wrong = silently wrong values (count);")
    print("unres% = share of all values left unresolved. Goal: datemend ≥ 99.9% right, 0 wrong.")


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=800, help="values per column (about)")
    ap.add_argument("--seed", type=int, default=20261201)
    ap.add_argument("--json", action="store_true", help="print the counts as JSON")
    ap.add_argument(
        "--examples", type=int, default=0, help="show K wrong datemend values per family"
    )
    args = ap.parse_args(argv)
    corpus = build_corpus(args.seed, args.n)
    print(f"corpus: {len(corpus)} columns, {sum(len(c) for c in corpus)} values, seed {args.seed}")
    result = measure(corpus, args.examples)
    if args.json:
        print(json.dumps(result, indent=1, sort_keys=True))
    else:
        print_table(result)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
