"""Suggestions: one reading of a column turned into counts, the mix label, examples,
failures, warnings, disagreements with the next reading, and the column's date-likeness.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from .census import DIGIT_PATTERNS, Census, _live, _n, number_window, parse_sample
from .clean import CellState
from .parse import (
    DATE_CELL,
    TextResult,
    iso_text,
)
from .patterns import label, mix_label
from .report import CellNote, Suggestion
from .spec import ParseSpec

__all__ = ["build_suggestion", "disagreements", "likeness_of"]

#: Dates often written to mean "no date" (common practice, no source).
SENTINELS = ("1900-01-01", "1899-12-30", "1899-12-31", "1970-01-01", "9999-12-31", "0001-01-01")

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
    said = res.reason_of(bad)
    failures = tuple(
        CellNote(int(c.rows[j]), int(c.rows[j]) + start, str(c.texts[j]), str(why))
        for j, why in zip(bad, said, strict=True)
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
    res = parse_sample(c, best.spec)
    # Numbers left ambiguous by their own serial reading (a year alone, "2024") are no
    # evidence of dates: a column of them is not a date column.
    odd = (res.state == CellState.AMBIGUOUS) & c.digit & (res.pattern >= 0)
    if odd.any():
        pids = np.array(best.spec.patterns)[res.pattern[odd]]
        odd[odd] = pids == "serial"
    cover = (best.parsed + best.ambiguous - _n(c.weights[odd].sum())) / best.total
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
