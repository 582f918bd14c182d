"""Scanning: find the date columns and rank ways to parse each, with the evidence behind them.

A scan reads a deterministic sample of each column's distinct values (all of them up to
``SAMPLE``) with every pattern at once (the *census*), then makes the column-wide decisions:

- which patterns the column uses (numbers compete: serial, epoch, compact digits; the reading
  whose dates are plausible wins — see ``census.py`` and ``evidence.py``),
- day/month order from evidence (a first field above 12 can only be a day), else from the stated
  preference (and the report says so), else left undecided so those cells stay AMBIGUOUS,
- the two-digit-year rule (never silently future dates in a column of past events),
- the spreadsheet date system (from the workbook) and zone handling.

Ranking: the first suggestion is the reading the evidence supports, with ambiguity left visible
when the data cannot decide; alternatives (the other day order, the other century rule, UTC
normalisation, another numeric reading) follow by score = coverage × how much of the reading
rests on a guess.
"""

from __future__ import annotations

import datetime as _dt
import os
import re
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .census import (
    DIGIT_PATTERNS,
    Census,
    census_of,
    full_view,
    number_window,
    parse_sample,
    placeholders_of,
    unread_patterns,
)
from .evidence import choose_patterns, decide_century, decide_day_order, decide_zone
from .parse import cells_and_first, distinct_arrow, distinct_texts, remember
from .patterns import PATTERNS, label
from .progress import Progress
from .report import CellNote, ColumnReport, Suggestion
from .spec import ParseSpec
from .suggest import build_suggestion, likeness_of
from .table import CellKind, RawColumn, RawTable, SourceFacts

__all__ = ["SAMPLE", "scan", "scan_column", "scan_workers"]

#: Distinct values the census reads per column to make its decisions. The chosen reading is
#: then applied to every distinct value, so the best suggestion's counts are exact.
SAMPLE = 5_000


def scan_column(
    column: RawColumn,
    facts: SourceFacts | None = None,
    *,
    prefer_day_order: str | None = None,
    reference_year: int | None = None,
    progress: Progress | None = None,
) -> ColumnReport:
    """Rank ways to parse one column. ``prefer_day_order`` ("dmy"/"mdy") decides only where the
    data cannot, and the report then says it was a preference. ``reference_year`` (default: this
    year) is the latest year a past-event column may hold. ``progress`` is checked between the
    steps of the scan (each well under a second on a million cells), so a Stop is quick."""
    check = progress.check if progress is not None else (lambda: None)
    if prefer_day_order not in (None, "dmy", "mdy"):
        raise ValueError(f'prefer_day_order must be "dmy", "mdy" or None, not {prefer_day_order!r}')
    facts = facts or SourceFacts()
    ref_year = reference_year or _dt.date.today().year
    kinds = {
        k.name.lower(): int(c) for k, c in zip(CellKind, column.kind_counts(), strict=True) if c
    }
    check()
    quick = _without_digits(column, facts, kinds)
    if quick is not None:
        return quick
    check()
    census = census_of(column, facts, sample=SAMPLE)
    check()
    census.ref_year = ref_year
    placeholders = placeholders_of(census)
    census.blank_tokens = tuple(t for t, _ in placeholders)
    patterns = choose_patterns(census, ref_year)
    notes: list[str] = []
    decisions: dict[str, str] = {}
    day_order, why_order, warn_order = decide_day_order(census, patterns, prefer_day_order)
    decisions["day_order"] = why_order[0]
    notes += why_order[1:]
    century, pivot, why_century = decide_century(census, patterns, column.name, ref_year)
    decisions["century"] = why_century[0]
    notes += why_century[1:]
    if facts.format in ("xlsx", "xlsm", "ods", "xls"):
        decisions["date_system"] = "evidence"
        sys_note = (
            f"spreadsheet serials read in the {facts.date_system} date system of the workbook"
        )
    else:
        decisions["date_system"] = "default"
        sys_note = f"spreadsheet serials, if any, read in the {facts.date_system} date system"
    if "serial" in patterns:
        notes.append(sys_note)
    zone_warn = decide_zone(census, patterns)
    decisions["zone"] = "default"
    if census.rivals:
        decisions["numbers"] = "undecided"
    elif census.notes_evidence:
        decisions["numbers"] = "evidence"
    notes += census.notes_evidence
    base = ParseSpec(
        patterns=tuple(patterns),
        day_order=day_order,
        century=century,
        pivot_year=pivot,
        date_system=facts.date_system,
        blank_tokens=census.blank_tokens,
        locales=census.locales,
        rivals=tuple(census.rivals),
        plausible=tuple((p, *number_window(p, ref_year)) for p in patterns if p in DIGIT_PATTERNS),
        alternates=tuple(p for p in DIGIT_PATTERNS if p not in patterns),
    )
    warnings = [*warn_order, *zone_warn, *census.notes_warn, *census.notes]
    check()
    full = full_view(census, column)
    check()
    if full is not census:
        notes.append(
            f"decided on a sample of {len(census.texts):,} of {census.n_distinct:,} distinct "
            "values; the counts cover every cell"
        )
        extra = unread_patterns(census, full, base)
        if extra:
            pats = _keep_year_first(
                [p for p in PATTERNS if p in base.patterns or p in extra], base.patterns
            )
            rest = [p for p in base.patterns if p not in pats]
            base = _evolve(base, patterns=(*pats, *rest))
            notes.append(
                "patterns seen only outside the sample: "
                + ", ".join(label(p, day_order=base.day_order) for p in extra)
            )
    check()
    candidates = [(base, 1.0, dict(decisions), notes, warnings)]
    candidates += _alternatives(base, census, decisions, prefer_day_order, ref_year)
    check()
    suggestions = [build_suggestion(full, base, 1.0, dict(decisions), notes, warnings)]
    suggestions += [
        build_suggestion(census, spec, factor, dec, ev, warn)
        for spec, factor, dec, ev, warn in candidates[1:]
    ]
    remember(column, base, parse_sample(full, base))
    first, rest = suggestions[0], sorted(suggestions[1:], key=lambda s: -s.score)
    ranked = [first, *rest] if first.parsed or first.ambiguous else [*rest, first]
    ranked = _with_disagreements(census, ranked)
    best = ranked[0] if ranked else None
    likeness = likeness_of(full, best, column.name, ref_year) if best else 0.0
    summary = _summary(likeness, best)
    return ColumnReport(
        column=column.name,
        n_rows=len(column),
        likeness=likeness,
        is_date=likeness >= 0.5,
        blank=int(census.empty),
        kinds=kinds,
        placeholders=tuple(placeholders),
        suggestions=tuple(ranked),
        summary=summary,
    )


