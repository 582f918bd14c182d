"""Scale benchmark: datemend's own work as ratios against plain-library baselines, same run.

    python benchmarks/scale.py            # full sizes (100k-row XLSX, 1M-row CSV)
    python benchmarks/scale.py --small    # a quick run (10k-row XLSX, 100k-row CSV)

Sections and goals (from the scale issue):
  1. open + scan of a 100k-row × 12-column XLSX  vs  python-calamine's bare read      ≤ 2×
  2. replay of a 10-step log on a 1M-row CSV, written back as CSV
                                  vs  pandas read_csv(dtype=str) + to_csv alone      ≤ 2×
  3. problems-only filter on a 1M-row table model (the window's model; needs Qt)      ≤ 0.2 s
  4. peak memory of open + replay + export of that CSV  vs  the DataFrame's own size  ≤ 3×

The data is an invented rowing-club membership export, generated once into ``--cache``. Times
are the best of ``--repeat`` runs (wall clock, one process); section 1 alternates at least five
rounds of the two and judges the larger of best/best and the median of the rounds' ratios.
Nothing here is a test: CI never runs it, and tests never assert timings.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import gc
import json
import os
import platform
import resource
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd

FIRST = ["Ada", "Bo", "Cy", "Di", "Ed", "Fi", "Gus", "Hal", "Ivy", "Jo", "Kit", "Lu"]
LAST = ["Quill", "Lantern", "Drummond", "Ferrow", "Marsh", "Ostler", "Renn", "Pim", "Cole"]
BOATS = ["single scull", "double", "coxless four", "coxed four", "eight"]


# ------------------------------------------------------------------------------ machine


def machine_facts() -> list[str]:
    mem = "?"
    try:
        for line in Path("/proc/meminfo").read_text().splitlines():
            if line.startswith("MemTotal:"):
                mem = f"{int(line.split()[1]) / 1024**2:.1f} GiB"
    except OSError:
        pass
    cpu = platform.processor() or "?"
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    from importlib.metadata import version

    import pyarrow

    from datemend import __version__

    return [
        f"CPU: {cpu}; {os.cpu_count()} cores visible (nproc), RAM {mem}",
        f"OS: {platform.platform()}",
        f"Python {platform.python_version()}; pandas {pd.__version__}; numpy {np.__version__}; "
        f"pyarrow {pyarrow.__version__}; python-calamine "
        f"{version('python-calamine')}; datemend {__version__}",
    ]


# ------------------------------------------------------------------------------ data


def _dates(rng: np.random.Generator, n: int, lo: str, hi: str) -> np.ndarray:
    a, b = np.datetime64(lo, "D").astype(np.int64), np.datetime64(hi, "D").astype(np.int64)
    return rng.integers(a, b, n).astype("datetime64[D]")


def _names(rng: np.random.Generator, n: int) -> np.ndarray:
    first = np.array(FIRST, dtype=object)[rng.integers(0, len(FIRST), n)]
    last = np.array(LAST, dtype=object)[rng.integers(0, len(LAST), n)]
    return first + " " + last


def _sprinkle(rng: np.random.Generator, values: np.ndarray, share: float) -> np.ndarray:
    """Placeholders, blanks and an impossible day in a share of the cells (the mess to fix)."""
    out = values.astype(object)
    hit = rng.random(len(out)) < share
    junk = np.array(["n/a", "", "TBC", "31/02/2020"], dtype=object)
    out[hit] = junk[rng.integers(0, len(junk), int(hit.sum()))]
    return out


def roster_frame(n: int, seed: int = 7) -> pd.DataFrame:
    """An invented membership export: ISO, day-first and compact dates, with some mess."""
    rng = np.random.default_rng(seed)
    born = _dates(rng, n, "1940-01-01", "2012-12-31")
    joined = _dates(rng, n, "1995-01-01", "2026-10-31")
    outing = joined + rng.integers(0, 400, n).astype("timedelta64[D]")
    renewal = _dates(rng, n, "2026-01-01", "2027-12-31")
    joined_dmy = pd.Series(joined).dt.strftime("%d/%m/%Y").to_numpy(dtype=object)
    return pd.DataFrame(
        {
            "Member no": (np.arange(n) + 100001).astype(str),
            "Name": _names(rng, n),
            "Born": _sprinkle(rng, np.datetime_as_string(born), 0.01),
            "Joined": _sprinkle(rng, joined_dmy, 0.01),
            "Last outing": np.datetime_as_string(outing.astype("datetime64[s]") + 3600 * 7),
            "Renewal": pd.Series(renewal).dt.strftime("%Y%m%d").to_numpy(dtype=object),
            "Boat class": np.array(BOATS, dtype=object)[rng.integers(0, len(BOATS), n)],
            "Fee": np.round(rng.uniform(20, 300, n), 2).astype(str),
        }
    )


def make_csv(path: Path, n: int) -> Path:
    if not path.exists():
        t = time.perf_counter()
        roster_frame(n).to_csv(path, index=False)
        print(f"  generated {path.name} ({n:,} rows) in {time.perf_counter() - t:.1f} s")
    return path


def make_xlsx(path: Path, n: int) -> Path:
    """12 columns with real date and date-time cells beside text dates, numbers and text."""
    if path.exists():
        return path
    from openpyxl import Workbook

    t = time.perf_counter()
    rng = np.random.default_rng(11)
    df = roster_frame(n, seed=11)
    born = _dates(rng, n, "1940-01-01", "2012-12-31").astype(object)
    outing = (_dates(rng, n, "2020-01-01", "2026-10-31").astype("datetime64[s]") + 3600 * 9).astype(
        object
    )
    locker = rng.integers(1, 400, n)
    fee = np.round(rng.uniform(20, 300, n), 2)
    waiver = _sprinkle(
        rng,
        pd.Series(_dates(rng, n, "2015-01-01", "2026-10-31"))
        .dt.strftime("%d %b %Y")
        .to_numpy(dtype=object),
        0.02,
    )
    wb = Workbook(write_only=True)
    ws = wb.create_sheet("Members")
    ws.append(
        [
            "Member no", "Name", "Born", "Joined", "Last outing", "Renewal", "Boat class",
            "Fee", "Locker", "Waiver signed", "Born (typed)", "Notes",
        ]
    )  # fmt: skip
    cols = [
        df["Member no"].astype(int).tolist(),
        df["Name"].tolist(),
        born.tolist(),
        df["Joined"].tolist(),
        outing.tolist(),
        df["Renewal"].tolist(),
        df["Boat class"].tolist(),
        fee.tolist(),
        locker.tolist(),
        waiver.tolist(),
        df["Born"].tolist(),
        [""] * n,
    ]
    for row in zip(*cols):
        ws.append([None if v == "" else v for v in row])
    wb.save(path)
    print(f"  generated {path.name} ({n:,} rows × 12) in {time.perf_counter() - t:.1f} s")
    return path


# ------------------------------------------------------------------------------ timing


def best_of(repeat: int, fn: Callable[[], object]) -> float:
    best = float("inf")
    for _ in range(repeat):
        gc.collect()
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


def verdict(value: float, goal: float) -> str:
    return "meets goal" if value <= goal else "MISSES goal"


# ------------------------------------------------------------------------------ sections


def section_xlsx(path: Path, repeat: int) -> dict[str, float]:
    from python_calamine import CalamineWorkbook

    from datemend.core.infer import scan
    from datemend.core.readers import read_table

    def bare() -> object:
        return CalamineWorkbook.from_path(str(path)).get_sheet_by_index(0).to_python()

    def ours() -> object:
        return scan(read_table(path))

    # Rounds alternate the two (bare, ours, bare, ours …) so a slow spell of this shared
    # machine falls on both; the figure judged is the larger of best/best and the median of
    # the rounds' own ratios (one lucky baseline run cannot make the goal look met).
    bases, mines = [], []
    for _ in range(repeat):
        bases.append(best_of(1, bare))
        mines.append(best_of(1, ours))
    base, mine = min(bases), min(mines)
    read = best_of(repeat, lambda: read_table(path))
    rounds = sorted(m / b for m, b in zip(mines, bases, strict=True))
    median = (
        rounds[len(rounds) // 2] if len(rounds) % 2 else sum(rounds[len(rounds) // 2 - 1 :][:2]) / 2
    )
    ratio = max(mine / base, median)
    print("\n1. open + scan of an XLSX (100k rows × 12 columns at full size)")
    print(f"   baseline python-calamine CalamineWorkbook...to_python(): {base:7.2f} s")
    print(f"   datemend read_table + scan:                              {mine:7.2f} s")
    print(f"     of which read_table (cells, kinds, 1904 flag, notes):  {read:7.2f} s")
    print(
        f"   best/best {mine / base:.2f}×; each round (ours / bare): "
        + ", ".join(f"{m / b:.2f}×" for m, b in zip(mines, bases, strict=True))
        + f"; median {median:.2f}×"
    )
    print(f"   ratio {ratio:.2f}× (the larger of the two; goal ≤ 2×: {verdict(ratio, 2.0)})")
    return {
        "xlsx_base_s": base,
        "xlsx_datemend_s": mine,
        "xlsx_read_s": read,
        "xlsx_ratio": ratio,
        "xlsx_round_median": median,
    }


def ten_step_log(raw: object) -> object:
    """A 10-step log: the auto fixes of the date columns, then tokens, renames, a date part
    and hand-set cells, as a user would build over a month."""
    from datemend.core.fixlog import make_auto_log
    from datemend.core.steps import BlankTokens, DatePart, RenameColumn, SetCell

    log = make_auto_log(raw, key_column="Member no")
    read = [s.column for s in log.steps]
    extra = [
        BlankTokens(("n/a", "TBC")),
        DatePart("Last outing") if "Last outing" in read else None,
        RenameColumn(read[0], f"{read[0]} (date)") if read else None,
        SetCell(read[0], "100002", "1970-01-01", key_column="Member no") if read else None,
        SetCell(read[-1], "100003", "2026-01-01", key_column="Member no") if read else None,
        RenameColumn(read[-1], f"{read[-1]} (fixed)") if len(read) > 1 else None,
        SetCell(read[0], "100004", "1980-02-29", key_column="Member no") if read else None,
        SetCell(read[0], "100005", None, key_column="Member no") if read else None,
        SetCell(read[0], "100006", "1990-06-30", key_column="Member no") if read else None,
        SetCell(read[0], "100007", "1991-07-31", key_column="Member no") if read else None,
    ]
    for step in extra:
        if step is not None and len(log.entries) < 10:
            log = log.add(step)
    return log


def section_replay(path: Path, repeat: int, work: Path) -> dict[str, float]:
    from datemend.core import fixlog
    from datemend.core.export import export_table
    from datemend.core.readers import read_table
    from datemend.core.replay import replay

    log = ten_step_log(read_table(path))
    log_path = work / "bench.datemend.json"
    log.save(log_path)
    out_base, out_mine = work / "base.csv", work / "mine.csv"

    def bare() -> object:
        df = pd.read_csv(path, dtype=str, keep_default_na=False)
        df.to_csv(out_base, index=False)
        return df

    def ours() -> object:
        # what `datemend replay LOG FILE -o OUT.csv` does: read, replay (apply + drift), write
        report = replay(fixlog.FixLog.load(log_path), read_table(path))
        export_table(report.table, out_mine, overwrite=True)
        return report

    base = best_of(repeat, bare)
    mine = best_of(repeat, ours)
    ratio = mine / base
    n = len(log.entries)
    print(f"\n2. replay of a {n}-step log on a CSV, written as CSV")
    print(f"   baseline pandas read_csv(dtype=str) + to_csv:            {base:7.2f} s")
    print(f"   datemend read_table + replay (apply, drift) + export:    {mine:7.2f} s")
    print(f"   ratio {ratio:.2f}× (goal ≤ 2×: {verdict(ratio, 2.0)})")
    return {"replay_base_s": base, "replay_datemend_s": mine, "replay_ratio": ratio, "steps": n}


def section_filter(path: Path, repeat: int) -> dict[str, float]:
    print("\n3. problems-only filter on the table model (the window's model)")
    try:
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
        from PySide6.QtCore import QCoreApplication

        from datemend.gui.cells_model import CellsModel, CellsSource, RowFilter
    except ImportError as err:
        print(f"   skipped: Qt is not available here ({err})")
        return {}
    from datemend.core import fixlog
    from datemend.core.readers import read_table

    _app = QCoreApplication.instance() or QCoreApplication([])
    raw = read_table(path)
    clean = fixlog.apply_log(ten_step_log(raw), raw)
    col = next(iter(clean.parsed))
    model = CellsModel()
    model.set_source(CellsSource(raw.column(col), clean.parsed[col], raw.source_rows))

    def flip() -> None:
        model.set_filter(RowFilter(mode="problems"))
        model.set_filter(RowFilter(mode="all"))

    took = best_of(max(repeat, 3), lambda: model.set_filter(RowFilter(mode="problems")))
    shown = model.rowCount()
    flip()
    print(f"   {raw.n_rows:,} rows, column {col!r}: {shown:,} problem rows shown in {took:.3f} s")
    print(f"   (goal ≤ 0.2 s: {verdict(took, 0.2)})")
    del _app
    return {"filter_s": took, "filter_rows": raw.n_rows, "problem_rows": shown}


_CHILD = r"""
import json, sys
from pathlib import Path
def status(field):
    for line in Path('/proc/self/status').read_text().splitlines():
        if line.startswith(field + ':'):
            return int(line.split()[1]) * 1024
