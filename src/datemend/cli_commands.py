"""The work behind each subcommand; cli.py only parses arguments and maps errors to exit codes."""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

from .core.progress import Progress
from .core.report import ColumnReport
from .core.table import DatemendError, RawTable

EXIT_OK = 0
EXIT_UNRESOLVED = 4
EXIT_STRICT = 5


def _progress(enabled: bool) -> Progress:
    """Terminal progress on stderr, only when stderr is a terminal."""
    if not enabled or not sys.stderr.isatty():
        return Progress()

    def show(done: int, total: int, text: str) -> None:
        pct = 100 * done // total if total else 100
        print(f"\r{pct:3d}% {text[:60]:<60}", end="", file=sys.stderr, flush=True)

    return Progress(show)


def _read(args: argparse.Namespace, file: str | None = None) -> RawTable:
    from .core.readers import read_table

    return read_table(
        file or args.file,
        sheet=getattr(args, "sheet", None),
        header_row=getattr(args, "header_row", None),
    )


def _scan(raw: RawTable, args: argparse.Namespace) -> list[ColumnReport]:
    from .core.infer import scan

    return scan(
        raw,
        prefer_day_order=getattr(args, "day_order", None),
        reference_year=getattr(args, "reference_year", None),
    )


# --------------------------------------------------------------------------------------- scan


def report_to_dict(rep: ColumnReport, *, failures: int = 20) -> dict[str, Any]:
    """A JSON-safe summary of a column report (for --json and scripts)."""
    best = rep.best
    d: dict[str, Any] = {
        "column": rep.column,
        "rows": rep.n_rows,
        "likeness": round(rep.likeness, 4),
        "is_date": rep.is_date,
        "blank": rep.blank,
        "kinds": dict(rep.kinds),
        "placeholders": [{"token": t, "count": n} for t, n in rep.placeholders],
        "summary": rep.summary,
        "suggestions": [],
    }
    for s in rep.suggestions:
        d["suggestions"].append(
            {
                "label": s.label,
                "score": round(s.score, 4),
                "parsed": s.parsed,
                "total": s.total,
                "coverage": round(s.coverage, 4),
                "failed": s.failed,
                "ambiguous": s.ambiguous,
                "mix": [{"pattern": p, "label": lab, "count": n} for p, lab, n in s.mix],
                "examples": [{"raw": r, "parsed": v} for r, v in s.examples],
                "evidence": list(s.evidence),
                "warnings": list(s.warnings),
                "decisions": dict(s.decisions),
                "disagreements": [{"raw": r, "this": a, "next": b} for r, a, b in s.disagreements],
                "failures": [
                    {"row": f.source_row, "raw": f.raw, "reason": f.text}
                    for f in s.failures[:failures]
                ],
                "spec": s.spec.to_dict(),
            }
        )
    d["best"] = d["suggestions"][0]["label"] if best is not None else None
    return d


def _rows(n: int) -> str:
    return f"{n:,} row" if n == 1 else f"{n:,} rows"


def format_report(rep: ColumnReport, *, examples: int = 3) -> list[str]:
    """Readable lines for one column."""
    best = rep.best
    head = f"{rep.column}  —  date-likeness {rep.likeness:.0%}"
    if not rep.is_date:
        return [head + "  (not a date column)"]
    lines = [head]
    if best is None:
        lines.append("  no way to read this column as dates")
        return lines
    lines.append(f"  best reading : {best.label}")
    lines.append(
        f"  coverage     : {best.parsed} of {best.total} non-blank cells ({best.coverage:.1%})"
        f"; {rep.blank} blank"
    )
    if best.ambiguous:
        lines.append(f"  unclear      : {best.ambiguous} cells could be read two ways")
    for name, how in sorted(best.decisions.items()):
        said = "NOT decided" if how == "undecided" else f"decided by {how}"
        lines.append(f"  {name.replace('_', ' '):<13}: {said}")
    for ev in best.evidence:
        lines.append(f"  evidence     : {ev}")
    for w in best.warnings:
        lines.append(f"  CAUTION      : {w}")
    if rep.placeholders:
        toks = ", ".join(f'"{t}" ×{n}' for t, n in rep.placeholders)
        lines.append(f"  placeholders : {toks} (suggested as blank)")
    if best.failed:
        lines.append(f"  not read     : {best.failed} cells, e.g.")
        for f in best.failures[:examples]:
            lines.append(f'                 row {f.source_row}: "{f.raw}" — {f.text}')
    if len(rep.suggestions) > 1:
        # a reading with the best one's label differs in a rule: its first evidence says which
        others = "; ".join(
            s.label + (f" ({s.evidence[0]})" if s.label == best.label and s.evidence else "")
            for s in rep.suggestions[1:3]
        )
        lines.append(f"  other readings: {others}")
    return lines