def _without_digits(
    column: RawColumn, facts: SourceFacts, kinds: dict[str, int]
) -> ColumnReport | None:
    """Every pattern needs a digit (a day at least): a column of text without one is no date
    column, and is reported without reading it with every pattern."""
    if kinds.get("date", 0) or kinds.get("datetime", 0):
        return None
    rows, codes, texts = distinct_texts(column)
    if not len(texts):
        return None
    if len(texts) <= 48:
        if any(ch.isdigit() for t in texts for ch in t):
            return None
    elif any(_DIGIT.search(t) for t in texts[:64]) or _any_digit(distinct_arrow(column)):
        return None  # a date column shows a digit in its first few values: no full search
    cells, first = cells_and_first(codes, len(texts))
    order = np.argsort(rows[first], kind="stable")[:20]
    start = facts.header_row + 1
    why = "no digit in it, so no date"
    notes = tuple(
        CellNote(int(rows[first[j]]), int(rows[first[j]]) + start, str(texts[j]), why)
        for j in order
    )
    total = int(cells.sum()) + kinds.get("time", 0) + kinds.get("bool", 0)
    sug = Suggestion(
        spec=ParseSpec(patterns=()),
        label="no dates read",
        score=0.0,
        parsed=0,
        total=total,
        evidence=("no value holds a digit, and every date pattern needs one",),
        decisions={
            "day_order": "default",
            "century": "default",
            "date_system": "default",
            "zone": "default",
        },
        failures=notes,
        failed=total,
    )
    return ColumnReport(
        column=column.name,
        n_rows=len(column),
        likeness=0.0,
        is_date=False,
        blank=kinds.get("empty", 0),
        kinds=kinds,
        suggestions=(sug,),
        summary=f"0% date-like · no dates read · 0/{total} parsed · {total} failed",
    )


_DIGIT = re.compile("[0-9]")  # RE2's \d: ASCII digits only


def _any_digit(texts: pa.Array) -> bool:
    return bool(pc.any(pc.match_substring_regex(texts, r"\d")).as_py())


