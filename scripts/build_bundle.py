"""Build a self-contained one-folder datemend application with PyInstaller (not part of CI).

    python3 scripts/build_bundle.py            # -> dist/datemend/datemend (+ desktop entry, icon)

The bundle needs no Python on the target machine: ``dist/datemend/datemend`` with no arguments
opens the window, and ``datemend scan|auto|replay ...`` runs the command line. It is built for
the operating system and CPU it is built on (PyInstaller does not cross-build).

PyInstaller is installed only into a separate build environment (``--venv``, default
``build/bundle-venv``), created on first use with datemend itself installed from this checkout,
so the development environment is never touched. Needs network access on the first run.
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

#: Python modules the app never uses, kept out to keep the bundle small. Qt modules beyond
#: Core/Gui/Widgets (and what they load) are not imported by datemend.
EXCLUDES = [
    "tkinter",
    "_tkinter",
    "unittest",
    "pytest",
    "hypothesis",
    "IPython",
    "matplotlib",
    "scipy",
    "dask",
    "distributed",
    "numpy.tests",
    "pandas.tests",
    "pyarrow.tests",
    "PySide6.QtNetwork",
    "PySide6.QtQml",
    "PySide6.QtQuick",
    "PySide6.QtQuickWidgets",
    "PySide6.QtQuickControls2",
    "PySide6.QtSql",
    "PySide6.QtTest",
    "PySide6.QtOpenGL",
    "PySide6.QtOpenGLWidgets",
    "PySide6.QtDesigner",
    "PySide6.QtHelp",
    "PySide6.QtUiTools",
    "PySide6.QtXml",
    "PySide6.QtConcurrent",
    "PySide6.QtDBus",
    "PySide6.QtPrintSupport",
    "PySide6.QtSvgWidgets",
    "pyarrow.flight",
    "pyarrow._flight",
    "pyarrow.cuda",
    "pyarrow._cuda",
    "pyarrow.orc",
    "pyarrow._orc",
    "pyarrow._dataset_orc",
    "pyarrow._s3fs",
    "pyarrow._gcsfs",
    "pyarrow._azurefs",
    "pyarrow._hdfs",
    "pyarrow.substrait",
    "pyarrow._substrait",
    "pyarrow._pyarrow_cpp_tests",
]

#: pyarrow extension modules for remote file systems, RPC, ORC and GPUs (datemend reads local
#: CSV and Parquet only): deleted after the build, then every pyarrow library that no remaining
#: binary needs (``readelf -d``) goes too. Each is imported by pyarrow only on request, inside
#: ``try/except ImportError``.
DROP_PYARROW = ["_flight", "_s3fs", "_gcsfs", "_azurefs", "_hdfs", "_orc", "_dataset_orc",
                "_cuda", "_pyarrow_cpp_tests", "libarrow_python_flight"]  # fmt: skip
SOURCE_SUFFIXES = (".pyx", ".pxd", ".pxi", ".h", ".hpp", ".cc", ".cpp")

#: Packages whose data files (time zones, locale data, schemas, holiday calendars) load at run
#: time and must travel with the bundle.
COLLECT_DATA = ["datemend", "tzdata", "babel", "jsonschema_specifications", "holidays", "dateutil"]
COLLECT_SUBMODULES = ["holidays", "datemend"]

#: Qt plugin folders to drop after the build: the app shows a widgets window on X11/Wayland
#: or offscreen, and reads no images beyond PNG/SVG.
DROP_QT_PLUGINS = [
    "qmltooling",
    "sqldrivers",
    "networkinformation",
    "tls",
    "designer",
    "position",
    "webview",
]

ENTRY = """\
import sys

from datemend.cli import main

if __name__ == "__main__":
    sys.exit(main())
"""


def _run(cmd: list[str], **kw: object) -> None:
    print("+", " ".join(cmd), flush=True)
    subprocess.run(cmd, check=True, **kw)  # type: ignore[call-overload]


def ensure_venv(venv: Path, *, refresh: bool) -> Path:
    """The build environment's python, creating it (datemend + PyInstaller) when missing."""
    py = venv / "bin" / "python"
    if not py.exists():
        _run([sys.executable, "-m", "venv", str(venv)])
        _run([str(py), "-m", "pip", "install", "-q", "--upgrade", "pip"])
        _run([str(py), "-m", "pip", "install", "-q", "pyinstaller"])
        refresh = True
    if refresh:
        # a fresh copy of this checkout (not editable: the bundle must hold the files)
        _run([str(py), "-m", "pip", "install", "-q", "--force-reinstall", "--no-deps", str(ROOT)])
        _run([str(py), "-m", "pip", "install", "-q", str(ROOT)])
    return py


def build(py: Path, dist: Path, work: Path) -> Path:
    """Run PyInstaller; returns the app folder."""
    work.mkdir(parents=True, exist_ok=True)
    entry = work / "datemend_entry.py"
    entry.write_text(ENTRY, encoding="utf-8")
    cmd = [
        str(py),
        "-m",
        "PyInstaller",
        "--noconfirm",
        "--clean",
        "--onedir",
        "--name",
        "datemend",
        "--distpath",
        str(dist),
        "--workpath",
        str(work / "pyinstaller"),
        "--specpath",
        str(work),
        "--log-level",
        "WARN",
    ]
    for mod in EXCLUDES:
        cmd += ["--exclude-module", mod]
    for pkg in COLLECT_DATA:
        cmd += ["--collect-data", pkg]
    for pkg in COLLECT_SUBMODULES:
        cmd += ["--collect-submodules", pkg]
    cmd += ["--hidden-import", "datemend.gui.app", str(entry)]
    _run(cmd, cwd=work)
    app = dist / "datemend"
    _trim(app)
    _add_desktop_files(app)
    return app


