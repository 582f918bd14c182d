"""Replay a fix log on a new file and say what no longer fits (drift), before anything is written.

The drift report compares the new table with what the log expects: per date column, cells the
recorded patterns read, cells none reads (grouped by shape, with what the engine would suggest for
them now), new placeholder-looking tokens, values far outside the source file's range; hand-set
cells whose row is gone; and columns missing, added or moved.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Sequence

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pac

from .applylog import apply_log
from .clean import CellState, CleanTable
from .fixlog import FixLog
from .progress import Progress
from .replay_report import CellGroup, ColumnDrift, LostKey, MissingColumn, ReplayReport
from .rowkey import cells_text, find_rows, prefetch_rows
from .spec import ParseSpec
from .steps import ApplyContext, ReadDates, SetCell
from .table import RawColumn, RawTable

__all__ = [
    "CellGroup",
    "ColumnDrift",
    "LostKey",
    "MissingColumn",
    "ReplayReport",
    "drift_report",
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
    from .rowkey import key_array

    src = log.source
    key = log.key_column
    if src is None or not src.keys or key is None or key not in raw:
        return (), ()
    now = key_array(raw.column(key))
    before = pa.array(list(src.keys), pa.string())
    new = now.filter(pac.invert(pac.is_in(now, value_set=before)))
    gone = before.filter(pac.invert(pac.is_in(before, value_set=now)))
    return tuple(new.to_pylist()), tuple(gone.to_pylist())


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
    src = log.source
    known = () if src is None else src.unresolved.get(name, ())
    shapes = () if src is None else src.unresolved_shapes.get(name, ())
    groups, tokens = _groups(
        table.raw, rc, failed, pc.reason, log.blank_tokens(name), known, shapes
    )
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
    shapes_seen: Sequence[str] = (),
) -> tuple[tuple[CellGroup, ...], tuple[tuple[str, int], ...]]:
    """Unmatched cells grouped by shape (largest first), and the placeholder-looking tokens that
    are neither blank in the log nor among the source's unresolved ``known_values``."""
    if len(rows) == 0:
        return (), ()
    from .infer import scan_column

    seen = set(known_values)
    known_shapes = {shape_of(v) for v in seen} | set(shapes_seen)
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
            col = rc.take(sample)
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
    by_key: dict[str | None, list[str]] = {}
    for e in log.entries:
        if e.enabled and isinstance(e.step, SetCell):
            by_key.setdefault(e.step.key_column, []).append(e.step.key)
    for key_column, keys in by_key.items():
        prefetch_rows(raw, key_column, keys)
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
