"""Replay a fix log on a new file and say what no longer fits (drift), before anything is written.

The drift report compares the new table with what the log expects: per date column, cells the
recorded patterns read, cells none reads (grouped by shape, with what the engine would suggest for
them now), new placeholder-looking tokens, values far outside the source file's range; hand-set
cells whose row is gone; and columns missing, added or moved.
"""

from __future__ import annotations

import dataclasses
import difflib
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from .applylog import apply_log
from .clean import CellState, CleanTable
from .fixlog import FixLog
from .progress import Progress
from .rowkey import cells_text, find_rows
from .spec import ParseSpec
from .steps import ApplyContext, ReadDates, SetCell
from .table import RawColumn, RawTable

__all__ = [
    "CellGroup",
    "ColumnDrift",
    "LostKey",
    "MissingColumn",
    "ReplayReport",
    "replay",
    "shape_of",
]

#: Groups of unmatched cells listed per column; the rest are counted together.
MAX_GROUPS = 12
#: Cells of one group the engine scans for a suggestion.
SCAN_SAMPLE = 500
#: Shortest distance outside the source's range that counts as "far" (common practice, no source).
MIN_MARGIN = np.timedelta64(366, "D")
#: Share of the source range's span added on each side before a value counts as "far"
#: (common practice, no source).
SPAN_SHARE = 0.25
#: Tokens that often stand for "no date" in exports (common practice, no source).
COMMON_TOKENS = frozenset(
    {
        "n/a", "na", "n.a.", "none", "null", "nil", "unknown", "unk", "tbc", "tbd", "tba",
        "-", "--", "---", "?", "??", "x", "n/k", "nk", "missing", "pending", "not known",
        "no date",
    }
)  # fmt: skip


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


# ------------------------------------------------------------------------------- shapes

_LETTER = re.compile(r"[^\W\d_]")
_DIGIT = re.compile(r"\d")
_SPACE = re.compile(r"\s+")


def shape_of(text: str) -> str:
    """A value's shape: digits → 9, letters → a, runs of space → one space (at most 40 chars)."""
    s = _SPACE.sub(" ", _DIGIT.sub("9", _LETTER.sub("a", text.strip())))
    return s if len(s) <= 40 else s[:39] + "…"


def _is_placeholder(token: str, count: int) -> bool:
    """Looks like a stand-in for "no date": a known token, a recurring digit-free token, or a
    date written with zeros only ("00/00/0000"). Common practice, no source."""
    folded = token.casefold()
    if folded in COMMON_TOKENS:
        return True
    digits = _DIGIT.findall(token)
    if not digits:
        return count >= 2 and len(token) <= 15
    return set(digits) == {"0"} and len(token) <= 12


# ----------------------------------------------------------------------------- the drift


def replay(
    log: FixLog,
    raw: RawTable,
    ctx: ApplyContext | None = None,
    progress: Progress | None = None,
) -> ReplayReport:
    """Apply ``log`` to ``raw`` and report the drift; the result is in ``report.table``."""
    table = apply_log(log, raw, ctx, progress)
    return drift_report(log, table)


def drift_report(log: FixLog, table: CleanTable) -> ReplayReport:
    """The drift of a table the log was just applied to (see ``replay``)."""
    raw = table.raw
    src = log.source
    read_cols = _read_columns(log)
    missing, added, moved = _structure(log, raw, read_cols)
    columns = []
    for name in read_cols:
        if name in raw and name in table.parsed:
            rng = None if src is None else src.ranges.get(name)
            columns.append(_column_drift(log, table, name, rng))
    new_rows, gone_rows = _row_changes(log, raw)
    same = None
    if src is not None and src.sha256 and raw.facts.sha256:
        same = src.sha256 == raw.facts.sha256
    return ReplayReport(
        file=raw.facts.file_name,
        sheet=raw.facts.sheet,
        source_file=None if src is None else src.file_name,
        same_file=same,
        rows=raw.n_rows,
        columns=tuple(columns),
        missing=missing,
        added=added,
        moved=moved,
        lost_keys=_lost_keys(log, raw),
        rows_new=new_rows,
        rows_gone=gone_rows,
        warnings=table.warnings,
        log=log,
        table=table,
    )


