"""The scan's evidence: a census of every pattern over a column's distinct values, the
column-wide decisions drawn from it, and the sentences that say why.

Heuristics here are marked "common practice, no source" where they are rules of thumb: the
plausibility windows for numbers, the name hints for past-event and non-date columns, the list
of placeholder tokens.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .clean import NAIVE, CellState
from .fields import EV_BOTH_SMALL, EV_DMY, EV_MDY, Reading, features, read_pattern
from .names import LANGUAGES, month_languages
from .parse import (
    DATE_CELL,
    TextResult,
    _apply_zone,
    distinct_texts,
    iso_text,
    normalise,
    parse_texts,
)
from .patterns import PATTERNS, label, mix_label, pattern
from .report import CellNote, Suggestion
from .spec import ParseSpec
from .table import CellKind, RawColumn, SourceFacts

__all__ = [
    "DIGIT_PATTERNS",
    "Census",
    "build_suggestion",
    "census_of",
    "disagreements",
    "full_view",
    "likeness_of",
    "number_window",
    "parse_sample",
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
#: Dates often written to mean "no date" (common practice, no source).
SENTINELS = ("1900-01-01", "1899-12-30", "1899-12-31", "1970-01-01", "9999-12-31", "0001-01-01")

_PAST_HINT = re.compile(
    r"birth|born|\bdob\b|d\.o\.b|start|joined|\bjoin|since|hired?\b|hire|enrol|registered|"
    r"signed|issued|founded|first",
    re.I,
)
_DATE_HINT = re.compile(
    r"date|time|\bday\b|\bdob\b|born|birth|joined|start|\bend\b|created|updated|modified|when|"
    r"since|expir|\bdue\b|stamp|\bat$|_at\b|\bon$|_on\b|datum|fecha|data",
    re.I,
)
_NOT_DATE_HINT = re.compile(
    r"\bid\b|_id\b|\bids?$|number|\bno\b|\bnum|#|code|amount|price|total|qty|quantity|count|"
    r"salary|wage|pay|phone|zip|postcode|postal|score|\bage\b|weight|height|fee|balance|cost|"
    r"sum|value|rank|index|seq|member",
    re.I,
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
    sample_note: str | None = None
    parsed_cache: dict = field(default_factory=dict)
    feats: dict | None = None
    ref_year: int = 2100
    arrow: pa.Array | None = None  # the texts as an Arrow array


def census_of(column: RawColumn, facts: SourceFacts, *, sample: int) -> Census:
    """Read up to ``sample`` distinct values of ``column`` with every pattern."""
    kinds = column.kinds
    rows_t, codes, texts = distinct_texts(column)
    uniques = texts
    weights = np.bincount(codes, minlength=len(uniques)).astype(np.int64)
    first = np.full(len(uniques), -1, dtype=np.int64)
    first[codes[::-1]] = np.arange(len(codes))[::-1]
    sel = np.arange(len(uniques))
    scale = np.ones(len(uniques))
    note = None
    if len(uniques) > sample:
        # Deterministic: the most frequent half, and the rest spread evenly over the file order.
        by_weight = np.argsort(-weights, kind="stable")[: sample // 2]
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
    arrow = pa.array(texts[sel], type=pa.string())
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
    dated_mask = (kinds == CellKind.DATE) | (kinds == CellKind.DATETIME)
    examples = tuple((str(v), v.isoformat()) for v in pd.unique(column.values[dated_mask][:50])[:2])
    c = Census(
        name=column.name,
        facts=facts,
        n_rows=len(column),
        empty=int((kinds == CellKind.EMPTY).sum()),
        texts=texts[sel],
        weights=weights[sel] * scale[sel],
        cells=weights[sel],
        rows=rows_t[first[sel]] if len(rows_t) else first[sel],
        norm=norm,
        digit=digit,
        n_distinct=len(uniques),
        text_cells=len(rows_t),
        dated=int(dated_mask.sum()),
        date_examples=examples,
        other_failed=int(np.isin(kinds, (CellKind.TIME, CellKind.BOOL)).sum()),
        readings=readings,
        sample_note=note,
    )
    c.feats = feats
    c.arrow = arrow
    c.locales = _languages(c)
    return c


def full_view(c: Census, column: RawColumn) -> Census:
    """The census over every distinct value (no readings): for exact counts of one spec."""
    if c.sample_note is None:
        return c
    rows_t, codes, texts = distinct_texts(column)
    cells = np.bincount(codes, minlength=len(texts)).astype(np.int64)
    first = np.full(len(texts), -1, dtype=np.int64)
    first[codes[::-1]] = np.arange(len(codes))[::-1]
    arrow = pa.array(texts, type=pa.string())
    norm = normalise(arrow)
    feats = features(norm)
    tokens = pa.array(list(c.blank_tokens), pa.string())
    folded = pc.utf8_trim_whitespace(pc.utf8_lower(arrow))
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
    words = pc.split_pattern_regex(c.norm.filter(pa.array(rows)), r"[^\pL]+")
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


def placeholders_of(c: Census) -> list[tuple[str, int]]:
    """Recurring tokens no pattern reads, suggested as blank (normalised text, cells)."""
    ok = np.zeros(len(c.texts), dtype=bool)
    for r in c.readings.values():
        ok |= r.ok | r.ambiguous
    norm = np.asarray(c.norm.to_numpy(zero_copy_only=False), dtype=object)
    known = np.isin(norm, list(PLACEHOLDERS))
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


def choose_patterns(c: Census, ref_year: int) -> list[str]:
    """Patterns the column uses: text shapes that occur, then the number readings that make
    plausible dates, in the order they were chosen (that order is their priority). Number
    readings that tie (every value fits YYMMDD and DDMMYY alike) become ``c.rivals``."""
    live = _live(c)
    chosen = [p for p in TEXT_PATTERNS if (c.readings[p].matched & live & ~c.digit).any()]
    # Digit patterns with a text form too: "1985-102", "19850412T101530Z".
    chosen += [p for p in DIGIT_PATTERNS if (c.readings[p].matched & live & ~c.digit).any()]
    left = live & c.digit
    digits: list[str] = []
    total = _n(c.weights[left].sum())

    def plausible(p: str, rows: np.ndarray) -> np.ndarray:
        r = c.readings[p]
        lo, hi = number_window(p, ref_year)
        return r.ok & rows & (r.year >= lo) & (r.year <= hi)

    while left.any() and len(digits) < 3:
        options = [p for p in DIGIT_PATTERNS if p not in digits and p not in chosen]
        weights = {p: _n(c.weights[plausible(p, left)].sum()) for p in options}
        best = max(options, key=lambda p: weights[p], default=None)
        if best is None or weights[best] == 0 or (digits and weights[best] < 0.01 * total):
            break
        if not digits:
            mine = plausible(best, left)
            for q in options:
                if q == best or weights[q] == 0:
                    continue
                theirs = plausible(q, left)
                r, rq = c.readings[best], c.readings[q]
                differ = (mine & theirs & (r.value != rq.value)).any()
                if not differ:
                    continue
                if not (theirs & ~mine).any() and (mine & ~theirs).any():
                    # q reads a subset of what best reads: the values outside decide.
                    c.digit_alternatives.append({best: q})
                    c.notes_evidence.append(
                        f"numbers read as {label(best, date_system=c.facts.date_system)}: "
                        f"{_n(c.weights[mine & ~theirs].sum())} values fit only that reading"
                        f" and not {label(q, date_system=c.facts.date_system)}"
                    )
                else:
                    c.rivals.append(q)
            if c.rivals:
                c.rivals.insert(0, best)
                names = ", ".join(label(p, date_system=c.facts.date_system) for p in c.rivals)
                c.notes_warn.append(
                    f"the numbers fit several readings ({names}) and nothing in the column "
                    "decides; values they read differently stay ambiguous"
                )
        group = c.rivals if (not digits and c.rivals) else [best]
        if digits:
            # A later reading that makes sense of values an earlier one reads only
            # implausibly (121603: serial 2232-12-07, or MMDDYY 2003-12-16) competes with it
            # there: those values stay ambiguous rather than go to whichever comes first.
            mine = plausible(best, left)
            for d in digits:
                if (mine & c.readings[d].ok).any() and best not in c.rivals:
                    for g in (d, best):
                        if g not in c.rivals:
                            c.rivals.append(g)
                    n = _n(c.weights[mine & c.readings[d].ok].sum())
                    c.notes_warn.append(
                        f"{n} numbers fit both {label(d, date_system=c.facts.date_system)} and "
                        f"{label(best, date_system=c.facts.date_system)}; where the two give "
                        "different dates they stay ambiguous"
                    )
        digits.extend(group)
        for g in group:
            left &= ~plausible(g, left)
    if not digits and (c.digit & live).any():
        # Numbers but none plausible: keep the serial reading so each one gets a reason.
        digits.append("serial")
    return chosen + digits


def decide_day_order(
    c: Census, patterns: list[str], prefer: str | None
) -> tuple[str | None, list[str], list[str]]:
    live = _live(c)
    n = {EV_DMY: 0, EV_MDY: 0, EV_BOTH_SMALL: 0}
    for p in patterns:
        if not PATTERNS[p].uses_day_order:
            continue
        r = c.readings[p]
        seen = (r.ok | r.ambiguous) & live
        for code in n:
            n[code] += _n(c.weights[seen & (r.order == code)].sum())
    dmy, mdy, both = n[EV_DMY], n[EV_MDY], n[EV_BOTH_SMALL]
    c.order_ambiguous = both > 0
    fit = f"; {both} values fit either order and are read the same way" if both else ""
    if dmy and not mdy:
        return (
            "dmy",
            [
                "evidence",
                f"day before month: {dmy} values have a first field above 12; none contradict{fit}",
            ],
            [],
        )
    if mdy and not dmy:
        return (
            "mdy",
            [
                "evidence",
                f"month before day: {mdy} values have a second field above 12; "
                f"none contradict{fit}",
            ],
            [],
        )
    if dmy and mdy:
        warn = (
            f"the column mixes day/month orders: {dmy} values can only be day-first and {mdy} "
            f"only month-first; each of those is read by itself"
            + (f", and the {both} values that fit both stay ambiguous" if both else "")
        )
        return None, ["undecided", "day/month order conflicts within the column"], [warn]
    if not both:
        return None, ["default"], []
    if prefer:
        said = "day" if prefer == "dmy" else "month"
        return (
            prefer,
            [
                "preference",
                f"no value decides the day/month order ({both} values fit both); read {said} first "
                "as you prefer: a preference, not evidence",
            ],
            [],
        )
    return (
        None,
        ["undecided"],
        [
            f"{both} values fit both day-first and month-first and nothing in the column decides; "
            "they stay ambiguous until an order is chosen"
        ],
    )


def _effective(c: Census, patterns: list[str]) -> dict[str, np.ndarray]:
    """For each pattern, the values it is the one to read (the first in order that reads it)."""
    taken = ~_live(c)
    out = {}
    for p in patterns:
        r = c.readings[p]
        mine = (r.ok | r.ambiguous) & ~taken
        out[p] = mine
        taken = taken | mine
    return out


def decide_century(
    c: Census, patterns: list[str], name: str, ref_year: int
) -> tuple[str, int | None, list[str]]:
    two = 0
    future = 0
    short_last = 0
    any_big_last = False
    for p, mine in _effective(c, patterns).items():
        r = c.readings[p]
        m = mine & r.two_digit
        two += _n(c.weights[m].sum())
        future += _n(c.weights[m & (r.year > ref_year)].sum())
        if PATTERNS[p].uses_day_order:
            short_last += _n(c.weights[m].sum())
            any_big_last |= bool((m & (r.year % 100 > 31)).any())
    if short_last and not any_big_last:
        # 15/03/24 is 15 March 2024 read year last, or 2015-03-24 read year first; the year
        # is taken to be last (common practice, no source), and the user is told.
        c.notes_warn.append(
            f"{short_last} dates with a two-digit year could also be read year first "
            "(YY/MM/DD); no last field above 31 shows the year is last, which is assumed"
        )
    c.two_digit_years = two > 0
    if not two:
        return "posix", None, ["default"]
    if future:
        return (
            "past",
            ref_year,
            [
                "evidence",
                f"two-digit years: by the POSIX rule {future} of {two} values would fall after "
                f"{ref_year}; read as past events, each year is the latest not after {ref_year} "
                "ending in those digits",
            ],
        )
    if _PAST_HINT.search(name or ""):
        return (
            "past",
            ref_year,
            [
                "evidence",
                f'two-digit years: the column name "{name}" suggests past events (common practice, '
                f"no source), so each year is the latest not after {ref_year} "
                "ending in those digits",
            ],
        )
    return (
        "posix",
        None,
        [
            "default",
            f"two-digit years ({two} values) read by the POSIX rule: 69–99 → 1969–1999, "
            "00–68 → 2000–2068",
        ],
    )


def decide_zone(c: Census, patterns: list[str]) -> list[str]:
    aware = naive = 0
    for p, m in _effective(c, patterns).items():
        r = c.readings[p]
        m = m & r.ok
        aware += _n(c.weights[m & (r.offset != NAIVE)].sum())
        naive += _n(c.weights[m & (r.offset == NAIVE)].sum())
    naive += c.dated
    c.aware = aware > 0
    if aware and naive:
        return [
            f"{aware} values carry a UTC offset and {naive} do not: the column mixes aware and "
            "naive times; offsets are kept as written and naive values stay naive"
        ]
    return []


def parse_sample(c: Census, spec: ParseSpec) -> TextResult:
    """``spec`` over the census's distinct values (zones applied), computed once per spec."""
    res = c.parsed_cache.get(spec)
    if res is None:
        texts = c.arrow if c.arrow is not None else c.texts
        res = parse_texts(texts, spec, norm=c.norm, feats=c.feats)
        _apply_zone(res, spec)
        c.parsed_cache[spec] = res
    return res


