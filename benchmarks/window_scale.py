"""The window at scale: open, read, filter and scroll a large CSV offscreen, and print figures.

Not a test (timings depend on the machine and its load): it prints how long the GUI thread was
blocked in each phase (a 20 ms heartbeat timer records its longest gap), how long each filter
switch and scroll step took, and the peak resident memory against the pandas DataFrame of the
same file (``memory_usage(deep=True)``).

    QT_QPA_PLATFORM=offscreen python benchmarks/window_scale.py --rows 1000000
"""

from __future__ import annotations

import argparse
import os
import resource
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")


def make_csv(path: Path, rows: int, seed: int = 8) -> None:
    """4 columns: a member key, a mixed date column, a text column and a number column.

    "Joined" is mostly D/M/YYYY, with ISO 8601, serial numbers and junk mixed in (invented data).
    """
    import pandas as pd

    rng = np.random.default_rng(seed)
    days = rng.integers(0, 365 * 40, rows)
    dates = np.datetime64("1980-01-01") + days.astype("timedelta64[D]")
    ts = pd.DatetimeIndex(dates)
    dmy = (
        pd.Series(ts.day).astype(str)
        + "/"
        + pd.Series(ts.month).astype(str)
        + "/"
        + pd.Series(ts.year).astype(str)
    )
    iso = pd.Series(ts.strftime("%Y-%m-%d"))
    serial = pd.Series((days + 29221).astype(str))  # 1980-01-01 is serial 29221 (1900 system)
    junk = pd.Series(rng.choice(["n/a", "32/13/2001", "spring 2004", "2004-02-30", "TBC"], rows))
    pick = rng.random(rows)
    joined = dmy.where(pick < 0.86, iso).where(pick < 0.94, serial).where(pick < 0.98, junk)
    boats = np.array(["Single scull", "Double", "Coxless four", "Eight", "Quad"])
    frame = pd.DataFrame(
        {
            "Member": [f"M{i:07d}" for i in range(rows)],
            "Joined": joined,
            "Boat": boats[rng.integers(0, len(boats), rows)],
            "Fee": rng.integers(20, 120, rows),
        }
    )
    frame.to_csv(path, index=False)


def frame_sizes(path: Path) -> tuple[float, float]:
    """MB of the file as a pandas DataFrame (default "str" dtype, and object dtype)."""
    import subprocess

    code = (
        "import sys, pandas as pd; f = pd.read_csv(sys.argv[1], dtype=str); "
        "print(f.memory_usage(deep=True).sum() / 1e6, "
        "f.astype(object).memory_usage(deep=True).sum() / 1e6)"
    )
    out = subprocess.run([sys.executable, "-c", code, str(path)], capture_output=True, text=True)
    a, b = out.stdout.split()
    return float(a), float(b)


