"""The scan's column-wide decisions drawn from the census, and the sentences that say why:
which patterns the column uses, day/month order, the two-digit-year rule, zones.

Heuristics are marked "common practice, no source" where they are rules of thumb: the name
hints for past-event columns, the plausibility windows for numbers (in ``census.py``).
"""

from __future__ import annotations

import re

import numpy as np

from .census import (
    DIGIT_PATTERNS,
    TEXT_PATTERNS,
    Census,
    _live,
    _n,
    number_window,
)
from .clean import NAIVE
from .fields import EV_BOTH_SMALL, EV_DMY, EV_MDY
from .patterns import PATTERNS, label

__all__ = ["choose_patterns", "decide_century", "decide_day_order", "decide_zone"]

_PAST_HINT = re.compile(
    r"birth|born|\bdob\b|d\.o\.b|start|joined|\bjoin|since|hired?\b|hire|enrol|registered|"
    r"signed|issued|founded|first",
    re.I,
)
#: Column names of dates ahead: renewals, expiries, deadlines (common practice, no source).
_FUTURE_HINT = re.compile(r"due|expir|renew|deadline|valid|until|next|review|maturity", re.I)


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
            # A later round ties too: "080704" left over after YYYYMMDD is YYMMDD 2008-07-04
            # and MMDDYY 2004-08-07 alike; neither is taken silently.
            mine = plausible(best, left)
            tied = [
                q
                for q in options
                if q != best
                and weights[q]
                and (
                    mine & plausible(q, left) & (c.readings[best].value != c.readings[q].value)
                ).any()
            ]
            if tied:
                for g in (best, *tied):
                    if g not in c.rivals:
                        c.rivals.append(g)
                group = [best, *tied]
                names = ", ".join(label(p, date_system=c.facts.date_system) for p in group)
                c.notes_warn.append(
                    f"some numbers fit several readings ({names}) and nothing in the column "
                    "decides; values they read differently stay ambiguous"
                )
            # A later reading that makes sense of values an earlier one reads only
            # implausibly (121603: serial 2232-12-07, or MMDDYY 2003-12-16) competes with it
            # there: those values stay ambiguous rather than go to whichever comes first.
            # (The tie just above may already have made ``best`` a rival: ``d`` still joins.)
            mine = plausible(best, left)
            for d in digits:
                paired = d in c.rivals and best in c.rivals
                if (mine & c.readings[d].ok).any() and not paired:
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
    chosen = _year_place(c, chosen, live)
    return chosen + digits