def build_suggestion(
    c: Census,
    spec: ParseSpec,
    factor: float,
    decisions: dict[str, str],
    evidence: list[str],
    warnings: list[str],
) -> Suggestion:
    res = parse_sample(c, spec)
    w = c.weights
    parsed_m = res.state == CellState.PARSED
    parsed = _n(w[parsed_m].sum()) + c.dated
    failed = _n(w[res.state == CellState.FAILED].sum()) + c.other_failed
    amb = _n(w[res.state == CellState.AMBIGUOUS].sum())
    total = parsed + failed + amb
    mix: list[tuple[str, str, int]] = []
    examples: list[tuple[str, str]] = []
    for k, pid in enumerate(spec.patterns):
        m = parsed_m & (res.pattern == k)
        cnt = _n(w[m].sum())
        if not cnt:
            continue
        two = _n(w[m & res.two_digit].sum()) * 2 > cnt
        lab = label(pid, day_order=spec.day_order, date_system=spec.date_system, two_digit_year=two)
        mix.append((pid, lab, cnt))
        j = np.flatnonzero(m)[:1]
        examples.append((str(c.texts[j[0]]), str(iso_text(*_at(res, j))[0])))
    if c.dated:
        mix.append((DATE_CELL, label(DATE_CELL), c.dated))
        examples.extend(c.date_examples[:1])
    mix.sort(key=lambda t: -t[2])
    text = mix_label([(lab, cnt) for _, lab, cnt in mix]) if mix else "no dates read"
    bad = np.flatnonzero((res.state == CellState.FAILED) | (res.state == CellState.AMBIGUOUS))
    bad = bad[np.argsort(c.rows[bad], kind="stable")][:20]
    start = c.facts.header_row + 1
    failures = tuple(
        CellNote(int(c.rows[j]), int(c.rows[j]) + start, str(c.texts[j]), str(res.reason[j]))
        for j in bad
    )
    ev = list(evidence)
    if c.sample_note:
        ev.append(c.sample_note)
    if c.blank_tokens:
        ev.append("treated as blank: " + ", ".join(f'"{t}"' for t in c.blank_tokens))
    warn = list(warnings)
    for s in SENTINELS:
        hits = _n(w[parsed_m & (res.value == np.datetime64(s, "us"))].sum())
        if hits:
            warn.append(
                f"{hits} values are {s}, a date often written to mean 'no date'; kept as dates"
            )
    warn += _implausible_numbers(c, spec, res, parsed_m)
    coverage = parsed / total if total else 0.0
    return Suggestion(
        spec=spec,
        label=text,
        score=round(coverage * factor, 6),
        parsed=parsed,
        total=total,
        mix=tuple(mix),
        examples=tuple(examples[:5]),
        evidence=tuple(ev),
        warnings=tuple(warn),
        decisions=decisions,
        failures=failures,
        failed=failed,
        ambiguous=amb,
    )