def _row_changes(log: FixLog, raw: RawTable) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """Keys new since the log's source and keys gone, when the log kept its source's keys."""
    from .rowkey import key_text

    src = log.source
    key = log.key_column
    if src is None or not src.keys or key is None or key not in raw:
        return (), ()
    now = [str(k) for k in key_text(raw.column(key))]
    before = set(src.keys)
    here = set(now)
    return (
        tuple(k for k in now if k not in before),
        tuple(k for k in src.keys if k not in here),
    )


def _read_columns(log: FixLog) -> dict[str, ParseSpec]:
    """Source columns the log reads as dates, with the spec of the last read-dates step."""
    out: dict[str, ParseSpec] = {}
    for s in log.steps:
        if isinstance(s, ReadDates):
            out[s.column] = s.spec
    return out


def _structure(
    log: FixLog, raw: RawTable, read_cols: dict[str, ParseSpec]
) -> tuple[tuple[MissingColumn, ...], tuple[str, ...], tuple[str, ...]]:
    """(missing, added, moved) columns against the log's source facts and the columns it uses."""
    new = raw.names
    old = list(log.source.columns) if log.source is not None else []
    used: list[str] = []
    for s in log.steps:
        for c in s.columns_read():
            if c not in used:
                used.append(c)
    gone = [c for c in old if c not in new]
    gone += [c for c in used if c not in new and c not in gone and c not in _outputs(log)]
    added = [c for c in new if c not in old] if old else []
    common_old = [c for c in old if c in new]
    common_new = [c for c in new if c in old]
    matcher = difflib.SequenceMatcher(None, common_old, common_new, autojunk=False)
    in_order = {common_old[b.a + i] for b in matcher.get_matching_blocks() for i in range(b.size)}
    moved = tuple(c for c in common_new if c not in in_order)
    pool = added or [c for c in new if c not in used]
    missing = _likely_matches(gone, pool, raw, read_cols)
    return missing, tuple(added), moved


def _outputs(log: FixLog) -> set[str]:
    """Names steps create (renamed outputs, derived columns), which a later step may read."""
    names: set[str] = set()
    for s in log.steps:
        for attr in ("name", "output", "output_name"):
            v = getattr(s, attr, None)
            if isinstance(v, str):
                names.add(v)
    return names


def _likely_matches(
    gone: list[str], pool: list[str], raw: RawTable, read_cols: dict[str, ParseSpec]
) -> tuple[MissingColumn, ...]:
    """Pair each missing column with the best unused candidate by name and content."""
    from .parse import parse_column

    scored: list[tuple[float, str, str, float, float | None]] = []
    for g in gone:
        for cand in pool:
            name_sim = difflib.SequenceMatcher(None, g.casefold(), cand.casefold()).ratio()
            share = None
            if g in read_cols:
                pc = parse_column(raw.column(cand), read_cols[g], raw.facts)
                counts = pc.counts()
                filled = len(pc) - counts["blank"]
                share = counts["parsed"] / filled if filled else 0.0
            # content weighs double: a date column read by the recorded patterns is strong
            # evidence, a similar header weaker (common practice, no source)
            score = name_sim if share is None else (name_sim + 2 * share) / 3
            scored.append((score, g, cand, name_sim, share))
    scored.sort(key=lambda t: (-t[0], t[1], t[2]))
    taken: set[str] = set()
    best: dict[str, MissingColumn] = {}
    for score, g, cand, name_sim, share in scored:
        if g in best or cand in taken or score < 0.5:
            continue
        best[g] = MissingColumn(g, cand, round(name_sim, 3), None if share is None else share)
        taken.add(cand)
    return tuple(best.get(g, MissingColumn(g)) for g in gone)


def _column_drift(
    log: FixLog, table: CleanTable, name: str, rng: tuple[str, str] | None
) -> ColumnDrift:
    pc = table.parsed[name]
    rc = table.raw.column(name)
    counts = pc.counts()
    failed = np.flatnonzero(pc.state == CellState.FAILED)
    known = () if log.source is None else log.source.unresolved.get(name, ())
    groups, tokens = _groups(table.raw, rc, failed, pc.reason, log.blank_tokens(name), known)
    out_n, out_ex = 0, ()
    if rng is not None:
        out_n, out_ex = _out_of_range(table.raw, rc, pc.value, pc.state, rng)
    return ColumnDrift(
        column=name,
        matched=counts["parsed"],
        blank=counts["blank"],
        manual=counts["manual"],
        unmatched=counts["failed"],
        ambiguous=counts["ambiguous"],
        groups=groups,
        new_tokens=tokens,
        source_range=rng,
        out_of_range=out_n,
        out_of_range_examples=out_ex,
    )


