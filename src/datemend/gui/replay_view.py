"""The replay check's text: the core's ReplayReport laid out as what matched, what is new and
what is missing. Presentation only; every value from a file is HTML-escaped (shown, never run).
"""

from __future__ import annotations

import html
from typing import Any

from .look import OKABE_ITO

__all__ = ["replay_check_html"]


def _e(v: object) -> str:
    return html.escape(str(v))


def _table(headers: list[str], rows: list[list[object]]) -> str:
    head = "".join(f"<th align='left'>{_e(h)}</th>" for h in headers)
    body = "".join("<tr>" + "".join(f"<td>{_e(c)}</td>" for c in r) + "</tr>" for r in rows)
    return f"<table cellspacing='0' cellpadding='3'><tr>{head}</tr>{body}</table>"


def _list(items: list[str]) -> str:
    return "<ul>" + "".join(f"<li>{i}</li>" for i in items) + "</ul>"


def replay_check_html(report: Any) -> str:
    """HTML for the replay check dialog; falls back to the core's generic rendering for a
    report that does not have the ReplayReport fields."""
    if not hasattr(report, "columns") or not hasattr(report, "missing"):
        from ..core.render import replay_html

        return replay_html(report)
    warn = OKABE_ITO["vermillion"]
    out: list[str] = []
    drift = getattr(report, "has_drift", None)
    drift = drift() if callable(drift) else drift
    if drift is False:
        out.append("<p>✓ <b>No drift</b>: every cell fits the fix log as it did before.</p>")
    elif drift:
        out.append(f"<p style='color:{warn}'>! <b>Drift found</b>: read this before using it.</p>")

    out.append("<h3>What matched</h3>")
    rows = [
        [c.column, c.matched, c.blank, c.manual, c.unmatched + c.ambiguous] for c in report.columns
    ]
    out.append(
        _table(["column", "✓ read as before", "○ blank", "✎ by hand", "✗ ? to check"], rows)
        if rows
        else "<p>No column of the fix log was found.</p>"
    )

    new: list[str] = []
    for c in report.columns:
        for g in c.groups:
            now = f"; would now read as {_e(g.suggestion)}" if g.suggestion else ""
            before = " (also unread last time)" if g.seen_before else ""
            ex = ", ".join(_e(x) for x in g.examples[:3])
            new.append(
                f"“{_e(c.column)}”: {g.count:,} cells like {ex} match no recorded way of "
                f"writing dates (first at row {g.rows[0] if g.rows else '?'}){now}{before}."
            )
        for token, n in c.new_tokens:
            new.append(f"“{_e(c.column)}”: new placeholder-like value “{_e(token)}” ({n:,} cells).")
        if c.out_of_range:
            lo_hi = " to ".join(_e(x) for x in c.source_range) if c.source_range else "?"
            ex = ", ".join(
                f"row {r} {_e(raw)} → {_e(v)}" for r, raw, v in c.out_of_range_examples[:3]
            )
            new.append(
                f"“{_e(c.column)}”: {c.out_of_range:,} dates far outside last time's range "
                f"({lo_hi}): {ex}."
            )
    for name in report.added:
        new.append(f"New column “{_e(name)}”.")
    for name in report.moved:
        new.append(f"Column “{_e(name)}” is in another place (found by its name).")
    if report.rows_new:
        new.append(f"{len(report.rows_new):,} rows with keys not seen last time.")
    out.append("<h3>What is new</h3>")
    out.append(_list(new) if new else "<p>Nothing new.</p>")

    missing: list[str] = []
    for m in report.missing:
        likely = f"; perhaps “{_e(m.likely)}”" if m.likely else ""
        missing.append(f"Column “{_e(m.name)}” is not in the file{likely}.")
    for k in report.lost_keys:
        missing.append(
            f"Step {k.step}: the hand-set “{_e(k.column)}” of key “{_e(k.key)}”: {_e(k.why)}."
        )
    if report.rows_gone:
        missing.append(f"{len(report.rows_gone):,} rows of last time's file are gone.")
    out.append("<h3>What is missing</h3>")
    out.append(_list(missing) if missing else "<p>Nothing is missing.</p>")

    if report.warnings:
        out.append("<h3>Notes</h3>")
        out.append(_list([_e(w) for w in report.warnings]))
    return "".join(out)
