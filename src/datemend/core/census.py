"""The scan's census: a column's distinct values (a deterministic sample of them for big
columns) read with every pattern at once, the placeholders among them, and the plausible
years of number readings. Rules of thumb are marked "common practice, no source".
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .clean import CellState
from .fields import Reading, features, letters_for, read_pattern
from .names import LANGUAGES, month_languages
from .parse import (
    DATE_CELL,
    TextResult,
    _apply_zone,
    cells_and_first,
    distinct_arrow,
    distinct_texts,
    fold_texts,
    lower_case,
    normalise,
    parse_texts,
)
from .patterns import PATTERNS, pattern
from .spec import ParseSpec
from .table import CellKind, RawColumn, SourceFacts

__all__ = [
    "DIGIT_PATTERNS",
    "PLACEHOLDERS",
    "TEXT_PATTERNS",
    "Census",
    "census_of",
    "full_view",
    "number_window",
    "parse_sample",
    "placeholders_of",
    "top_by_weight",
    "unread_patterns",
]

#: Numbers that compete for digit-only values, in the order ties are broken.
DIGIT_PATTERNS = (
    "compact-ymd",
    "serial",
    "epoch-s",
    "epoch-ms",
    "compact-dmy",
    "compact-mdy",
    "iso-ordinal",
    "compact-yymmdd",
    "compact-ddmmyy",
    "compact-mmddyy",
)
TEXT_PATTERNS = tuple(p for p in PATTERNS if p not in DIGIT_PATTERNS and p != DATE_CELL)

#: Tokens exports use for "no date" (common practice, no source).
PLACEHOLDERS = frozenset(
    [
        "n/a",
        "na",
        "n.a",
        "n",
        "a",
        "n/k",
        "nk",
        "none",
        "null",
        "nil",
        "nan",
        "nat",
        "unknown",
        "unk",
        "?",
        "??",
        "???",
        "-",
        "--",
        "---",
        "—",
        "–",
        ".",
        "x",
        "xx",
        "xxx",
        "tbd",
        "tba",
        "tbc",
        "pending",
        "missing",
        "blank",
        "empty",
        "0",
        "00/00/0000",
        "0/0/0000",
        "0000-00-00",
        "00.00.0000",
        "00-00-0000",
        "00/00/00",
        "#n/a",
        "#value!",
        "#ref!",
        "not",
        "known",
        "not",
        "applicable",
        "no",
        "date",
        "inconnu",
        "unbekannt",
        "desconocido",
        "sconosciuto",
        "onbekend",
        "not known",
        "not applicable",
        "no date",
    ]
)

_DIGITS_RE = r"^-?\d+(?:\.\d*)?$"


@dataclass
class Census:
    """A column's sampled distinct values and what every pattern made of them."""

    name: str
    facts: SourceFacts
    n_rows: int
    empty: int
    texts: np.ndarray  # sampled distinct texts (object)
    weights: np.ndarray  # cells each stands for (float: scaled up when the values are sampled)
    cells: np.ndarray  # cells holding each (exact)
    rows: np.ndarray  # first row position of each
    norm: pa.Array
    digit: np.ndarray  # bool: digits only (a number)
    n_distinct: int
    text_cells: int
    dated: int
    date_examples: tuple[tuple[str, str], ...]
    other_failed: int  # time-of-day and true/false cells
    readings: dict[str, Reading]
    locales: tuple[str, ...] = ("en",)
    placeholder: np.ndarray | None = None
    blank_tokens: tuple[str, ...] = ()
    order_ambiguous: bool = False
    two_digit_years: bool = False
    aware: bool = False
    digit_alternatives: list[dict[str, str]] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    notes_evidence: list[str] = field(default_factory=list)
    notes_warn: list[str] = field(default_factory=list)
    rivals: list[str] = field(default_factory=list)
    #: Values that are no evidence of day/month order: read year first, or with the year's
    #: place undecided (see ``evidence._year_place``).
    order_blind: np.ndarray | None = None
    sample_note: str | None = None
    parsed_cache: dict = field(default_factory=dict)
    feats: dict | None = None
    ref_year: int = 2100
    arrow: pa.Array | None = None  # the texts as an Arrow array
    folded: pa.Array | None = None  # the texts trimmed and lower-cased (parse.fold_texts)
    #: cells and first cell of every distinct value of the column (not only the sampled ones)
    all_cells: np.ndarray | None = None
    all_first: np.ndarray | None = None


