"""The drift report of a replay: what it found, as data (JSON for ``--report``) and as sentences
for the terminal and the window's replay dialog. ``replay.py`` computes it."""

from __future__ import annotations

import dataclasses
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .clean import CleanTable
from .fixlog import FixLog
from .spec import ParseSpec

__all__ = ["CellGroup", "ColumnDrift", "LostKey", "MissingColumn", "ReplayReport"]


@dataclass(frozen=True)
class CellGroup:
    """Unmatched cells of one shape (digits → 9, letters → a), e.g. "99.99.9999"."""

    shape: str
    count: int
    examples: tuple[str, ...]
    rows: tuple[int, ...]  # 1-based source rows of the first few
    reason: str | None = None  # the engine's reason for the first of them
    suggestion: str | None = None  # label of what the engine would suggest for them now
    spec: ParseSpec | None = None
    seen_before: bool = False  # cells of this shape were unresolved in the log's source too


@dataclass(frozen=True)
class ColumnDrift:
    """How one column the log reads as dates fared."""

    column: str
    matched: int  # read by the recorded patterns
    blank: int
    manual: int
    unmatched: int  # read by none of them (or naming a day that does not exist)
    ambiguous: int
    groups: tuple[CellGroup, ...] = ()
    new_tokens: tuple[tuple[str, int], ...] = ()  # placeholder-looking, not in the log's list
    source_range: tuple[str, str] | None = None
    out_of_range: int = 0
    out_of_range_examples: tuple[tuple[int, str, str], ...] = ()  # (source row, raw, read as)

    @property
    def has_drift(self) -> bool:
        """Unmatched cells of a shape the source did not have, new tokens, or far-off values.
        (Cells left unresolved as in the source, and ambiguous cells, count in ``unresolved``.)"""
        new_groups = any(not g.seen_before for g in self.groups)
        return bool(new_groups or self.new_tokens or self.out_of_range)


@dataclass(frozen=True)
class MissingColumn:
    """A column the log knows that the new file lacks, with its likely new name."""

    name: str
    likely: str | None = None
    name_similarity: float = 0.0
    content_share: float | None = None  # share of the candidate's cells the recorded spec reads


@dataclass(frozen=True)
class LostKey:
    """A hand-set cell that could not be placed."""

    step: int  # 1-based
    column: str
    key: str
    key_column: str | None
    why: str


