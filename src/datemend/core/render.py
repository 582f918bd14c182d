"""Column reports and replay (drift) reports as readable text and HTML, with no Qt.

The terminal gets aligned plain-text tables; a notebook gets the same content as HTML tables via
``_repr_html_``. Every value that came from a file is HTML-escaped, so a cell holding markup is
shown as text, never run.
"""

from __future__ import annotations

import dataclasses
import html
from collections.abc import Iterator, Mapping, Sequence
from typing import Any, overload

import pandas as pd

from .report import ColumnReport, Suggestion

__all__ = [
    "ReplayView",
    "ReportsView",
    "column_html",
    "column_text",
    "replay_html",
    "replay_text",
    "reports_frame",
    "reports_html",
    "reports_text",
    "text_table",
]

_CSS_CLASS = "datemend-table"
_MAX_CELL = 60  # characters of one text-table cell before it is cut with "…"


# ------------------------------------------------------------------------------ small helpers


def _cut(value: object, width: int = _MAX_CELL) -> str:
    s = "" if value is None else str(value)
    s = s.replace("\r", " ").replace("\n", " ")
    return s if len(s) <= width else s[: width - 1] + "…"


def _pct(part: int, whole: int) -> str:
    return f"{100 * part / whole:.0f}%" if whole else "–"