def _implausible_numbers(c: Census, spec: ParseSpec, res: TextResult, parsed: np.ndarray) -> list:
    """A sentence per number reading whose dates fall outside the plausible years: they are
    read (the spec says so) but the user should look (common practice, no source)."""
    out = []
    years = res.value.astype("datetime64[Y]").astype(np.int64) + 1970
    for k, pid in enumerate(spec.patterns):
        if pid not in DIGIT_PATTERNS:
            continue
        lo, hi = number_window(pid, c.ref_year)
        odd = parsed & (res.pattern == k) & c.digit & ((years < lo) | (years > hi))
        if odd.any():
            j = np.flatnonzero(odd)[0]
            example = f"{c.texts[j]} → {iso_text(*_at(res, np.array([j])))[0]}"
            lab = label(pid, date_system=spec.date_system)
            out.append(
                f"{_n(c.weights[odd].sum())} numbers read as {lab} give dates outside "
                f"{lo}–{hi} (e.g. {example}); check them"
            )
    return out


def _at(res, j: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    return res.value[j], res.offset[j], res.has_time[j]


def disagreements(c: Census, a: ParseSpec, b: ParseSpec) -> tuple[tuple[str, str, str], ...]:
    """Values the two readings turn into different dates (or one reads and the other not)."""
    ra, rb = parse_sample(c, a), parse_sample(c, b)
    pa_, pb_ = ra.state == CellState.PARSED, rb.state == CellState.PARSED
    va = np.where(pa_, ra.value, np.datetime64("NaT"))
    vb = np.where(pb_, rb.value, np.datetime64("NaT"))
    same = (pa_ == pb_) & ((~pa_) | ((va == vb) & (ra.offset == rb.offset)))
    diff = np.flatnonzero(~same & _live(c))
    diff = diff[np.argsort(-c.weights[diff], kind="stable")][:10]
    ia = np.where(pa_[diff], iso_text(*_at(ra, diff)), "unresolved")
    ib = np.where(pb_[diff], iso_text(*_at(rb, diff)), "unresolved")
    return tuple((str(c.texts[j]), str(x), str(y)) for j, x, y in zip(diff, ia, ib, strict=True))


def likeness_of(c: Census, best: Suggestion, name: str, ref_year: int) -> float:
    """0..1: the share of cells the best reading resolves, discounted when the column is only
    numbers (an ID or amount column reads as serials too easily)."""
    if not best.total:
        return 0.0
    cover = (best.parsed + best.ambiguous) / best.total
    res = parse_sample(c, best.spec)
    parsed = res.state == CellState.PARSED
    w = c.weights
    num_w = _n(w[parsed & c.digit].sum())
    share = num_w / (best.parsed or 1)
    if share < 0.05:
        return round(cover, 4)
    if _NOT_DATE_HINT.search(name or "") and not _DATE_HINT.search(name or ""):
        factor = 0.1
    elif _DATE_HINT.search(name or ""):
        factor = 1.0
    else:
        years = res.value[parsed & c.digit].astype("datetime64[Y]").astype(np.int64) + 1970
        pids = np.array((*best.spec.patterns, ""))[res.pattern[parsed & c.digit]]
        lo = np.where(
            pids == "serial", 1920, np.where(np.char.startswith(pids, "epoch"), 1975, 1900)
        )
        ok = (years >= lo) & (years <= ref_year + 50)
        ww = w[parsed & c.digit]
        plausible = float(ww[ok].sum() / ww.sum()) if ww.sum() else 0.0
        factor = 0.7 * plausible * (0.3 if _id_like(c) else 1.0)
    return round(cover * (1 - share + share * factor), 4)


def _id_like(c: Census) -> bool:
    """Distinct whole numbers filling a dense range: row numbers or member numbers
    (common practice, no source)."""
    m = c.digit & _live(c)
    if m.sum() < 20 or (c.cells[m] > 1).any():
        return False
    vals = pd.to_numeric(pd.Series(c.texts[m]), errors="coerce").to_numpy()
    if np.isnan(vals).any() or (vals != np.round(vals)).any():
        return False
    span = vals.max() - vals.min() + 1
    return bool(span <= 1.5 * len(vals))