@dataclass(frozen=True)
class ReplayReport:
    """What replaying a log found. ``table`` is the replayed result (not in the JSON form)."""

    file: str | None = None
    sheet: str | None = None
    source_file: str | None = None
    same_file: bool | None = None  # SHA-256 equal to the log's source (None: unknown)
    rows: int = 0
    columns: tuple[ColumnDrift, ...] = ()
    missing: tuple[MissingColumn, ...] = ()
    added: tuple[str, ...] = ()
    moved: tuple[str, ...] = ()
    lost_keys: tuple[LostKey, ...] = ()
    rows_new: tuple[str, ...] = ()  # keys not in the log's source (information, not drift)
    rows_gone: tuple[str, ...] = ()  # keys of the source no longer here (information)
    warnings: tuple[str, ...] = ()
    log: FixLog | None = field(default=None, compare=False, repr=False)
    table: CleanTable | None = field(default=None, compare=False, repr=False)

    @property
    def has_drift(self) -> bool:
        """Anything the log did not expect: a structural change or a column that drifted."""
        structural = self.missing or self.added or self.moved or self.lost_keys
        return bool(structural) or any(c.has_drift for c in self.columns)

    @property
    def likely_renames(self) -> dict[str, str]:
        """Missing column → its likely new name, for ``FixLog.with_columns_renamed``."""
        return {m.name: m.likely for m in self.missing if m.likely is not None}

    @property
    def unresolved(self) -> int:
        """Cells left failed or ambiguous."""
        return sum(c.unmatched + c.ambiguous for c in self.columns)

    def column(self, name: str) -> ColumnDrift:
        for c in self.columns:
            if c.column == name:
                return c
        raise KeyError(name)

    # ---- JSON
    def to_dict(self) -> dict[str, Any]:
        d = {
            f.name: _plain(getattr(self, f.name))
            for f in dataclasses.fields(self)
            if f.name not in ("log", "table")
        }
        d["has_drift"] = self.has_drift
        d["unresolved"] = self.unresolved
        return d

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> ReplayReport:
        def groups(items: Iterable[dict[str, Any]]) -> tuple[CellGroup, ...]:
            out = []
            for g in items:
                spec = g.get("spec")
                out.append(
                    CellGroup(
                        shape=g["shape"],
                        count=g["count"],
                        examples=tuple(g.get("examples", ())),
                        rows=tuple(g.get("rows", ())),
                        reason=g.get("reason"),
                        suggestion=g.get("suggestion"),
                        spec=None if spec is None else ParseSpec.from_dict(spec),
                        seen_before=g.get("seen_before", False),
                    )
                )
            return tuple(out)

        cols = []
        for c in d.get("columns", ()):
            rng = c.get("source_range")
            cols.append(
                ColumnDrift(
                    column=c["column"],
                    matched=c["matched"],
                    blank=c["blank"],
                    manual=c["manual"],
                    unmatched=c["unmatched"],
                    ambiguous=c["ambiguous"],
                    groups=groups(c.get("groups", ())),
                    new_tokens=tuple((t, n) for t, n in c.get("new_tokens", ())),
                    source_range=None if rng is None else (rng[0], rng[1]),
                    out_of_range=c.get("out_of_range", 0),
                    out_of_range_examples=tuple(
                        (r, raw, v) for r, raw, v in c.get("out_of_range_examples", ())
                    ),
                )
            )
        return cls(
            file=d.get("file"),
            sheet=d.get("sheet"),
            source_file=d.get("source_file"),
            same_file=d.get("same_file"),
            rows=d.get("rows", 0),
            columns=tuple(cols),
            missing=tuple(MissingColumn(**m) for m in d.get("missing", ())),
            added=tuple(d.get("added", ())),
            moved=tuple(d.get("moved", ())),
            lost_keys=tuple(LostKey(**k) for k in d.get("lost_keys", ())),
            rows_new=tuple(d.get("rows_new", ())),
            rows_gone=tuple(d.get("rows_gone", ())),
            warnings=tuple(d.get("warnings", ())),
        )

    @classmethod
    def merge(cls, reports: Sequence[ReplayReport]) -> ReplayReport:
        """One report for the partitions of one dataset: counts add up, groups and tokens merge
        by shape and text, a hand-set cell is lost only if no partition placed it."""
        if not reports:
            return cls()
        by_col: dict[str, list[ColumnDrift]] = {}
        for r in reports:
            for c in r.columns:
                by_col.setdefault(c.column, []).append(c)
        lost_sets = [{(k.step, k.key) for k in r.lost_keys} for r in reports]
        lost_everywhere = set.intersection(*lost_sets) if lost_sets else set()
        lost = {}
        for r in reports:
            for k in r.lost_keys:
                if (k.step, k.key) in lost_everywhere:
                    lost.setdefault((k.step, k.key), k)
        first = reports[0]
        return cls(
            file=first.file,
            sheet=first.sheet,
            source_file=first.source_file,
            same_file=None,
            rows=sum(r.rows for r in reports),
            columns=tuple(_merge_columns(cs) for cs in by_col.values()),
            missing=_union(m for r in reports for m in r.missing),
            added=_union(a for r in reports for a in r.added),
            moved=_union(m for r in reports for m in r.moved),
            lost_keys=tuple(lost.values()),
            rows_new=_union(k for r in reports for k in r.rows_new),
            rows_gone=tuple(set.intersection(*(set(r.rows_gone) for r in reports))),
            warnings=_union(w for r in reports for w in r.warnings),
        )

    # ---- text
    def lines(self) -> list[str]:
        """Readable sentences for the terminal and the replay dialog."""
        return _lines(self)

    def __str__(self) -> str:
        return "\n".join(self.lines())


def _plain(value: Any) -> Any:
    if isinstance(value, ParseSpec):
        return value.to_dict()
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: _plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, tuple | list):
        return [_plain(v) for v in value]
    if isinstance(value, np.integer):
        return int(value)
    return value


def _union(items: Iterable[Any]) -> tuple[Any, ...]:
    out: list[Any] = []
    for x in items:
        if x not in out:
            out.append(x)
    return tuple(out)