def text_table(headers: Sequence[str], rows: Sequence[Sequence[object]]) -> str:
    """A plain-text table with columns padded to their widest cell."""
    cells = [[_cut(h) for h in headers]] + [[_cut(v) for v in row] for row in rows]
    widths = [max(len(r[i]) for r in cells) for i in range(len(headers))]
    lines = ["  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip() for r in cells]
    lines.insert(1, "  ".join("-" * w for w in widths))
    return "\n".join(lines)


def _html_table(headers: Sequence[str], rows: Sequence[Sequence[object]]) -> str:
    esc = html.escape
    head = "".join(f"<th>{esc(str(h))}</th>" for h in headers)
    body = "".join(
        "<tr>" + "".join(f"<td>{esc('' if v is None else str(v))}</td>" for v in row) + "</tr>"
        for row in rows
    )
    return (
        f'<table class="{_CSS_CLASS}"><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>'
    )


# ------------------------------------------------------------------------------ column reports

_SUMMARY_HEADERS = (
    "column",
    "dates?",
    "likeness",
    "best reading",
    "parsed",
    "failed",
    "ambiguous",
    "blank",
)


def _summary_row(rep: ColumnReport) -> list[object]:
    best = rep.best
    if best is None:
        return [
            rep.column,
            "yes" if rep.is_date else "no",
            f"{rep.likeness:.2f}",
            "",
            "",
            "",
            "",
            rep.blank,
        ]
    return [
        rep.column,
        "yes" if rep.is_date else "no",
        f"{rep.likeness:.2f}",
        best.label,
        f"{best.parsed}/{best.total} ({_pct(best.parsed, best.total)})",
        best.failed,
        best.ambiguous,
        rep.blank,
    ]


def reports_frame(reports: Sequence[ColumnReport]) -> pd.DataFrame:
    """One row per column: the summary a notebook user can sort and filter."""
    rows = []
    for rep in reports:
        best = rep.best
        rows.append(
            {
                "column": rep.column,
                "is_date": rep.is_date,
                "likeness": rep.likeness,
                "best": None if best is None else best.label,
                "parsed": 0 if best is None else best.parsed,
                "total": 0 if best is None else best.total,
                "failed": 0 if best is None else best.failed,
                "ambiguous": 0 if best is None else best.ambiguous,
                "blank": rep.blank,
                "rows": rep.n_rows,
            }
        )
    return pd.DataFrame(rows, columns=list(rows[0]) if rows else None)


def reports_text(reports: Sequence[ColumnReport]) -> str:
    """All column reports as one aligned text table (one line per column)."""
    if not reports:
        return "no columns"
    return text_table(_SUMMARY_HEADERS, [_summary_row(r) for r in reports])


def reports_html(reports: Sequence[ColumnReport]) -> str:
    """All column reports as an HTML table, each date column's details folded below it."""
    if not reports:
        return "<p>no columns</p>"
    table = _html_table(_SUMMARY_HEADERS, [_summary_row(r) for r in reports])
    details = "".join(
        f"<details><summary>{html.escape(r.column)}</summary>{column_html(r)}</details>"
        for r in reports
        if r.is_date
    )
    return table + details


def _suggestion_rows(sugs: Sequence[Suggestion]) -> list[list[object]]:
    return [
        [
            i + 1,
            s.label,
            f"{s.score:.2f}",
            f"{s.parsed}/{s.total} ({_pct(s.parsed, s.total)})",
            s.failed,
            s.ambiguous,
            "; ".join(f"{k}: {v}" for k, v in s.decisions.items()),
        ]
        for i, s in enumerate(sugs)
    ]


_SUG_HEADERS = ("#", "reading", "score", "parsed", "failed", "ambiguous", "decided by")


def _column_parts(rep: ColumnReport) -> list[tuple[str, Any]]:
    """(title, content) pieces of one column's report; content is a sentence list or a table."""
    parts: list[tuple[str, Any]] = []
    head = [
        f"{rep.n_rows} rows, {rep.blank} blank; likeness {rep.likeness:.2f} "
        f"({'a date column' if rep.is_date else 'not a date column'})."
    ]
    if rep.summary:
        head.append(rep.summary)
    parts.append(("", head))
    if rep.placeholders:
        parts.append(
            (
                "placeholder tokens (suggested as blank)",
                (("token", "cells"), [[t, n] for t, n in rep.placeholders]),
            )
        )
    if rep.suggestions:
        parts.append(("suggestions", (_SUG_HEADERS, _suggestion_rows(rep.suggestions))))
    best = rep.best
    if best is not None:
        if best.evidence:
            parts.append(("evidence", list(best.evidence)))
        if best.warnings:
            parts.append(("warnings", list(best.warnings)))
        if best.examples:
            parts.append(("examples", (("raw", "reads as"), [list(e) for e in best.examples])))
        if best.disagreements:
            parts.append(
                (
                    "cells where the top two readings differ",
                    (
                        ("raw", "this reading", "next reading"),
                        [list(d) for d in best.disagreements],
                    ),
                )
            )
        if best.failures:
            more = best.failed - len(best.failures)
            title = "cells not read" + (
                f" (first {len(best.failures)} of {best.failed})" if more > 0 else ""
            )
            parts.append(
                (
                    title,
                    (("row", "raw", "why"), [[f.source_row, f.raw, f.text] for f in best.failures]),
                )
            )
    return parts


def column_text(rep: ColumnReport) -> str:
    """One column's report in full: suggestions, evidence, examples and failed cells."""
    out = [f"Column {rep.column!r}"]
    for title, content in _column_parts(rep):
        if title:
            out.append(f"\n{title}:")
        if isinstance(content, list):
            out.extend(f"  {line}" for line in content)
        else:
            headers, rows = content
            out.append(text_table(headers, rows))
    return "\n".join(out)


def column_html(rep: ColumnReport) -> str:
    """One column's report in full, as HTML."""
    return _parts_html(_column_parts(rep))


# ------------------------------------------------------------------------------ replay reports


def _plain(value: Any) -> Any:
    """A report object as plain dicts/lists/scalars, whatever its class offers."""
    if hasattr(value, "to_dict") and callable(value.to_dict):
        return _plain(value.to_dict())
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: _plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, Mapping):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, list | tuple | set | frozenset):
        return [_plain(v) for v in value]
    return value


def _is_records(value: Any) -> bool:
    return (
        isinstance(value, list)
        and bool(value)
        and all(isinstance(v, dict) for v in value)
        and all(not isinstance(x, dict | list) for v in value for x in v.values())
    )


def _records_table(records: list[dict[str, Any]]) -> tuple[list[str], list[list[object]]]:
    headers: list[str] = []
    for r in records:
        headers.extend(k for k in r if k not in headers)
    return headers, [[r.get(h, "") for h in headers] for r in records]


def _label(key: str) -> str:
    return key.replace("_", " ")


