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
    s.add_argument("--header-row", type=int, help="1-based header row (default: first non-empty)")
    s.add_argument("--json", action="store_true", help="print the reports as JSON")
    s.add_argument("--all", action="store_true", help="also list columns that are not dates")
    _order_flags(s)
    return p


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
    command = args.command or "open"
    from .core.table import DatemendError

    try:
        if command == "open":
            return _open(getattr(args, "file", None))
        if command == "scan":
            from .cli_commands import run_scan

            return run_scan(args)
    except DatemendError as err:
        print(f"datemend: {err}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("datemend: cancelled", file=sys.stderr)
        return EXIT_CANCELLED
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