def _year_place(c: Census, chosen: list[str], live: np.ndarray) -> list[str]:
    """Where a two-digit year stands: 24/03/15 is 24 March 2015 (year last) or 2024-03-15
    (year first). Only two-digit years written with the same separator show it, and only where
    the other place holds a number that is no day or month at all: 98/12/31 and 87-06-30 (no
    day 98, 87) are year first, 15/03/85, 31.12.98 and 2-17-84 (no day 85 or 98, no month 17)
    year last; such a value decides for the values of its form. A value the other place fails
    only by the calendar (25/04/31: no 31 April; 31/04/20) decides nothing, since a mistyped
    date looks the same. A four-digit year (13/04/2021, 1993/06/30) shows where the writer put
    *that* year, not where a two-digit one stands, and 31/12/70 says nothing of 25-01-19.
    Values left undecided stay ambiguous (issue 3 point 4), and are no evidence of the
    day/month order either: 25/04/18 is "day first" only if its year is last
    (``Census.order_blind``)."""
    firsts = [p for p in chosen if p.startswith("yymd-")]
    if not firsts:
        return chosen
    n = len(live)
    reads: dict[str, tuple[np.ndarray, np.ndarray, np.ndarray]] = {}
    l_all = np.zeros(n, bool)  # read year last (some day order), any separator
    both_all = np.zeros(n, bool)
    order = np.zeros(n, np.int8)  # the day/month order a year-last reading allows
    for p in chosen:
        if p.startswith("num-"):
            r = c.readings[p]
            m = (r.ok | r.ambiguous) & live
            l_all |= m
            order = np.where(m, r.order, order)
    for p in firsts:
        f = c.readings[p]
        f_ok = f.ok & live
        # Year first, and the year-last reading fails by a first field that is no day (00, 32+).
        f_strong = f_ok & ~_day_number(f.year)
        rival = "num-" + p.split("-")[1]
        l_any = np.zeros(n, bool)
        l_two = np.zeros(n, bool)
        l_strong = np.zeros(n, bool)
        if rival in chosen:
            r = c.readings[rival]
            l_any = (r.ok | r.ambiguous) & live
            l_two = l_any & r.two_digit
            # Year last, and the year-first reading fails by a month that is none (M/D/YY: the
            # second field is above 12) or a last field that is no day (00, 32+).
            l_strong = l_two & ((r.order == EV_MDY) | ~_day_number(r.year))
        reads[p] = (f_ok, l_any, l_two, f_strong, l_strong)
        both_all |= f_ok & l_any
    # Day/month order shown by values whose year's place is not in question.
    settled = l_all & ~both_all
    s_dmy = (settled & (order == EV_DMY)).any()
    s_mdy = (settled & (order == EV_MDY)).any()
    blind = np.zeros(n, bool)
    out = list(chosen)
    for p, (f_ok, l_any, l_two, f_strong, l_strong) in reads.items():
        rival = "num-" + p.split("-")[1]
        both = f_ok & l_any
        only_first = _n(c.weights[f_strong & ~l_any].sum())
        only_last = _n(c.weights[l_strong & ~f_ok].sum())
        first_lab, last_lab = label(p), label(rival, two_digit_year=True)
        if not f_ok.any():
            out.remove(p)
        elif only_first and not only_last:
            if rival in out and (l_any & ~l_two & ~f_ok).any():
                # Kept for four-digit years (5/7/1950), but after the year-first reading.
                out.remove(p)
                out.insert(out.index(rival), p)
                odd = _n(c.weights[l_two & ~f_ok].sum())
                if odd:
                    c.notes_warn.append(
                        f"{odd} values with a two-digit year read only year last ({last_lab}), "
                        f"against the column's {first_lab}: check them"
                    )
            elif rival in out:
                out.remove(rival)  # 25/04/31 then fails: no 31 April 2025
            blind |= f_ok
            c.notes_evidence.append(
                f"year first ({first_lab}): {only_first} values can only be read with the "
                "year first"
            )
        elif only_last and not only_first:
            # Year last, unless values that read both ways would then go against the day/month
            # order the rest of the column shows (25-08-23 beside 2-17-84): both readings of
            # them contradict something, so they stay ambiguous.
            against = both & (
                ((order == EV_DMY) & s_mdy & ~s_dmy) | ((order == EV_MDY) & s_dmy & ~s_mdy)
            )
            if not against.any():
                out.remove(p)
                c.notes_evidence.append(
                    f"year last ({last_lab}): {only_last} values can only be read with the "
                    "year last"
                )
                continue
            c.rivals.extend(q for q in (rival, p) if q not in c.rivals)
            blind |= both
            said = "month-first" if s_mdy else "day-first"
            c.notes_warn.append(
                f"two-digit years stand last ({last_lab}) in {only_last} values, but "
                f"{_n(c.weights[against].sum())} values read that way go against the column's "
                f"{said} order, and read year first ({first_lab}) against the others; they "
                "stay ambiguous"
            )
        else:
            if rival in out:
                c.rivals.extend(q for q in (rival, p) if q not in c.rivals)
            blind |= both
            c.notes_warn.append(
                f"two-digit years could stand first ({first_lab}) or last ({last_lab}) and "
                + ("the column has values of both kinds" if only_first else "no value shows which")
                + "; values the two read differently stay ambiguous"
            )
    c.order_blind = blind
    return out


def _day_number(yy: np.ndarray) -> np.ndarray:
    """Whether the two digits of a year read as a year (1969, 2031) could be a day: 01–31."""
    two = yy % 100
    return (two >= 1) & (two <= 31)


def decide_day_order(
    c: Census, patterns: list[str], prefer: str | None
) -> tuple[str | None, list[str], list[str]]:
    live = _live(c)
    # Values whose year's place is year first or undecided are no evidence of the order.
    blind = c.order_blind if c.order_blind is not None else np.zeros(len(live), bool)
    n = {EV_DMY: 0, EV_MDY: 0, EV_BOTH_SMALL: 0}
    for p in patterns:
        if not PATTERNS[p].uses_day_order:
            continue
        r = c.readings[p]
        seen = (r.ok | r.ambiguous) & live & ~blind
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
    # Whether a two-digit year stands first or last is decided in ``_year_place``.
    c.two_digit_years = two > 0
    if not two:
        return "posix", None, ["default"]
    past_hint = bool(_PAST_HINT.search(name or ""))
    if future and not past_hint and _FUTURE_HINT.search(name or ""):
        return (
            "posix",
            None,
            [
                "evidence",
                f'two-digit years: the column name "{name}" suggests dates ahead (common '
                "practice, no source), so they are read by the POSIX rule: 69–99 → 1969–1999, "
                "00–68 → 2000–2068",
            ],
        )
    if future and not past_hint:
        # 25/12/30 is 1930 for a past event and 2030 for one ahead: the values alone do not
        # say which, so those stay ambiguous; the two rules are offered as suggestions.
        c.notes_warn.append(
            f"two-digit years: {future} of {two} values fall after {ref_year} by the POSIX rule "
            f"and before it as past events; nothing says which, so they stay ambiguous until a "
            "rule is chosen"
        )
        return ("either", ref_year, ["undecided"])
    if past_hint:
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