def run_scan(args: argparse.Namespace) -> int:
    raw = _read(args)
    reports = _scan(raw, args)
    if args.json:
        out = {
            "file": raw.facts.file_name,
            "sheet": raw.facts.sheet,
            "rows": raw.n_rows,
            "date_system": raw.facts.date_system,
            "notes": list(raw.facts.notes),
            "columns": [report_to_dict(r) for r in reports],
        }
        json.dump(out, sys.stdout, indent=2, ensure_ascii=False)
        print()
        return EXIT_OK
    print(f"{raw.facts.where()}: {raw.n_rows} rows, {len(raw.columns)} columns")
    for note in raw.facts.notes:
        print(f"  note: {note}")
    shown = 0
    for rep in reports:
        if rep.is_date or args.all:
            print()
            print("\n".join(format_report(rep)))
            shown += 1
    others = [r.column for r in reports if not r.is_date]
    if others and not args.all:
        print()
        print(f"Not date columns: {', '.join(others)} (--all shows them)")
    if not shown:
        print("No date columns found.")
    return EXIT_OK


def check_output_path(out: Path, source: str | None, overwrite: bool) -> None:
    """Refuse to write over the source, or over an existing file without --overwrite."""
    if source is not None and Path(source).resolve() == out.resolve():
        raise DatemendError(f"{out} is the source file; datemend never writes over its input.")
    if out.exists() and not overwrite:
        raise DatemendError(f"{out} already exists; pass --overwrite to replace it.")


# --------------------------------------------------------------------------------------- auto


def _export_options(args: argparse.Namespace) -> Any:
    from .core.export import ExportOptions

    changes: dict[str, Any] = {"keep_raw": bool(args.keep_raw), "bom": bool(args.bom)}
    if args.date_format:
        changes["date_format"] = args.date_format
    if args.zone:
        changes["zone"] = args.zone
    if args.delimiter:
        changes["delimiter"] = args.delimiter.replace("\\t", "\t")
    if args.new_workbook:
        changes["streaming"] = True
    return ExportOptions(**changes)


def _summary_lines(clean: Any) -> tuple[list[str], int]:
    """One line per fixed column, one per rule, and the number of unresolved cells."""
    from .core.checks import rule_rows, rule_summary

    lines = []
    unresolved = 0
    for pc in clean.parsed.values():
        c = pc.counts()
        bad = c["failed"] + c["ambiguous"]
        unresolved += bad
        lines.append(
            f"  {pc.output_name}: {c['parsed'] + c['manual']} read, {c['blank']} blank, "
            f"{c['failed']} not read, {c['ambiguous']} unclear"
        )
    for name, dc in clean.derived.items():
        lines.append(f"  worked out: {name}" + (f" — {dc.note}" if dc.note else ""))
    for label, count in rule_summary(clean).items():
        rows = ", ".join(str(r) for r in rule_rows(clean, label)[:8])
        more = " …" if count > 8 else ""
        lines.append(
            f"  rule {label}: {count} rows break it" + (f" (rows {rows}{more})" if count else "")
        )
    return lines, unresolved