def census_of(column: RawColumn, facts: SourceFacts, *, sample: int) -> Census:
    """Read up to ``sample`` distinct values of ``column`` with every pattern."""
    kinds = column.kinds
    rows_t, codes, texts = distinct_texts(column)
    uniques = texts
    weights, first = cells_and_first(codes, len(uniques))
    sel = np.arange(len(uniques))
    scale = np.ones(len(uniques))
    note = None
    if len(uniques) > sample:
        # Deterministic: the most frequent half, and the rest spread evenly over the file order.
        by_weight = top_by_weight(weights, sample // 2)
        keep = np.ones(len(uniques), dtype=bool)
        keep[by_weight] = False
        rest = np.flatnonzero(keep)
        spread = rest[np.linspace(0, len(rest) - 1, sample - len(by_weight)).astype(np.int64)]
        sel = np.sort(np.concatenate([by_weight, spread]))
        # The most frequent values count as themselves; the spread ones stand for all the rest.
        scale = np.ones(len(uniques))
        scale[spread] = weights[rest].sum() / max(weights[spread].sum(), 1)
        note = (
            f"estimated from a sample of {len(sel):,} of {len(uniques):,} distinct values "
            f"({int(weights[sel].sum()):,} of {len(rows_t):,} cells)"
        )
    every = distinct_arrow(column)
    arrow = every if len(sel) == len(uniques) else every.take(pa.array(sel))
    norm = normalise(arrow)
    digit = pc.match_substring_regex(norm, _DIGITS_RE).to_numpy(zero_copy_only=False)
    spec = ParseSpec(
        patterns=tuple(p for p in PATTERNS if p != DATE_CELL),
        date_system=facts.date_system,
        locales=tuple(LANGUAGES),
    )
    feats = features(norm)
    readings = {
        pid: read_pattern(pattern(pid), norm, spec, feats, explain=False) for pid in spec.patterns
    }
    count = column.kind_counts()
    n_dated = int(count[CellKind.DATE] + count[CellKind.DATETIME])
    examples: tuple[tuple[str, str], ...] = ()
    if n_dated:
        dated_mask = (kinds == CellKind.DATE) | (kinds == CellKind.DATETIME)
        firsts = pd.unique(column.values[dated_mask][:50])[:2]
        examples = tuple((str(v), v.isoformat()) for v in firsts)
    c = Census(
        name=column.name,
        facts=facts,
        n_rows=len(column),
        empty=int(count[CellKind.EMPTY]),
        texts=texts[sel],
        weights=weights[sel] * scale[sel],
        cells=weights[sel],
        rows=rows_t[first[sel]] if len(rows_t) else first[sel],
        norm=norm,
        digit=digit,
        n_distinct=len(uniques),
        text_cells=len(rows_t),
        dated=n_dated,
        date_examples=examples,
        other_failed=int(count[CellKind.TIME] + count[CellKind.BOOL]),
        readings=readings,
        sample_note=note,
    )
    c.feats = feats
    c.arrow = arrow
    c.locales = _languages(c)
    c.all_cells, c.all_first = weights, first  # for full_view: every distinct value
    return c


def top_by_weight(weights: np.ndarray, k: int) -> np.ndarray:
    """``np.argsort(-weights, kind="stable")[:k]`` (the k heaviest, ties in order of position)
    without sorting them all: the k-th largest weight is found by partition first."""
    if k <= 0:
        return np.zeros(0, dtype=np.intp)
    if k >= len(weights):
        return np.argsort(-weights, kind="stable")
    cut = np.partition(weights, len(weights) - k)[len(weights) - k]  # the k-th largest
    above = np.flatnonzero(weights > cut)  # fewer than k
    ties = np.flatnonzero(weights == cut)[: k - len(above)]
    pick = np.concatenate([above, ties])
    return pick[np.argsort(-weights[pick], kind="stable")]


def full_view(c: Census, column: RawColumn) -> Census:
    """The census over every distinct value (no readings): for exact counts of one spec."""
    if c.sample_note is None:
        return c
    rows_t, codes, texts = distinct_texts(column)
    if c.all_cells is not None and len(c.all_cells) == len(texts):
        cells, first = c.all_cells, c.all_first
    else:
        cells, first = cells_and_first(codes, len(texts))
    arrow = distinct_arrow(column)
    lower = lower_case(arrow)
    norm = normalise(arrow, lower=lower)
    feats = features(norm)
    folded = fold_texts(arrow, lower=lower)  # kept: the full parse compares blank tokens with it
    tokens = pa.array(list(c.blank_tokens), pa.string())
    placeholder = pc.is_in(folded, value_set=tokens).to_numpy(zero_copy_only=False)
    return replace(
        c,
        texts=texts,
        arrow=arrow,
        weights=cells.astype(np.float64),
        cells=cells,
        rows=rows_t[first],
        norm=norm,
        digit=feats["digits"],
        feats=feats,
        placeholder=placeholder,
        folded=folded,
        parsed_cache={},
        sample_note=None,
        readings={},
    )


def unread_patterns(c: Census, full: Census, spec: ParseSpec) -> list[str]:
    """Text patterns that read values outside the sample which ``spec`` reads with none."""
    res = parse_sample(full, spec)
    lost = (res.state == CellState.FAILED) & (res.pattern < 0)
    if not lost.any():
        return []
    idx = np.flatnonzero(lost)
    sub = full.norm.take(pa.array(idx))
    feats = full.feats.subset(idx)
    wide = ParseSpec(patterns=TEXT_PATTERNS, date_system=spec.date_system, locales=tuple(LANGUAGES))
    return [
        p
        for p in TEXT_PATTERNS
        if p not in spec.patterns
        and read_pattern(pattern(p), sub, wide, feats, explain=False).ok.any()
    ]


def _languages(c: Census) -> tuple[str, ...]:
    """The fewest languages whose CLDR month names cover the month words of the column."""
    rows = np.zeros(len(c.texts), dtype=bool)
    for p in ("name-dmy", "name-mdy", "name-ymd", "asctime"):
        rows |= c.readings[p].ok
    if not rows.any():
        return ("en",)
    named = c.norm.filter(pa.array(rows))
    words = pc.split_pattern_regex(named, letters_for(r"[^\pL]+", named))
    w = c.weights[rows]
    where = month_languages()
    seen: list[set[str]] = []
    for ws in words.to_pylist():  # per distinct text with a month name (few)
        langs: set[str] = set()
        for word in ws:
            if word in where:
                langs |= set(where[word])
        seen.append(langs)
    chosen: list[str] = []
    left = np.array([bool(s) for s in seen])
    while left.any():
        cover = {g: np.array([g in s for s in seen]) for g in LANGUAGES}
        lang = max(LANGUAGES, key=lambda g: float(w[cover[g] & left].sum()))
        if not (cover[lang] & left).any():
            break
        chosen.append(lang)
        left &= ~cover[lang]
    return tuple(chosen) or ("en",)


_PLACEHOLDER_SET = pa.array(sorted(PLACEHOLDERS), pa.string())


def placeholders_of(c: Census) -> list[tuple[str, int]]:
    """Recurring tokens no pattern reads, suggested as blank (normalised text, cells)."""
    ok = np.zeros(len(c.texts), dtype=bool)
    for r in c.readings.values():
        ok |= r.ok | r.ambiguous
    known = pc.is_in(c.norm, value_set=_PLACEHOLDER_SET).to_numpy(zero_copy_only=False)
    has_digit = pc.match_substring_regex(c.norm, r"\d").to_numpy(zero_copy_only=False)
    length = pc.utf8_length(c.norm).to_numpy(zero_copy_only=False)
    recurring = ~has_digit & (c.cells >= 2) & (length <= 24)
    mask = ~ok & (known | recurring)
    c.placeholder = mask
    # The token is the text trimmed and case-folded, as ParseSpec.blank_tokens compares.
    counts: dict[str, int] = {}
    for t, w in zip(c.texts[mask], c.weights[mask], strict=True):
        key = str(t).strip().casefold()
        if key:
            counts[key] = counts.get(key, 0) + _n(w)
    return sorted(counts.items(), key=lambda kv: (-kv[1], kv[0]))


def _n(x: float) -> int:
    return round(float(x))


def _live(c: Census) -> np.ndarray:
    return ~c.placeholder if c.placeholder is not None else np.ones(len(c.texts), bool)


def number_window(pid: str, ref_year: int) -> tuple[int, int]:
    # Plausible years for a number read as a date (common practice, no source). Serials start
    # later so small counts and IDs (1–7305) are not taken for 1900s dates; epochs from 1975
    # so eight-digit numbers (1970–1973 as seconds) are not taken for Unix time.
    if pid == "serial":
        return (1920, ref_year + 50)
    if pid.startswith("epoch"):
        return (1975, ref_year + 50)
    return (1900, ref_year + 50)


def parse_sample(c: Census, spec: ParseSpec) -> TextResult:
    """``spec`` over the census's distinct values (zones applied), computed once per spec."""
    res = c.parsed_cache.get(spec)
    if res is None:
        texts = c.arrow if c.arrow is not None else c.texts
        # reasons are written only for the values a report shows (or a parse asks for)
        res = parse_texts(texts, spec, norm=c.norm, feats=c.feats, folded=c.folded, explain=False)
        _apply_zone(res, spec)
        c.parsed_cache[spec] = res
    return res
