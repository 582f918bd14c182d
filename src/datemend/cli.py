"""Command-line front: ``datemend [open] [FILE]``, ``scan``, ``auto``, ``replay``.

Every subcommand is a thin wrapper over the same core calls the window makes. Qt is imported only
by ``open``, so the other subcommands run where no display or Qt library is present.

Exit codes (also in the README):
  0  done, every date cell resolved
  2  the command line itself is wrong (unknown option, missing argument)
  3  an input or output problem a user can fix: unreadable file, bad fix log, missing column,
     target exists without --overwrite
  4  output written, but some column was ambiguous or some cells stayed unresolved
  5  replay --strict found drift or unresolved cells; nothing was written
  70 an internal error (details in the log file named on screen)
  130 cancelled (Ctrl+C)
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence

from ._version import __version__

EXIT_OK = 0
EXIT_USAGE = 2
EXIT_INPUT = 3
EXIT_UNRESOLVED = 4
EXIT_STRICT = 5
EXIT_INTERNAL = 70
EXIT_CANCELLED = 130


_HEADER_HELP = "1-based header row (default: the first row filled like the table)"


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="datemend",
        description=(
            "Preview and fix messy date columns in spreadsheets (CSV, XLSX, ODS), record each "
            "fix in a fix log, and replay the log on next month's file."
        ),
        epilog="Run without a subcommand to open the desktop window.",
    )
    p.add_argument("--version", action="version", version=f"datemend {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")

    o = sub.add_parser("open", help="open the desktop window (optionally on FILE)")
    o.add_argument("file", nargs="?", help="a CSV, XLSX or ODS file to open")

    s = sub.add_parser("scan", help="report, per column, how its values read as dates")
    s.add_argument("file", help="a CSV, TSV, XLSX, XLSM or ODS file")
    s.add_argument("--sheet", help="sheet name (workbooks; default: the first visible sheet)")
    s.add_argument("--header-row", type=int, help=_HEADER_HELP)
    s.add_argument("--json", action="store_true", help="print the reports as JSON")
    s.add_argument("--all", action="store_true", help="also list columns that are not dates")
    _order_flags(s)
    s.add_argument("--reference-year", type=int, help="year two-digit years must not pass")

    a = sub.add_parser("auto", help="accept the best reading of every date column and write OUT")
    a.add_argument("file", help="a CSV, TSV, XLSX, XLSM, ODS or Parquet file")
    a.add_argument("-o", "--output", required=True, help="OUT.csv, OUT.xlsx or OUT.parquet")
    a.add_argument("--sheet", help="sheet name (workbooks; default: the first visible sheet)")
    a.add_argument("--header-row", type=int, help=_HEADER_HELP)
    a.add_argument("--log-out", help="also save the fix log of the accepted fixes (JSON)")
    a.add_argument("--overwrite", action="store_true", help="replace OUT if it exists")
    a.add_argument("--reference-year", type=int, help="year two-digit years must not pass")
    _order_flags(a)
    _export_flags(a)

    r = sub.add_parser("replay", help="replay a fix log on a new file: drift report, then OUT")
    r.add_argument("log", help="a fix log (JSON) saved by the window or by `auto --log-out`")
    r.add_argument("file", help="the new file; with --engine dask, files or a glob ('data/*.csv')")
    r.add_argument("-o", "--output", required=True, help="OUT file (with --engine dask: a folder)")
    r.add_argument("--sheet", help="sheet name (workbooks; default: the log's sheet, else first)")
    r.add_argument("--header-row", type=int, help=_HEADER_HELP)
    r.add_argument("--strict", action="store_true", help="write nothing if anything drifted")
    r.add_argument("--report", help="also save the drift report as JSON")
    r.add_argument("--overwrite", action="store_true", help="replace OUT if it exists")
    r.add_argument("--engine", choices=("local", "dask"), default="local", help="where to run")
    r.add_argument("--scheduler", help="with --engine dask: address of an existing cluster")
    r.add_argument(
        "--today", help="reference date for steps set to 'the day of replay' (YYYY-MM-DD)"
    )
    _export_flags(r)
    return p


def _export_flags(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--keep-raw", action="store_true", help="keep each fixed column's raw text beside it"
    )
    p.add_argument("--date-format", help='number format of date cells (XLSX; default "yyyy-mm-dd")')
    p.add_argument("--zone", help="write zone-aware values in this IANA zone (default UTC)")
    p.add_argument("--delimiter", help="CSV delimiter (default ,)")
    p.add_argument("--bom", action="store_true", help="CSV: start with a UTF-8 BOM")
    p.add_argument(
        "--new-workbook",
        action="store_true",
        help="XLSX from a workbook: write the table on a new sheet (much faster for big files; "
        "the source's other sheets, formulas and formats are not copied)",
    )


def _order_flags(p: argparse.ArgumentParser) -> None:
    g = p.add_mutually_exclusive_group()
    g.add_argument(
        "--day-first",
        dest="day_order",
        action="store_const",
        const="dmy",
        help="where the data cannot decide, read 03/04 as 3 April (a stated preference)",
    )
    g.add_argument(
        "--month-first",
        dest="day_order",
        action="store_const",
        const="mdy",
        help="where the data cannot decide, read 03/04 as 4 March (a stated preference)",
    )


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    from ._memory import return_freed_memory

    return_freed_memory()
    command = args.command or "open"
    from .core.progress import Cancelled
    from .core.table import DatemendError

    try:
        if command == "open":
            return _open(getattr(args, "file", None))
        if command == "scan":
            from .cli_commands import run_scan

            return run_scan(args)
        if command == "auto":
            from .cli_commands import run_auto

            return run_auto(args)
        if command == "replay":
            from .cli_commands import run_replay

            return run_replay(args)
    except DatemendError as err:
        print(f"datemend: {err}", file=sys.stderr)
        return EXIT_INPUT
    except (KeyboardInterrupt, Cancelled):
        print("datemend: cancelled", file=sys.stderr)
        return EXIT_CANCELLED
    except Exception as err:  # anything else is our bug: traceback to the log, one line on screen
        from .crashlog import write_crash

        where = write_crash(err, f"datemend {command}")
        print(
            f"datemend: internal error ({type(err).__name__}: {err}); details in {where}",
            file=sys.stderr,
        )
        return EXIT_INTERNAL
    parser.error(f"unknown command {command!r}")
    return EXIT_USAGE


def _open(file: str | None) -> int:
    try:
        from .gui.app import run_app
    except ImportError as err:
        print(
            f"datemend: the desktop window needs Qt, which could not be loaded ({err}). "
            "See the README's troubleshooting section; `datemend scan FILE` works without it.",
            file=sys.stderr,
        )
        return EXIT_INPUT
    return run_app(file)


if __name__ == "__main__":
    raise SystemExit(main())