def run_auto(args: argparse.Namespace) -> int:
    from .core.export import export_table
    from .core.fixlog import auto_fix

    out = Path(args.output)
    raw = _read(args)
    check_output_path(out, raw.facts.path, args.overwrite)
    progress = _progress(True)
    reports = _scan(raw, args)
    log, clean = auto_fix(
        raw,
        reports,
        prefer_day_order=args.day_order,
        reference_year=args.reference_year,
        progress=progress,
    )
    result = export_table(
        clean,
        out,
        options=_export_options(args),
        log_lines=[e.step.describe() for e in log.entries if e.enabled],
        overwrite=args.overwrite,
        progress=progress,
    )
    if args.log_out:
        log_path = Path(args.log_out)
        check_output_path(log_path, raw.facts.path, args.overwrite)
        log.save(log_path)
    lines, unresolved = _summary_lines(clean)
    undecided = [
        r.column
        for r in reports
        if r.is_date and r.best is not None and r.best.decisions.get("day_order") == "undecided"
    ]
    print(f"Wrote {result.path} ({_rows(result.rows)}, {result.writer_text}).")
    if not lines:
        print("No date columns found; the output is a copy of the input's cells.")
    else:
        print(f"Fixed {len(lines)} date columns:")
        print("\n".join(lines))
    for note in result.notes:
        print(f"Note: {note}")
    if args.log_out:
        print(f"Saved the fix log to {args.log_out}.")
    if undecided:
        print(
            "Day/month order could not be decided for: "
            + ", ".join(undecided)
            + " (use --day-first or --month-first, or decide in the window)."
        )
    if unresolved or undecided:
        print(f"{unresolved} cells stayed unresolved; they keep their raw text in the output.")
        return EXIT_UNRESOLVED
    return EXIT_OK


# ------------------------------------------------------------------------------------- replay


def _today(args: argparse.Namespace) -> Any:
    import datetime as dt

    if not args.today:
        return dt.date.today()
    try:
        return dt.date.fromisoformat(args.today)
    except ValueError:
        msg = f'--today must be a date like 2026-11-30, not "{args.today}".'
        raise DatemendError(msg) from None


def run_replay(args: argparse.Namespace) -> int:
    from .core.fixlog import FixLog

    log = FixLog.load(args.log)
    if args.engine == "dask":
        return _replay_dask(args, log)
    from .core.export import export_table
    from .core.replay import replay
    from .core.steps import ApplyContext

    out = Path(args.output)
    if args.sheet is None and log.source is not None and log.source.sheet:
        from .core.readers import list_sheets

        try:
            names = [s.name for s in list_sheets(args.file)]
        except DatemendError:
            names = []
        if log.source.sheet in names:
            args.sheet = log.source.sheet
    raw = _read(args)
    # Fail before the work, not after it; with --strict the user may only want the report, and
    # export_table refuses an existing target without --overwrite in any case.
    check_output_path(out, raw.facts.path, args.overwrite or args.strict)
    progress = _progress(True)
    ctx = ApplyContext(today=_today(args), key_column=log.key_column)
    report = replay(log, raw, ctx, progress)
    print(str(report))
    if args.report:
        rpath = Path(args.report)
        check_output_path(rpath, raw.facts.path, args.overwrite)
        rpath.write_text(
            json.dumps(report.to_dict(), indent=2, ensure_ascii=False), encoding="utf-8"
        )
    assert report.table is not None
    lines, unresolved = _summary_lines(report.table)
    if args.strict and (report.has_drift or unresolved):
        why = ["drift found"] if report.has_drift else []
        why += [f"{unresolved} unresolved cells"] if unresolved else []
        print(f"--strict: nothing written ({', '.join(why)}).")
        return EXIT_STRICT
    result = export_table(
        report.table,
        out,
        options=_export_options(args),
        log_lines=[e.step.describe() for e in log.entries if e.enabled],
        overwrite=args.overwrite,
        progress=progress,
    )
    print(f"Wrote {result.path} ({_rows(result.rows)}, {result.writer_text}).")
    print("\n".join(lines))
    if unresolved:
        print(f"{unresolved} cells stayed unresolved; they keep their raw text in the output.")
        return EXIT_UNRESOLVED
    return EXIT_OK


def _replay_dask(args: argparse.Namespace, log: Any) -> int:
    from .distributed import replay_dask

    result = replay_dask(
        log,
        args.file,
        out_dir=args.output,
        today=_today(args),
        options=_export_options(args),
        overwrite=args.overwrite,
        strict=args.strict,
        scheduler=args.scheduler,
        progress=_progress(True),
    )
    report = result.report
    print(str(report))
    if args.report:
        Path(args.report).write_text(
            json.dumps(report.to_dict(), indent=2, ensure_ascii=False), encoding="utf-8"
        )
    if args.strict and not result.written:
        print("--strict: nothing written (drift or unresolved cells found).")
        return EXIT_STRICT
    print(f"Wrote {len(result.outputs)} files into {args.output}.")
    return EXIT_UNRESOLVED if report.unresolved else EXIT_OK