def _walk_text(value: Any, indent: int, out: list[str]) -> None:
    pad = "  " * indent
    if isinstance(value, dict):
        for k, v in value.items():
            if v in (None, [], {}, ""):
                continue
            if isinstance(v, dict | list):
                out.append(f"{pad}{_label(k)}:")
                _walk_text(v, indent + 1, out)
            else:
                out.append(f"{pad}{_label(k)}: {_cut(v, 200)}")
    elif _is_records(value):
        headers, rows = _records_table(value)
        out.extend(pad + line for line in text_table(headers, rows).splitlines())
    elif isinstance(value, list):
        for v in value:
            if isinstance(v, dict | list):
                _walk_text(v, indent + 1, out)
                out.append("")
            else:
                out.append(f"{pad}- {_cut(v, 200)}")
    else:
        out.append(f"{pad}{_cut(value, 200)}")


def _walk_html(value: Any) -> str:
    esc = html.escape
    if isinstance(value, dict):
        items = []
        for k, v in value.items():
            if v in (None, [], {}, ""):
                continue
            if isinstance(v, dict | list):
                items.append(f"<li><b>{esc(_label(k))}</b>{_walk_html(v)}</li>")
            else:
                items.append(f"<li><b>{esc(_label(k))}</b>: {esc(str(v))}</li>")
        return "<ul>" + "".join(items) + "</ul>"
    if _is_records(value):
        return _html_table(*_records_table(value))
    if isinstance(value, list):
        return "<ul>" + "".join(f"<li>{_walk_html(v)}</li>" for v in value) + "</ul>"
    return esc(str(value))


def _replay_lines(report: Any) -> list[str] | None:
    """The report's own sentences, when its class offers them."""
    for name in ("lines", "sentences"):
        fn = getattr(report, name, None)
        if callable(fn):
            return [str(s) for s in fn()]
    return None


def _is_drift(report: Any) -> bool:
    cols = getattr(report, "columns", None)
    return isinstance(cols, tuple | list) and all(
        hasattr(c, "matched") and hasattr(c, "unmatched") for c in cols
    )


_DRIFT_HEADERS = ("column", "read", "read by none", "ambiguous", "blank", "by hand",
                  "new tokens", "far off")  # fmt: skip
_GROUP_HEADERS = ("shape", "cells", "examples", "first row", "the engine would now suggest")


def _drift_parts(r: Any) -> list[tuple[str, Any]]:
    """(title, sentences or (headers, rows)) pieces of a drift report, in reading order."""
    lines = _replay_lines(r) or []
    parts: list[tuple[str, Any]] = [("", lines[:2])]
    rows = [
        [c.column, c.matched, c.unmatched, c.ambiguous, c.blank, c.manual,
         sum(n for _, n in c.new_tokens), c.out_of_range]
        for c in r.columns
    ]  # fmt: skip
    if rows:
        parts.append(("date columns", (_DRIFT_HEADERS, rows)))
    for c in r.columns:
        if c.groups:
            parts.append(
                (
                    f'"{c.column}": cells no recorded pattern reads',
                    (
                        _GROUP_HEADERS,
                        [
                            [
                                g.shape,
                                g.count,
                                "; ".join(g.examples),
                                g.rows[0] if g.rows else "",
                                g.suggestion or "",
                            ]
                            for g in c.groups
                        ],
                    ),
                )
            )
        if c.new_tokens:
            parts.append(
                (
                    f'"{c.column}": new placeholder-looking tokens',
                    (("token", "cells"), [[t, n] for t, n in c.new_tokens]),
                )
            )
        if c.out_of_range:
            lo, hi = c.source_range or ("?", "?")
            parts.append(
                (
                    f'"{c.column}": {c.out_of_range} values far outside {lo[:10]} to {hi[:10]}',
                    (("row", "raw", "read as"), [list(e) for e in c.out_of_range_examples]),
                )
            )
    other = []
    for m in getattr(r, "missing", ()):
        likely = f' (likely now "{m.likely}")' if getattr(m, "likely", None) else ""
        other.append(f'Column "{m.name}" is missing{likely}.')
    if getattr(r, "added", ()):
        other.append("New columns: " + ", ".join(f'"{a}"' for a in r.added) + ".")
    if getattr(r, "moved", ()):
        other.append("Columns in another place: " + ", ".join(f'"{m}"' for m in r.moved) + ".")
    for k in getattr(r, "lost_keys", ()):
        other.append(f'Hand-set cell of step {k.step} ("{k.column}", key "{k.key}"): {k.why}.')
    other.extend(f"Note: {w}" for w in getattr(r, "warnings", ()))
    if other:
        parts.append(("structure and notes", other))
    return parts