def rss_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=1_000_000)
    ap.add_argument("--keep", help="folder to keep the CSV in (reused if present)")
    args = ap.parse_args(argv)

    from PySide6.QtCore import QElapsedTimer, QTimer
    from PySide6.QtWidgets import QApplication

    from datemend.gui.window import MainWindow

    folder = Path(args.keep or tempfile.mkdtemp(prefix="datemend-scale-"))
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"members-{args.rows}.csv"
    if not path.exists():
        t = time.perf_counter()
        make_csv(path, args.rows)
        print(
            f"wrote {path} ({path.stat().st_size / 1e6:.0f} MB) in {time.perf_counter() - t:.1f}s"
        )
    df_mb, df_obj_mb = frame_sizes(path)  # in a child process: its peak is not ours
    base_rss = rss_mb()

    app = QApplication.instance() or QApplication(sys.argv)
    os.environ.setdefault("DATEMEND_SETTINGS", str(folder / "settings.ini"))
    win = MainWindow()
    win.resize(1280, 800)
    win.show()
    app.processEvents()

    clock = QElapsedTimer()
    clock.start()
    beat = {"last": clock.elapsed(), "max": 0, "ticks": 0}

    def tick() -> None:
        now = clock.elapsed()
        beat["max"] = max(beat["max"], now - beat["last"])
        beat["last"] = now
        beat["ticks"] += 1

    heart = QTimer()
    heart.setInterval(20)
    heart.timeout.connect(tick)
    heart.start()

    def reset() -> None:
        app.processEvents()
        beat.update(last=clock.elapsed(), max=0, ticks=0)

    def wait_until(cond, limit: float = 900.0) -> float:
        t = time.perf_counter()
        while not cond():
            app.processEvents()
            time.sleep(0.002)
            if time.perf_counter() - t > limit:
                raise TimeoutError("gave up waiting")
        return time.perf_counter() - t

    figures: list[tuple[str, str]] = []

    def note(name: str, value: str) -> None:
        figures.append((name, value))
        print(f"{name:<46} {value:<40} (peak so far {rss_mb() - base_rss:.0f} MB)", flush=True)

    # -- open and scan -------------------------------------------------------------------
    reset()
    t0 = time.perf_counter()
    ready = {"t": None}
    win.document_ready.connect(lambda: ready.__setitem__("t", time.perf_counter()))
    win.open_file(path)
    wait_until(lambda: ready["t"] is not None)
    shown = wait_until(lambda: win.cells.model.rowCount() > 0) + ready["t"] - t0
    note("open + scan to first rows shown", f"{shown:.2f} s")
    note("  longest GUI-thread gap during open", f"{beat['max']} ms ({beat['ticks']} beats)")
    note("  rss after open", f"{rss_mb():.0f} MB")

    # -- use the best reading (applied in a job on big tables) ----------------------------
    reset()
    t = time.perf_counter()
    readings = win.readings
    report = win.session.report(win.column)
    spec = report.suggestions[0].spec if report.suggestions else None
    if spec is not None:
        readings.use_requested.emit(spec, report.suggestions[0].label)
        wait_until(lambda: win.column in win.session.clean.parsed and not win.jobs)
        note("use a reading (apply in a job)", f"{time.perf_counter() - t:.2f} s")
        note("  longest GUI-thread gap during apply", f"{beat['max']} ms ({beat['ticks']} beats)")
    model = win.cells.model
    note("rows in the table", f"{model.rowCount():,}")

    # -- filters -------------------------------------------------------------------------
    pane = win.cells
    steps = [("problems", None), ("all", None)]
    parsed = model.source.parsed if model.source else None
    if parsed is not None and len(parsed.patterns) > 1:
        steps += [("pattern", 1), ("all", None)]
    for mode, pat in steps:
        reset()
        t = time.perf_counter()
        pane.show_mode(mode, pat)
        app.processEvents()
        note(
            f"filter → {mode}{'' if pat is None else f':{pat}'}",
            f"{(time.perf_counter() - t) * 1000:.0f} ms ({model.rowCount():,} rows)",
        )
    for flag in (True, False):
        t = time.perf_counter()
        pane.problems_first.setChecked(flag)
        app.processEvents()
        note(f"problems first = {flag}", f"{(time.perf_counter() - t) * 1000:.0f} ms")
    for needle in ("2019", "n/a", ""):
        reset()
        t = time.perf_counter()
        pane.find.setText(needle)
        pane._apply_filter()  # as Enter does; the first find in a big column runs as a job
        wait_until(lambda: not win.jobs)
        app.processEvents()
        note(
            f"find {needle!r}",
            f"{(time.perf_counter() - t) * 1000:.0f} ms ({model.rowCount():,} rows), "
            f"longest GUI gap {beat['max']} ms",
        )

    # -- scroll --------------------------------------------------------------------------
    table = pane.table
    n = model.rowCount()
    worst = 0.0
    t = time.perf_counter()
    positions = np.linspace(0, n - 1, 300).astype(int)
    for p in positions:
        s = time.perf_counter()
        table.scrollTo(model.index(int(p), 0))
        app.processEvents()  # paints the rows now in view
        worst = max(worst, time.perf_counter() - s)
    total = time.perf_counter() - t
    note("scroll: 300 jumps, each painted", f"{total:.2f} s, worst {worst * 1000:.0f} ms")

    # -- a hand-set cell, undo, and an export: each a job on a big table --------------------
    from datemend.gui.cells_model import Column

    def timed_job(name: str, start) -> None:
        reset()
        t = time.perf_counter()
        done = {"n": 0}
        conn = win.table_refreshed.connect(lambda: done.__setitem__("n", done["n"] + 1))
        start()
        wait_until(lambda: not win.jobs and (done["n"] or name.startswith("export")))
        win.table_refreshed.disconnect(conn)
        note(name, f"{time.perf_counter() - t:.2f} s, longest GUI gap {beat['max']} ms")

    reads = model.column_of(Column.READS)
    timed_job("hand-set one cell", lambda: model.setData(model.index(5, reads), "2001-02-03"))
    timed_job("undo", win.undo)
    target = folder / "members-clean.csv"
    target.unlink(missing_ok=True)
    from datemend.core.export import ExportOptions

    timed_job("export CSV", lambda: win.export_to(target, ExportOptions(), False))

    # -- Stop while opening: how long until the work really stops ---------------------------
    for phase in ("Reading", "scanning"):
        seen = {"t": None, "stopped": None}
        job = win.open_file(path)

        def progressed(_d: int, _t: int, text: str, job=job, phase=phase, seen=seen) -> None:
            if seen["t"] is None and phase in text:
                seen["t"] = time.perf_counter()
                job.cancel()

        job.progressed.connect(progressed)
        job.ended.connect(lambda seen=seen: seen.__setitem__("stopped", time.perf_counter()))
        wait_until(lambda seen=seen: seen["stopped"] is not None)
        lag = "never asked" if seen["t"] is None else f"{seen['stopped'] - seen['t']:.2f} s"
        note(f"Stop while {phase.lower()}: until stopped", lag)

    note("peak rss", f"{rss_mb():.0f} MB (Python + Qt before opening: {base_rss:.0f} MB)")
    note(
        "DataFrame memory_usage(deep=True)",
        f"{df_mb:.0f} MB (str dtype), {df_obj_mb:.0f} MB (object)",
    )
    note("peak rss / DataFrame (str)", f"{rss_mb() / df_mb:.1f}× (all of it, Qt included)")
    note("(peak rss − start) / DataFrame (str)", f"{(rss_mb() - base_rss) / df_mb:.1f}×")
    heart.stop()
    win.close()
    print(f"machine: {os.cpu_count()} cores, load {os.getloadavg()[0]:.1f} (1-min average)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