def _trim(app: Path) -> None:
    """Drop Qt plugins and translations, pyarrow parts and C sources the app does not use."""
    for plugins in app.rglob("PySide6/Qt/plugins"):
        for name in DROP_QT_PLUGINS:
            shutil.rmtree(plugins / name, ignore_errors=True)
    for tr in app.rglob("PySide6/Qt/translations"):
        for f in tr.glob("*.qm"):
            if not f.name.startswith("qtbase_"):
                f.unlink()
    for pa_dir in app.rglob("pyarrow"):
        if not pa_dir.is_dir() or not any(pa_dir.glob("lib*.so*")):
            continue
        shutil.rmtree(pa_dir / "include", ignore_errors=True)
        shutil.rmtree(pa_dir / "tests", ignore_errors=True)
        for f in list(pa_dir.iterdir()):
            if f.is_file() and (
                f.suffix in SOURCE_SUFFIXES or any(f.name.startswith(d + ".") for d in DROP_PYARROW)
            ):
                f.unlink()
        _drop_unneeded_libs(app, pa_dir)


def _needed(binary: Path) -> set[str]:
    try:
        out = subprocess.run(
            ["readelf", "-d", str(binary)], capture_output=True, text=True, check=True
        ).stdout
    except (OSError, subprocess.CalledProcessError):
        return set()
    return {line.split("[", 1)[1].rstrip("]") for line in out.splitlines() if "(NEEDED)" in line}


def _drop_unneeded_libs(app: Path, pa_dir: Path) -> None:
    """Delete pyarrow's shared libraries that no remaining binary in the bundle links to."""
    if shutil.which("readelf") is None:
        print("note: readelf not found; pyarrow libraries were not trimmed", file=sys.stderr)
        return
    while True:
        libs = [f for f in pa_dir.glob("lib*.so*") if f.is_file()]
        binaries = [f for f in app.rglob("*.so*") if f.is_file()]
        needed: set[str] = set()
        for b in binaries:
            needed |= _needed(b)
        needed_stems = {n.split(".so")[0] for n in needed}
        gone = [
            f
            for f in libs
            if f.name not in needed
            and not f.name.startswith("lib.")
            # a dropped feature's library, or a second copy of a library linked by another name
            and ("flight" in f.name or "_s3" in f.name or f.name.split(".so")[0] in needed_stems)
        ]
        if not gone:
            return
        for f in gone:
            f.unlink()


def _add_desktop_files(app: Path) -> None:
    """The Linux desktop entry and icon, laid out as under a prefix (share/applications …)."""
    desktop = ROOT / "assets" / "datemend.desktop"
    icon = ROOT / "assets" / "datemend.png"
    apps = app / "share" / "applications"
    apps.mkdir(parents=True, exist_ok=True)
    if desktop.exists():
        shutil.copy2(desktop, apps / "datemend.desktop")
    if icon.exists():
        icons = app / "share" / "icons" / "hicolor" / "256x256" / "apps"
        icons.mkdir(parents=True, exist_ok=True)
        shutil.copy2(icon, icons / "datemend.png")
    else:
        print("note: assets/datemend.png is missing; the bundle has no icon", file=sys.stderr)
    (app / "INSTALL.txt").write_text(
        "datemend, self-contained: no Python needed.\n\n"
        "Run ./datemend to open the window, or ./datemend scan FILE for the command line.\n"
        "To add it to the desktop menu (Linux):\n"
        "  cp -r share ~/.local/\n"
        '  sed -i "s|^Exec=datemend|Exec=$PWD/datemend|" \\\n'
        "      ~/.local/share/applications/datemend.desktop\n",
        encoding="utf-8",
    )


def _size(path: Path) -> int:
    return sum(f.stat().st_size for f in path.rglob("*") if f.is_file() and not f.is_symlink())


def smoke(app: Path) -> None:
    """Print the bundle's size and the start time of ``--version`` and ``scan`` on a sample."""
    exe = app / "datemend"
    env = {k: v for k, v in os.environ.items() if not k.startswith("PYTHON")}
    env["QT_QPA_PLATFORM"] = "offscreen"
    print(f"bundle: {app} ({_size(app) / 1e6:.0f} MB)")
    t = time.perf_counter()
    out = subprocess.run([str(exe), "--version"], capture_output=True, text=True, env=env)
    print(f"  datemend --version -> {out.stdout.strip()!r} in {time.perf_counter() - t:.2f} s")
    samples = sorted((ROOT / "sample_files").glob("*.csv")) + sorted(
        (ROOT / "sample_files").glob("*.xlsx")
    )
    if samples:
        t = time.perf_counter()
        out = subprocess.run(
            [str(exe), "scan", str(samples[0])], capture_output=True, text=True, env=env
        )
        took = time.perf_counter() - t
        print(f"  datemend scan {samples[0].name} -> exit {out.returncode} in {took:.2f} s")


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawTextHelpFormatter)
    p.add_argument("--venv", type=Path, default=ROOT / "build" / "bundle-venv")
    p.add_argument("--dist", type=Path, default=ROOT / "dist")
    p.add_argument("--work", type=Path, default=ROOT / "build" / "bundle")
    p.add_argument("--no-refresh", action="store_true", help="do not reinstall datemend first")
    p.add_argument("--no-smoke", action="store_true", help="skip the size and start-time check")
    args = p.parse_args(argv)
    started = time.perf_counter()
    py = ensure_venv(args.venv, refresh=not args.no_refresh)
    app = build(py, args.dist, args.work)
    print(f"built {app} in {time.perf_counter() - started:.0f} s")
    if not args.no_smoke:
        smoke(app)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