def _parts_text(parts: list[tuple[str, Any]]) -> str:
    out: list[str] = []
    for title, content in parts:
        if title:
            out.append(f"\n{title}:")
        if isinstance(content, list):
            out.extend(content if not title else [f"  {s}" for s in content])
        else:
            out.append(text_table(*content))
    return "\n".join(out)


def _parts_html(parts: list[tuple[str, Any]]) -> str:
    out = []
    for title, content in parts:
        if title:
            out.append(f"<h4>{html.escape(title)}</h4>")
        if isinstance(content, list):
            out.append("<ul>" + "".join(f"<li>{html.escape(s)}</li>" for s in content) + "</ul>")
        else:
            out.append(_html_table(*content))
    return "".join(out)


def replay_text(report: Any) -> str:
    """A replay (drift) report as text: headline, a table of counts per date column, then the
    cells no recorded pattern reads, new tokens, far-off values and structural changes."""
    if _is_drift(report):
        return _parts_text(_drift_parts(report))
    out = ["Replay report"]
    lines = _replay_lines(report)
    if lines:
        out.extend(f"  {s}" for s in lines)
        out.append("")
    _walk_text(_plain(report), 1, out)
    return "\n".join(out).rstrip()


def replay_html(report: Any) -> str:
    """A replay (drift) report as HTML, laid out as ``replay_text``."""
    if _is_drift(report):
        return "<h3>Replay report</h3>" + _parts_html(_drift_parts(report))
    parts = ["<h3>Replay report</h3>"]
    lines = _replay_lines(report)
    if lines:
        parts.append("<ul>" + "".join(f"<li>{html.escape(s)}</li>" for s in lines) + "</ul>")
    parts.append(_walk_html(_plain(report)))
    return "".join(parts)


# ------------------------------------------------------------------------------ wrappers


class ReportsView(Sequence[ColumnReport]):
    """The column reports of one scan: a sequence (by position, or by column name with
    ``view["Joined"]``) that prints as a table in a terminal and renders as HTML in a notebook."""

    def __init__(self, reports: Sequence[ColumnReport]) -> None:
        self.reports: tuple[ColumnReport, ...] = tuple(reports)

    @overload
    def __getitem__(self, key: int | str) -> ColumnReport: ...
    @overload
    def __getitem__(self, key: slice) -> ReportsView: ...
    def __getitem__(self, key: int | str | slice) -> ColumnReport | ReportsView:
        if isinstance(key, str):
            for rep in self.reports:
                if rep.column == key:
                    return rep
            raise KeyError(f'the scan has no column "{key}"')
        if isinstance(key, slice):
            return ReportsView(self.reports[key])
        return self.reports[key]

    def __len__(self) -> int:
        return len(self.reports)

    def __iter__(self) -> Iterator[ColumnReport]:
        return iter(self.reports)

    @property
    def columns(self) -> list[str]:
        return [r.column for r in self.reports]

    def dates(self) -> ReportsView:
        """Only the columns the scan takes for date columns."""
        return ReportsView([r for r in self.reports if r.is_date])

    def detail(self, column: str) -> _Rendered:
        """One column's full report (suggestions, evidence, failed cells), text and HTML."""
        rep = self[column]
        return _Rendered(column_text(rep), column_html(rep))

    def to_frame(self) -> pd.DataFrame:
        return reports_frame(self.reports)

    def __str__(self) -> str:
        return reports_text(self.reports)

    def __repr__(self) -> str:
        return reports_text(self.reports)

    def _repr_html_(self) -> str:
        return reports_html(self.reports)


class _Rendered:
    """A piece of text with an HTML twin, for notebooks."""

    def __init__(self, text: str, html_text: str) -> None:
        self.text = text
        self.html = html_text

    def __str__(self) -> str:
        return self.text

    def __repr__(self) -> str:
        return self.text

    def _repr_html_(self) -> str:
        return self.html


class ReplayView:
    """A replay's drift report (``.report``), readable in a terminal and in a notebook; with the
    replayed table as a DataFrame in ``.frame`` when the replay produced one."""

    def __init__(self, report: Any, frame: pd.DataFrame | None = None) -> None:
        self.report = report
        self.frame = frame

    def __str__(self) -> str:
        return replay_text(self.report)

    def __repr__(self) -> str:
        return replay_text(self.report)

    def _repr_html_(self) -> str:
        return replay_html(self.report)