def _merge_columns(cs: list[ColumnDrift]) -> ColumnDrift:
    groups: dict[str, CellGroup] = {}
    for c in cs:
        for g in c.groups:
            old = groups.get(g.shape)
            if old is None:
                groups[g.shape] = g
            else:
                groups[g.shape] = dataclasses.replace(
                    old,
                    count=old.count + g.count,
                    examples=_union((*old.examples, *g.examples))[:3],
                    rows=(*old.rows, *g.rows)[:5],
                )
    tokens: dict[str, int] = {}
    for c in cs:
        for t, n in c.new_tokens:
            tokens[t] = tokens.get(t, 0) + n
    return ColumnDrift(
        column=cs[0].column,
        matched=sum(c.matched for c in cs),
        blank=sum(c.blank for c in cs),
        manual=sum(c.manual for c in cs),
        unmatched=sum(c.unmatched for c in cs),
        ambiguous=sum(c.ambiguous for c in cs),
        groups=tuple(sorted(groups.values(), key=lambda g: (-g.count, g.shape))),
        new_tokens=tuple(sorted(tokens.items(), key=lambda t: (-t[1], t[0]))),
        source_range=cs[0].source_range,
        out_of_range=sum(c.out_of_range for c in cs),
        out_of_range_examples=tuple(e for c in cs for e in c.out_of_range_examples)[:5],
    )


# ------------------------------------------------------------------------------ sentences


def _lines(r: ReplayReport) -> list[str]:
    head = f"Replay on {r.file or 'the table'}"
    if r.sheet:
        head += f', sheet "{r.sheet}"'
    head += f" ({r.rows} rows)"
    if r.source_file:
        head += f"; the log was made on {r.source_file}"
        if r.same_file:
            head += " (the very same file)"
    out = [head + "."]
    out.append("Drift found: check before writing." if r.has_drift else "No drift found.")
    for m in r.missing:
        line = f'Column "{m.name}" is missing'
        if m.likely is not None:
            line += f'; likely it is now "{m.likely}" (name {m.name_similarity:.0%} alike'
            if m.content_share is not None:
                line += f", {m.content_share:.0%} of its cells read with the recorded patterns"
            line += ")"
        out.append(line + ".")
    if r.added:
        out.append("New columns: " + ", ".join(f'"{a}"' for a in r.added) + ".")
    if r.moved:
        out.append("Columns in another place: " + ", ".join(f'"{m}"' for m in r.moved) + ".")
    for c in r.columns:
        out.append(
            f'"{c.column}": {c.matched} read by the recorded patterns, {c.unmatched} read by '
            f"none, {c.ambiguous} ambiguous, {c.blank} blank, {c.manual} set by hand."
        )
        for g in c.groups:
            ex = ", ".join(f'"{e}"' for e in g.examples)
            line = f"  {g.count} cells shaped {g.shape} (e.g. {ex}; row {g.rows[0]})"
            if g.suggestion:
                line += f" — the engine would now suggest {g.suggestion}"
            if g.seen_before:
                line += " — unresolved in the log's source file too"
            out.append(line + ".")
        if c.new_tokens:
            toks = ", ".join(f'"{t}" ×{n}' for t, n in c.new_tokens)
            out.append(f"  New placeholder-looking tokens, not blank in the log: {toks}.")
        if c.out_of_range:
            lo, hi = c.source_range or ("?", "?")
            row, raw, val = c.out_of_range_examples[0]
            out.append(
                f"  {c.out_of_range} values far outside the source's range {lo[:10]} to "
                f'{hi[:10]} (e.g. row {row}: "{raw}" read as {val[:10]}).'
            )
    if r.rows_new or r.rows_gone:
        out.append(
            f"Rows by {_key_words(r)}: {len(r.rows_new)} new, {len(r.rows_gone)} gone"
            + (f" ({_few(r.rows_gone)} gone)" if r.rows_gone else "")
            + "."
        )
    for k in r.lost_keys:
        where = f"row {k.key}" if k.key_column is None else f'"{k.key_column}" = "{k.key}"'
        out.append(f'Hand-set cell of step {k.step} ("{k.column}", {where}) not placed: {k.why}.')
    for w in r.warnings:
        out.append(f"Note: {w}")
    return out


def _key_words(r: ReplayReport) -> str:
    key = r.log.key_column if r.log is not None else None
    return f'"{key}"' if key else "key"


def _few(keys: Sequence[str], n: int = 5) -> str:
    shown = ", ".join(f'"{k}"' for k in keys[:n])
    return shown + (f" and {len(keys) - n} more" if len(keys) > n else "")