def _groups(
    raw: RawTable,
    rc: RawColumn,
    rows: np.ndarray,
    reasons: np.ndarray,
    known_tokens: set[str],
    known_values: Sequence[str] = (),
) -> tuple[tuple[CellGroup, ...], tuple[tuple[str, int], ...]]:
    """Unmatched cells grouped by shape (largest first), and the placeholder-looking tokens that
    are neither blank in the log nor among the source's unresolved ``known_values``."""
    if len(rows) == 0:
        return (), ()
    from .infer import scan_column

    seen = set(known_values)
    known_shapes = {shape_of(v) for v in seen}
    text = cells_text(rc, rows)
    codes, uniques = pd.factorize(text)
    u_counts = np.bincount(codes, minlength=len(uniques))
    u_shapes = np.array([shape_of(u) for u in uniques], dtype=object)
    tokens = sorted(
        (
            (str(u), int(n))
            for u, n in zip(uniques, u_counts)
            if _is_placeholder(str(u), int(n))
            and str(u).casefold() not in known_tokens
            and str(u) not in seen
        ),
        key=lambda t: (-t[1], t[0]),
    )
    token_set = {t for t, _ in tokens}
    shapes = u_shapes[codes]
    order = pd.Series(shapes).value_counts(sort=False)
    ranked = sorted(order.items(), key=lambda kv: (-kv[1], kv[0]))[:MAX_GROUPS]
    assert raw.source_rows is not None
    out = []
    for shape, count in ranked:
        in_group = np.flatnonzero(shapes == shape)
        pos = rows[in_group]
        examples = tuple(dict.fromkeys(text.iloc[in_group[:50]]))[:3]
        suggestion, spec = None, None
        if not all(e in token_set for e in examples):
            sample = pos[:SCAN_SAMPLE]
            col = RawColumn(rc.name, rc.values[sample], rc.kinds[sample])
            best = scan_column(col, raw.facts).best
            if best is not None and best.parsed:
                suggestion, spec = best.label, best.spec
        reason = reasons[pos[0]]
        out.append(
            CellGroup(
                shape=str(shape),
                count=int(count),
                examples=tuple(str(e) for e in examples),
                rows=tuple(int(r) for r in raw.source_rows[pos[:5]]),
                reason=None if reason is None else str(reason),
                suggestion=suggestion,
                spec=spec,
                seen_before=str(shape) in known_shapes,
            )
        )
    return tuple(out), tuple(tokens)


def _out_of_range(
    raw: RawTable,
    rc: RawColumn,
    values: np.ndarray,
    state: np.ndarray,
    rng: tuple[str, str],
) -> tuple[int, tuple[tuple[int, str, str], ...]]:
    lo, hi = np.datetime64(rng[0], "us"), np.datetime64(rng[1], "us")
    span = hi - lo
    margin = max(MIN_MARGIN.astype("timedelta64[us]"), (span * SPAN_SHARE).astype("m8[us]"))
    ok = (state == CellState.PARSED) & ~np.isnat(values)
    far = ok & ((values < lo - margin) | (values > hi + margin))
    idx = np.flatnonzero(far)
    assert raw.source_rows is not None
    text = cells_text(rc, idx[:5])
    examples = tuple(
        (
            int(raw.source_rows[i]),
            str(text.iat[k]),
            str(np.datetime_as_string(values[i], unit="s")),
        )
        for k, i in enumerate(idx[:5])
    )
    return len(idx), examples


def _lost_keys(log: FixLog, raw: RawTable) -> tuple[LostKey, ...]:
    out = []
    for i, e in enumerate(log.entries, start=1):
        s = e.step
        if not e.enabled or not isinstance(s, SetCell):
            continue
        why = None
        if s.column not in raw:
            why = f'column "{s.column}" is gone'
        elif s.key_column is not None and s.key_column not in raw:
            why = f'key column "{s.key_column}" is gone'
        else:
            rows = find_rows(raw, s.key_column, s.key)
            if len(rows) == 0:
                why = "no row has this key"
            elif len(rows) > 1:
                why = f"{len(rows)} rows have this key"
            elif s.raw is not None:
                now = str(cells_text(raw.column(s.column), rows[:1]).iat[0])
                if now != s.raw.strip():
                    why = f'its raw value changed from "{s.raw}" to "{now}"'
        if why is not None:
            out.append(LostKey(i, s.column, s.key, s.key_column, why))
    return tuple(out)


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