def rss():
    return status('VmRSS')
import datemend.cli, datemend.cli_commands
from datemend.core import export, fixlog, infer, parse, readers, replay
base = rss()
path, log_path, out = sys.argv[1:4]
# exactly what a user runs: datemend replay LOG FILE -o OUT.csv
code = datemend.cli.main(["replay", log_path, path, "-o", out, "--overwrite"])
# VmHWM: this program's own peak. (ru_maxrss is not used: Linux carries it over from the
# parent through fork and exec, so a big parent would inflate it.)
peak = status('VmHWM')
print(json.dumps({'base': base, 'peak': peak, 'end': rss(), 'code': code}))
"""


def section_memory(path: Path, work: Path) -> dict[str, float]:
    df = pd.read_csv(path, dtype=str, keep_default_na=False)
    frame = int(df.memory_usage(deep=True).sum())
    del df
    df = pd.read_csv(path, dtype=object, keep_default_na=False)
    frame_obj = int(df.memory_usage(deep=True).sum())
    del df
    log_path = work / "bench.datemend.json"
    out = subprocess.run(
        [sys.executable, "-c", _CHILD, str(path), str(log_path), str(work / "mem.csv")],
        capture_output=True,
        text=True,
        check=True,
    )
    got = json.loads(out.stdout.strip().splitlines()[-1])
    used = got["peak"] - got["base"]
    ratio = used / frame
    print("\n4. peak memory of `datemend replay LOG FILE -o OUT.csv` (read, replay, export)")
    print("   on that CSV, in a fresh process")
    print(f"   the DataFrame (pandas read_csv dtype=str, memory_usage deep): {frame / 1e6:7.0f} MB")
    obj_mb = frame_obj / 1e6
    print(f"   (as Python str objects, dtype=object:                         {obj_mb:7.0f} MB)")
    print(f"   datemend peak RSS above its start-up RSS:                     {used / 1e6:7.0f} MB")
    print(f"     (resident at the end {(got['end'] - got['base']) / 1e6:.0f} MB; exit code "
          f"{got['code']})")  # fmt: skip
    print(f"   ratio {ratio:.2f}× (goal ≤ 3×: {verdict(ratio, 3.0)}); "
          f"{used / frame_obj:.2f}× the object-dtype frame")  # fmt: skip
    return {
        "frame_mb": frame / 1e6,
        "frame_object_mb": frame_obj / 1e6,
        "peak_mb": used / 1e6,
        "memory_ratio": ratio,
    }


# ------------------------------------------------------------------------------ main


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawTextHelpFormatter)
    p.add_argument("--small", action="store_true", help="10k-row XLSX and 100k-row CSV")
    p.add_argument("--repeat", type=int, default=None, help="runs per timing (best is kept)")
    p.add_argument(
        "--cache",
        type=Path,
        default=Path(tempfile.gettempdir()) / "datemend-bench",
        help="folder for the generated files (kept between runs)",
    )
    p.add_argument("--json", type=Path, help="also write the figures to this JSON file")
    p.add_argument("--sections", default="1234", help="which sections to run (default 1234)")
    args = p.parse_args(argv)
    xlsx_rows, csv_rows = (10_000, 100_000) if args.small else (100_000, 1_000_000)
    repeat = args.repeat or (3 if args.small else 2)
    args.cache.mkdir(parents=True, exist_ok=True)

    print(f"datemend scale benchmark ({'small' if args.small else 'full'} sizes), "
          f"{_dt.datetime.now(_dt.UTC):%Y-%m-%d %H:%M} UTC")  # fmt: skip
    for line in machine_facts():
        print("  " + line)
    figures: dict[str, float] = {"xlsx_rows": xlsx_rows, "csv_rows": csv_rows}
    csv = make_csv(args.cache / f"roster_{csv_rows}.csv", csv_rows)
    with tempfile.TemporaryDirectory(dir=args.cache) as tmp:
        work = Path(tmp)
        if "1" in args.sections:
            xlsx = make_xlsx(args.cache / f"roster_{xlsx_rows}.xlsx", xlsx_rows)
            figures |= section_xlsx(xlsx, max(repeat, 5))
        if "2" in args.sections or "4" in args.sections:
            figures |= section_replay(csv, repeat, work)  # also saves the log section 4 uses
        if "3" in args.sections:
            figures |= section_filter(csv, repeat)
        if "4" in args.sections:
            figures |= section_memory(csv, work)
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"\nmax RSS of this process: {rss:.0f} MB")
    if args.json:
        args.json.write_text(json.dumps(figures, indent=2), encoding="utf-8")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