def _alternatives(
    base: ParseSpec,
    census: Census,
    decisions: dict[str, str],
    prefer: str | None,
    ref_year: int,
) -> list[tuple[ParseSpec, float, dict[str, str], list[str], list[str]]]:
    out = []
    if census.order_ambiguous and decisions["day_order"] != "evidence":
        for order in ("dmy", "mdy"):
            if order == base.day_order:
                continue
            dec = dict(decisions, day_order="preference" if order == prefer else "undecided")
            said = "day first" if order == "dmy" else "month first"
            factor = 0.9 if order == prefer else 0.5
            out.append(
                (
                    _evolve(base, day_order=order),
                    factor,
                    dec,
                    [f"reads the values that fit either way {said}: a guess, not evidence"],
                    [],
                )
            )
    if census.two_digit_years:
        past = (
            _evolve(base, century="past", pivot_year=ref_year),
            f"two-digit years put in the latest century not after {ref_year}",
        )
        posix = (
            _evolve(base, century="posix", pivot_year=None),
            "two-digit years by the POSIX rule (69–99 → 1900s, 00–68 → 2000s)",
        )
        alts = {"posix": [past], "past": [posix]}.get(base.century, [past, posix])
        for alt, note in alts:
            out.append((alt, 0.8, dict(decisions, century="preference"), [note], []))
    if census.aware:
        out.append(
            (
                _evolve(base, zone="UTC"),
                0.95,
                dict(decisions, zone="preference"),
                ["values with a UTC offset moved to UTC (naive values stay as written)"],
                [],
            )
        )
    for pick in census.rivals:
        pats = tuple(p for p in base.patterns if p not in census.rivals or p == pick)
        out.append(
            (
                _evolve(base, patterns=pats, rivals=()),
                0.5,
                dict(decisions, numbers="preference"),
                [f"reads every number as {label(pick, date_system=base.date_system)}: a guess"],
                [],
            )
        )
    for swap in census.digit_alternatives:
        pats = tuple(swap.get(p, p) for p in base.patterns)
        out.append(
            (
                _evolve(base, patterns=pats),
                0.6,
                dict(decisions),
                ["numbers read another way: " + ", ".join(f"{a} → {b}" for a, b in swap.items())],
                [],
            )
        )
    return out


def _keep_year_first(pats: list[str], before: tuple[str, ...]) -> list[str]:
    """``pats`` with each YY/MM/DD pattern still ahead of its D/M/YY rival where the scan put it
    there (the column's two-digit years stand first), so a pattern added later cannot undo it."""
    for p in before:
        if not p.startswith("yymd-"):
            continue
        rival = "num-" + p.split("-")[1]
        if rival in pats and (rival not in before or before.index(p) < before.index(rival)):
            pats.remove(p)
            pats.insert(pats.index(rival), p)
    return pats


def _evolve(spec: ParseSpec, **changes: object) -> ParseSpec:
    d = spec.to_dict()
    d.update(changes)
    return ParseSpec.from_dict(d)


def _with_disagreements(census: Census, ranked: list) -> list:
    from dataclasses import replace

    from .suggest import disagreements

    out = []
    for i, s in enumerate(ranked):
        if i + 1 < len(ranked):
            s = replace(s, disagreements=disagreements(census, s.spec, ranked[i + 1].spec))
        out.append(s)
    return out


def _summary(likeness: float, best: object) -> str:
    if best is None:
        return f"{likeness:.0%} date-like · no pattern reads these values"
    parts = [f"{likeness:.0%} date-like", best.label, f"{best.parsed}/{best.total} parsed"]
    if best.failed:
        parts.append(f"{best.failed} failed")
    if best.ambiguous:
        parts.append(f"{best.ambiguous} ambiguous")
    return " · ".join(parts)


def scan_workers() -> int:
    """Threads a table's scan uses: the cores this process may run on, at most 4. Most of a
    column's scan is Arrow and numpy work that runs outside Python's lock, so two columns
    scanned at once on two cores take about 0.7 of the time of one after the other."""
    try:
        cores = len(os.sched_getaffinity(0))
    except (AttributeError, OSError):  # not on every platform
        cores = os.cpu_count() or 1
    return max(1, min(4, cores))


def scan(
    table: RawTable | pd.DataFrame,
    *,
    prefer_day_order: str | None = None,
    reference_year: int | None = None,
    progress: Progress | None = None,
    workers: int | None = None,
) -> list[ColumnReport]:
    """Scan every column of a table (or a DataFrame, wrapped as a RawTable), in column order.

    ``workers`` columns are scanned at once, on threads (default ``scan_workers()``; 1 scans
    one after the other). Each column's report is the same either way. ``progress`` hears of
    each column as it is done, in column order; a Stop ends every column's scan."""
    if isinstance(table, pd.DataFrame):
        table = RawTable.from_dataframe(table)
    columns = list(table.columns)
    total = len(columns)

    def one(col: RawColumn) -> ColumnReport:
        return scan_column(
            col,
            table.facts,
            prefer_day_order=prefer_day_order,
            reference_year=reference_year,
            progress=progress,
        )

    n_threads = min(workers or scan_workers(), total)
    reports: list[ColumnReport] = []
    if n_threads <= 1:
        for i, col in enumerate(columns):
            if progress is not None:
                progress.report(i, total, f"scanning {col.name}")
            reports.append(one(col))
    else:
        with ThreadPoolExecutor(n_threads, thread_name_prefix="datemend-scan") as pool:
            futures = [pool.submit(one, col) for col in columns]
            try:
                for i, (col, fut) in enumerate(zip(columns, futures, strict=True)):
                    if progress is not None:
                        progress.report(i, total, f"scanning {col.name}")
                    reports.append(fut.result())
            except BaseException:
                for fut in futures:
                    fut.cancel()
                raise
    if progress is not None:
        progress.report(total, total, "scan done")
    return reports
