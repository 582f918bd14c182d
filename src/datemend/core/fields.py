"""Reading one pattern over many normalised texts: fields out by regex, checked with numpy.

Every check is done here on integer arrays (days in month, leap years, hour ranges, leap
seconds) before any datetime64 value is built, because fast C-level parsers roll impossible
dates over (30 February → 1 March) without a word. Nothing loops per value in Python except
the building of reason sentences for the values that fail.
"""

from __future__ import annotations

import re
import threading
from dataclasses import dataclass
from functools import lru_cache
from typing import ClassVar

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .clean import NAIVE
from .names import month_lookup, weekday_lookup
from .patterns import Pattern
from .spec import ParseSpec

__all__ = ["Reading", "days_from_civil", "features", "read_pattern"]

US_PER_DAY = 86_400_000_000
#: Below this many texts, regexes and field conversions run in plain Python (``re`` compiled
#: once) rather than in Arrow, whose per-call cost (an RE2 compile each time) dominates tiny
#: columns; results are the same.
SMALL = 48
_MONTHS = [
    "January",
    "February",
    "March",
    "April",
    "May",
    "June",
    "July",
    "August",
    "September",
    "October",
    "November",
    "December",
]
_WEEKDAYS = ["Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday", "Sunday"]
_DIM = np.array([0, 31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31], dtype=np.int64)
#: RFC 5322 §4.3 zone names and their offsets in minutes; Z/UT/GMT/UTC are UTC.
ZONE_NAMES = {
    "z": 0,
    "ut": 0,
    "utc": 0,
    "gmt": 0,
    "est": -300,
    "edt": -240,
    "cst": -360,
    "cdt": -300,
    "mst": -420,
    "mdt": -360,
    "pst": -480,
    "pdt": -420,
}
# Order evidence of a numeric date with day and month fields (for the scan).
EV_NONE, EV_DMY, EV_MDY, EV_BOTH_SMALL, EV_EQUAL = 0, 1, 2, 3, 4


@dataclass
class Reading:
    """What one pattern made of some texts. ``matched`` is over all texts given; the other
    arrays are over all texts too (meaningless where not matched)."""

    matched: np.ndarray
    ok: np.ndarray
    ambiguous: np.ndarray
    value: np.ndarray  # int64 microseconds since 1970 (wall clock)
    offset: np.ndarray  # int32 minutes or NAIVE
    has_time: np.ndarray
    timed: np.ndarray  # bool: a time of day was written (even 00:00:00)
    reason: np.ndarray  # object: sentence where matched and not ok
    order: np.ndarray  # int8 EV_* code (numeric day/month patterns)
    two_digit: np.ndarray  # bool: the year was written with two digits
    year: np.ndarray  # int64 year as read (after the century rule), 0 where none


def is_leap(y: np.ndarray) -> np.ndarray:
    return (y % 4 == 0) & ((y % 100 != 0) | (y % 400 == 0))


def days_in_month(y: np.ndarray, m: np.ndarray) -> np.ndarray:
    mm = np.clip(m, 0, 12)
    return _DIM[mm] + ((mm == 2) & is_leap(y))


def days_from_civil(y: np.ndarray, m: np.ndarray, d: np.ndarray) -> np.ndarray:
    """Days since 1970-01-01 of valid proleptic Gregorian dates (integer arithmetic)."""
    y = y.astype(np.int64) - (m <= 2)
    era = np.floor_divide(y, 400)
    yoe = y - era * 400
    mp = (m.astype(np.int64) + 9) % 12
    doy = (153 * mp + 2) // 5 + d.astype(np.int64) - 1
    doe = yoe * 365 + yoe // 4 - yoe // 100 + doy
    return era * 146097 + doe - 719468


@dataclass
class _Digits:
    """One group of digits of every text a digits-only shape matched, read already."""

    ints: np.ndarray  # int64
    lens: np.ndarray  # int64: how many digits


@dataclass
class _DigitGroups:
    """The groups of the texts a digits-only shape matched (see ``_split_plan``), read as
    numbers: what ``_read_fields`` asks of the shape's struct of texts, without the texts."""

    groups: dict[str, _Digits]


def _field(sub: pa.StructArray | _DigitGroups, name: str) -> pa.Array | _Digits | None:
    if isinstance(sub, _DigitGroups):
        return sub.groups.get(name)
    if sub.type.get_field_index(name) < 0:
        return None
    return sub.field(name)


def _lens(f: pa.Array | _Digits) -> np.ndarray:
    """Length of each text (int64)."""
    if isinstance(f, _Digits):
        return f.lens
    if len(f) <= SMALL:
        return np.array([len(x or "") for x in f.to_pylist()], dtype=np.int64)
    return pc.utf8_length(f).to_numpy(zero_copy_only=False).astype(np.int64)


def _ints(f: pa.Array | _Digits | None, default: int = -1) -> np.ndarray:
    """Digits → int64 (empty or absent → default)."""
    if f is None:
        return np.full(0, default, dtype=np.int64)
    if isinstance(f, _Digits):  # never empty
        return f.ints
    if len(f) <= SMALL:
        return np.array([int(x) if x else default for x in f.to_pylist()], dtype=np.int64)
    empty = pc.equal(pc.utf8_length(f), 0)
    cleaned = pc.if_else(empty, pa.scalar(None, pa.string()), f)
    return pc.cast(cleaned, pa.int64()).fill_null(default).to_numpy(zero_copy_only=False)


def _strs(f: pa.Array | None, n: int) -> np.ndarray:
    if f is None:
        return np.full(n, "", dtype=object)
    return np.asarray(f.to_numpy(zero_copy_only=False), dtype=object)


def _fraction_us(f: pa.Array | None, n: int) -> np.ndarray:
    """Fraction digits ("52", "123456789") → microseconds (truncated past six digits)."""
    if f is None:
        return np.zeros(n, dtype=np.int64)
    if len(f) <= SMALL:
        return np.array([int((x or "").ljust(6, "0")[:6]) for x in f.to_pylist()], dtype=np.int64)
    padded = pc.utf8_slice_codeunits(pc.utf8_rpad(f, 6, "0"), 0, 6)
    return _ints(padded, 0)


def _century(
    y: np.ndarray, two: np.ndarray, spec: ParseSpec, rule: str | None = None
) -> np.ndarray:
    if not two.any():
        return y
    if (rule or spec.century) in ("past", "either"):
        pivot = int(spec.pivot_year or 0)
        full = pivot - ((pivot - y) % 100)
    else:  # POSIX / ISO C: 69–99 → 19xx, 00–68 → 20xx
        full = np.where(y < 69, 2000 + y, 1900 + y)
    return np.where(two, full, y)


def _date_name(y: int, m: int, d: int) -> str:
    return f"{d} {_MONTHS[m - 1]} {y:04d}"


#: Per thread: whether reason sentences are written (the scan's census needs only counts).
_LOCAL = threading.local()


def _explaining() -> bool:
    return getattr(_LOCAL, "explain", True)


#: From this many failing values on, a reason is written once per distinct combination of the
#: values it names and shared, rather than once per value (same sentences, fewer f-strings).
_SHARE_FROM = 32


def _reasons(idx: np.ndarray, make, by: tuple[np.ndarray, ...] | None) -> np.ndarray:
    """``make(i)`` for every position in ``idx``. ``by`` lists every array ``make`` reads (by
    position ``i``); rows that agree on all of them get the same sentence, so it is written
    once per distinct combination. ``by=None``: no promise, one call per row."""
    if by is None or len(idx) < _SHARE_FROM:
        return np.array([make(i) for i in idx], dtype=object)
    if not by:  # the sentence names no value: the same for every row
        return np.full(len(idx), make(idx[0]), dtype=object)
    group = np.zeros(len(idx), dtype=np.int64)
    for arr in by:
        codes, uniq = pd.factorize(np.asarray(arr)[idx], sort=False, use_na_sentinel=False)
        group, _ = pd.factorize(group * max(len(uniq), 1) + codes, sort=False)
    first = np.full(int(group.max()) + 1, -1, dtype=np.int64)
    first[group[::-1]] = np.arange(len(idx))[::-1]
    once = np.array([make(i) for i in idx[first]], dtype=object)
    return once[group]


class _Check:
    """First failing check wins: ``fail(mask, make, by=...)`` marks the rows not failed yet;
    ``by`` names every array the reason sentence ``make(i)`` reads (see ``_reasons``)."""

    def __init__(self, n: int, live: np.ndarray) -> None:
        self.bad = ~live
        self.reason = np.full(n, None, dtype=object)
        self.explain = _explaining()

    def fail(self, mask: np.ndarray, make, by: tuple[np.ndarray, ...] | None = None) -> None:
        new = mask & ~self.bad
        if new.any():
            if self.explain:
                idx = np.flatnonzero(new)
                self.reason[idx] = _reasons(idx, make, by)
            self.bad |= new


class _Features(dict):
    """Per-text features computed on first use (``Pattern.needs`` names them)."""

    _TESTS: ClassVar[dict[str, tuple[str, str]]] = {
        "digits": ("regex", r"^-?\d+(?:\.\d*)?$"),
        "alpha": ("regex", r"\pL"),
        "slash": ("has", "/"),
        "dash": ("has", "-"),
        "dot": ("has", "."),
        "space": ("has", " "),
        "w": ("has", "w"),
        "t": ("has", "t"),
    }

    def __init__(self, texts: pa.Array) -> None:
        super().__init__()
        self.texts = texts

    def __missing__(self, key: str) -> np.ndarray:
        how, arg = self._TESTS[key]
        if len(self.texts) <= SMALL:
            vals = [t or "" for t in self.texts.to_pylist()]
            if how == "regex":
                rx = _python_regex(arg)[0]
                out = np.array([rx.search(t) is not None for t in vals], dtype=bool)
            else:
                out = np.array([arg in t for t in vals], dtype=bool)
            self[key] = out
            return out
        if how == "regex":
            hit = pc.match_substring_regex(self.texts, letters_for(arg, self.texts))
        else:
            hit = pc.match_substring(self.texts, arg)
        out = hit.to_numpy(zero_copy_only=False)
        self[key] = out
        return out

    def subset(self, rows: np.ndarray, texts: pa.Array | None = None) -> _Features:
        """The features of some rows (``texts``: those rows' texts, if already taken)."""
        sub = _Features(self.texts.take(pa.array(rows)) if texts is None else texts)
        for key, v in self.items():
            sub[key] = v[rows]
        return sub


def features(texts: pa.Array) -> _Features:
    """Cheap per-text features that say which patterns are worth trying (``Pattern.needs``),
    each computed when first asked for."""
    return _Features(texts)


def letters_for(regex: str, texts: pa.Array) -> str:
    r"""``regex`` as RE2 should compile it for ``texts``: its Unicode letter class ``\pL``
    costs RE2 about 2 ms to compile on every call, so when every text is ASCII (where a letter
    is A–Z or a–z, and the two match alike) it is written ``[A-Za-z]``."""
    if r"\pL" not in regex or not all_ascii(texts):
        return regex
    return _ascii_letters(regex)


def all_ascii(texts: pa.Array) -> bool:
    """Whether every text (nulls aside) is ASCII, and there is at least one."""
    return bool(len(texts)) and bool(pc.all(pc.string_is_ascii(texts)).as_py())


@lru_cache(maxsize=512)
def _ascii_letters(regex: str) -> str:
    out = regex.replace(r"[\pL-]", "[A-Za-z-]").replace(r"[^\pL]", "[^A-Za-z]")
    return out.replace(r"\pL", "[A-Za-z]")


@lru_cache(maxsize=512)
def _python_regex(regex: str) -> tuple[re.Pattern[str], tuple[str, ...]]:
    # The shapes use RE2 syntax; the few constructs Python writes differently are translated.
    py = regex.replace(r"[\pL-]", r"(?:[^\W\d_]|-)")
    py = py.replace(r"\pL", r"[^\W\d_]").replace("$", r"\Z")
    rx = re.compile(py)
    return rx, tuple(rx.groupindex)


def extract(texts: pa.Array, regex: str) -> pa.StructArray:
    """``pyarrow.compute.extract_regex``, in Python for a handful of texts."""
    if len(texts) > SMALL:
        return pc.extract_regex(texts, letters_for(regex, texts))
    rx, names = _python_regex(regex)
    rows = []
    for t in texts.to_pylist():
        m = rx.match(t) if t is not None else None
        rows.append(None if m is None else {k: (v or "") for k, v in m.groupdict().items()})
    typ = pa.struct([(k, pa.string()) for k in names])
    return pa.array(rows, type=typ)


#: A named group that matches digits only: ``\d``, a digit range, a digit, counts, choices.
_DIGIT_GROUP = re.compile(r"\(\?P<(\w+)>(?:\\d|\[\d-\d\]|\d|\{\d+(?:,\d+)?\}|\|)+\)")


@lru_cache(maxsize=512)
def _split_plan(regex: str) -> tuple[str, tuple[str, ...]] | None:
    r"""(separator, group names) when ``regex`` is whole: named groups of digits only, joined
    by one literal character that is no digit, as ``^(?P<a>\d{1,2})/(?P<b>\d{1,2})/(?P<y>\d{4})$``.
    A text it matches is then exactly its groups joined by the separator, so splitting the
    text there gives the groups: one quick match (no submatches) and a split, instead of
    RE2's slower extraction of submatches. One group alone (``^(?P<i>0|[1-9]\d{0,6})$``) is
    the whole text: the separator is then ""."""
    if not (regex.startswith("^") and regex.endswith("$")):
        return None
    body = regex[1:-1]
    names, seps, pos = [], [], 0
    for m in _DIGIT_GROUP.finditer(body):
        seps.append(body[pos : m.start()])
        names.append(m.group(1))
        pos = m.end()
    if pos != len(body) or not names or seps[0] != "":
        return None
    if len(names) == 1:
        return "", tuple(names)
    if len(set(seps[1:])) != 1:
        return None
    sep = seps[1]
    if len(sep) == 2 and sep[0] == "\\" and not sep[1].isalnum():
        sep = sep[1]  # an escaped character: "\." is a dot
    elif len(sep) != 1 or sep in r".^$*+?()[]{}|\\" or sep.isalnum():
        return None
    return sep, tuple(names)


def _begins(texts: pa.Array, regex: str) -> np.ndarray:
    """Whether each text begins with a match of ``regex`` (anchored at the start by ``^``)."""
    if len(texts) <= SMALL:
        rx = _python_regex(regex)[0]
        return np.array(
            [t is not None and rx.match(t) is not None for t in texts.to_pylist()], dtype=bool
        )
    hit = pc.match_substring_regex(texts, letters_for(regex, texts)).fill_null(False)
    return hit.to_numpy(zero_copy_only=False)


def _extract_matched(
    texts: pa.Array, regex: str
) -> tuple[np.ndarray, pa.StructArray | _DigitGroups]:
    """(which texts match ``regex``, the fields of those that do). A shape of digit groups
    between one separator (see ``_split_plan``) is read by splitting the matched texts there
    and reading all their groups as numbers at once."""
    plan = _split_plan(regex) if len(texts) > SMALL else None
    if plan is None:
        found = extract(texts, regex)
        ok = found.is_valid().to_numpy(zero_copy_only=False)
        return ok, found.filter(pa.array(ok))
    sep, names = plan
    ok = pc.match_substring_regex(texts, regex).fill_null(False).to_numpy(zero_copy_only=False)
    # each matched text is exactly its groups joined by the separator: g parts, in order
    parts = texts.filter(pa.array(ok))
    if sep:
        parts = pc.list_flatten(pc.split_pattern(parts, sep))
    g = len(names)
    ints = pc.cast(parts, pa.int64()).to_numpy(zero_copy_only=False).reshape(-1, g).T.copy()
    lens = pc.binary_length(parts).to_numpy(zero_copy_only=False).reshape(-1, g).T
    lens = lens.astype(np.int64)
    groups = {name: _Digits(ints[j], lens[j]) for j, name in enumerate(names)}
    return ok, _DigitGroups(groups)


def read_pattern(
    p: Pattern,
    texts: pa.Array,
    spec: ParseSpec,
    feats: dict[str, np.ndarray] | None = None,
    *,
    explain: bool | None = None,
) -> Reading:
    """Read ``texts`` (normalised, see ``parse.normalise``) with pattern ``p`` under ``spec``.
    ``feats`` (from ``features(texts)``) lets the regex skip texts that cannot match; without
    ``explain`` no reason sentences are written (the scan's census needs only the counts);
    None: as the caller's (``parse.parse_texts`` says whether it writes reasons)."""
    before = _explaining()
    _LOCAL.explain = before if explain is None else explain
    try:
        return _read(p, texts, spec, feats)
    finally:
        _LOCAL.explain = before


def _read(
    p: Pattern, texts: pa.Array, spec: ParseSpec, feats: dict[str, np.ndarray] | None
) -> Reading:
    n = len(texts)
    out = Reading(
        matched=np.zeros(n, dtype=bool),
        ok=np.zeros(n, dtype=bool),
        ambiguous=np.zeros(n, dtype=bool),
        value=np.zeros(n, dtype=np.int64),
        offset=np.full(n, NAIVE, dtype=np.int32),
        has_time=np.zeros(n, dtype=bool),
        timed=np.zeros(n, dtype=bool),
        reason=np.full(n, None, dtype=object),
        order=np.zeros(n, dtype=np.int8),
        two_digit=np.zeros(n, dtype=bool),
        year=np.zeros(n, dtype=np.int64),
    )
    if not n:
        return out
    if feats is not None and p.needs:
        cand = np.zeros(n, dtype=bool)
        for f in p.needs:
            cand |= feats[f]
        ci = np.flatnonzero(cand)
        if not len(ci):
            return out
        sub_texts = texts if len(ci) == n else texts.take(pa.array(ci))
    else:
        ci = np.arange(n)
        sub_texts = texts
    # Fast path first: the date alone (most cells), then the full shape with time and zone.
    groups = []
    rest = ci
    if p.simple:
        v1, s1 = _extract_matched(sub_texts, p.simple)
        if v1.any():
            groups.append((ci[v1], s1))
        rest = ci[~v1]
        if len(rest) and len(rest) < len(ci):
            sub_texts = sub_texts.filter(pa.array(~v1))
        if len(rest):
            # The full shape is the simple one with a time and zone after it, which begin
            # with no digit ("t", a space, a zone or an offset sign), so only a text that
            # begins as the simple shape followed by a non-digit can match it: a quick test
            # before extracting.
            could = _begins(sub_texts, p.simple[:-1] + r"(?:\D|$)")
            if not could.all():
                rest = rest[could]
                sub_texts = sub_texts.filter(pa.array(could))
    if len(rest):
        s2 = extract(sub_texts, p.shape)
        v2 = s2.is_valid().to_numpy(zero_copy_only=False)
        if v2.any():
            groups.append((rest[v2], s2.filter(s2.is_valid())))
    explain = _explaining()
    for idx, struct in groups:
        res = _read_fields(p, struct, len(idx), spec)
        live = res.pop("live")
        # Rows the shape matched whose words are no names (or digit counts not allowed) are
        # not this pattern at all.
        keep = idx[live]
        out.matched[keep] = True
        for key, arr in res.items():
            if key != "reason" or explain:  # without reasons, every sentence is None
                getattr(out, key)[keep] = arr[live]
    return out


def _read_fields(p: Pattern, sub: pa.StructArray, k: int, spec: ParseSpec) -> dict:
    live = np.ones(k, dtype=bool)
    two = np.zeros(k, dtype=bool)
    order = np.zeros(k, dtype=np.int8)
    amb = np.zeros(k, dtype=bool)
    if p.kind in ("serial", "epoch-s", "epoch-ms"):
        return _read_number(p, sub, k, spec)
    yf = _field(sub, "y")
    y = _ints(yf, 0)
    if yf is not None:
        two = _lens(yf) == 2
    y_posix = _century(y, two, spec, "posix") if spec.century == "either" else None
    y = _century(y, two, spec)
    chk = _Check(k, live)
    wd_given = np.full(k, -1, dtype=np.int64)
    if p.kind == "num":
        a = _ints(_field(sub, "a"))
        b = _ints(_field(sub, "b"))
        order = np.where(
            (a > 12) & (b <= 12),
            EV_DMY,
            np.where(
                (b > 12) & (a <= 12),
                EV_MDY,
                np.where((a <= 12) & (b <= 12), np.where(a == b, EV_EQUAL, EV_BOTH_SMALL), 0),
            ),
        ).astype(np.int8)
        if spec.day_order == "dmy":
            d, m = a, b
        elif spec.day_order == "mdy":
            d, m = b, a
        else:
            mdy = order == EV_MDY
            d = np.where(mdy, b, a)
            m = np.where(mdy, a, b)
            both_big = (a > 12) & (b > 12)
            chk.fail(
                both_big,
                lambda i: f"neither {a[i]} nor {b[i]} can be a month",
                by=(a, b),
            )
            amb = (order == EV_BOTH_SMALL) & (a >= 1) & (b >= 1)
    elif p.kind == "ymd":
        m = _ints(_field(sub, "m"), 0)
        d = _ints(_field(sub, "d"), 0)
    elif p.kind == "name":
        words = sub.field("mon")
        table = month_lookup(("en",) if p.id == "rfc5322" else tuple(spec.locales))
        keys = pa.array(list(table), pa.string())
        pos = pc.index_in(words, value_set=keys).fill_null(-1).to_numpy(zero_copy_only=False)
        vals = np.array([0, *table.values()], dtype=np.int64)
        known = pos >= 0
        m = vals[pos + 1]
        live &= known
        d = _ints(_field(sub, "d"), 0)
        wdf = _field(sub, "wd")
        if wdf is not None:
            wtable = weekday_lookup(("en",) if p.id == "rfc5322" else tuple(spec.locales))
            wkeys = pa.array(list(wtable), pa.string())
            wpos = pc.index_in(wdf, value_set=wkeys)
            wvals = np.array(list(wtable.values()), dtype=np.int64)
            has_wd = _lens(wdf) > 0
            wp = wpos.fill_null(-1).to_numpy(zero_copy_only=False)
            live &= ~has_wd | (wp >= 0)
            wd_given = np.where(has_wd & (wp >= 0), wvals[np.clip(wp, 0, None)], -1)
        chk = _Check(k, live)
    elif p.kind == "week":
        w = _ints(_field(sub, "w"), 0)
        u = _ints(_field(sub, "u"), 0)
        m = np.ones(k, dtype=np.int64)
        d = np.ones(k, dtype=np.int64)
    elif p.kind == "ordinal":
        o = _ints(_field(sub, "o"), 0)
        m = np.ones(k, dtype=np.int64)
        d = np.ones(k, dtype=np.int64)
    else:  # pragma: no cover - every kind is listed above
        raise ValueError(p.kind)

    chk.fail(y == 0, lambda i: "year 0 does not exist (the calendar goes from 1 BC to AD 1)", by=())
    chk.fail((m < 1) | (m > 12), lambda i: f"month {m[i]} does not exist", by=(m,))
    chk.fail(d < 1, lambda i: f"day {d[i]} does not exist", by=(d,))
    dim = days_in_month(y, m)
    feb29 = (m == 2) & (d == 29)
    chk.fail(
        feb29 & (dim == 28),
        lambda i: f"29 February {y[i]} does not exist ({y[i]} is not a leap year)",
        by=(y,),
    )
    chk.fail(
        d > dim,
        lambda i: (
            f"{d[i]} {_MONTHS[m[i] - 1]} {y[i]} does not exist "
            f"({_MONTHS[m[i] - 1]} has {dim[i]} days)"
        ),
        by=(d, m, y, dim),
    )
    ok_date = ~chk.bad
    days = np.zeros(k, dtype=np.int64)
    days[ok_date] = days_from_civil(y[ok_date], m[ok_date], d[ok_date])
    if p.kind == "week":
        jan4 = days_from_civil(y, np.ones(k, np.int64), np.full(k, 4, np.int64))
        mon1 = jan4 - (jan4 + 3) % 7
        jan1_wd = (jan4 - 3 + 3) % 7
        weeks = np.where((jan1_wd == 3) | (is_leap(y) & (jan1_wd == 2)), 53, 52)
        chk.fail((w < 1) | (w > weeks), lambda i: f"{y[i]} has no week {w[i]}", by=(y, w))
        chk.fail((u < 1) | (u > 7), lambda i: f"weekday {u[i]} does not exist (1–7)", by=(u,))
        days = mon1 + (w - 1) * 7 + (u - 1)
    elif p.kind == "ordinal":
        ylen = 365 + is_leap(y)
        chk.fail(
            (o < 1) | (o > ylen),
            lambda i: f"day {o[i]} of {y[i]} does not exist ({y[i]} has {ylen[i]} days)",
            by=(o, y, ylen),
        )
        days = days + o - 1
    if p.kind == "num" and spec.day_order is None:
        # Ambiguous only when both readings are real days; the reason gives both.
        chk_amb = amb & ~chk.bad
        amb = chk_amb
    tod, offset, has_time, timed = _read_time(sub, k, chk, spec)
    if (wd_given >= 0).any():
        actual = (days + 3) % 7
        chk.fail(
            (wd_given >= 0) & (actual != wd_given),
            lambda i: (
                f"it says {_WEEKDAYS[wd_given[i]]} but {_date_name(y[i], m[i], d[i])} "
                f"is a {_WEEKDAYS[actual[i]]}"
            ),
            by=(wd_given, y, m, d, actual),
        )
    cent = np.zeros(k, dtype=bool)
    if y_posix is not None:
        # Both centuries name a real day alike (1900s and 2000s years 27–68 share leap years).
        cent = (y_posix != y) & ~chk.bad & ~amb
        amb = amb | cent
    amb &= ~chk.bad
    ok = ~chk.bad & ~amb
    reason = chk.reason
    if cent.any() and _explaining():
        ic = np.flatnonzero(cent & amb)
        reason[ic] = _reasons(
            ic,
            lambda i: (
                f"could be {_date_name(y[i], m[i], d[i])} or "
                f"{_date_name(y_posix[i], m[i], d[i])}; nothing in the column says which "
                "century a two-digit year is in"
            ),
            (y, m, d, y_posix),
        )
    if amb.any() and _explaining():
        ia = np.flatnonzero(amb & ~cent)
        if len(ia):  # only a "num" reading has a and b (and only it leaves the order open)
            reason[ia] = _reasons(
                ia,
                lambda i: (
                    f"could be {_date_name(y[i], b[i], a[i])} (day first) or "
                    f"{_date_name(y[i], a[i], b[i])} (month first); the day order is undecided"
                ),
                (y, a, b),
            )
    return {
        "live": live,
        "ok": ok & live,
        "ambiguous": amb & live,
        "value": days * US_PER_DAY + tod,
        "offset": offset,
        "has_time": has_time,
        "timed": timed,
        "reason": reason,
        "order": order,
        "two_digit": two,
        "year": y,
    }


def _read_time(
    sub: pa.StructArray, k: int, chk: _Check, spec: ParseSpec
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    hf = _field(sub, "H")
    offset = np.full(k, NAIVE, dtype=np.int32)
    if hf is None:
        return np.zeros(k, np.int64), offset, np.zeros(k, bool), np.zeros(k, bool)
    h = _ints(hf, -1)
    mi = _ints(_field(sub, "M"), -1)
    s = _ints(_field(sub, "S"), -1)
    frac = _fraction_us(_field(sub, "F"), k)
    ap = _strs(_field(sub, "ap"), k)
    is_am = ap == "am"
    is_pm = ap == "pm"
    timed = h >= 0
    chk.fail(timed & (mi < 0) & ~is_am & ~is_pm, lambda i: f"hour {h[i]} has no minutes", by=(h,))
    twelve = is_am | is_pm
    chk.fail(
        twelve & ((h < 1) | (h > 12)),
        lambda i: f"hour {h[i]} cannot go with {ap[i].upper()} (a 12-hour clock runs 1–12)",
        by=(h, ap),
    )
    chk.fail(
        timed & ~twelve & (h == 24),
        lambda i: "24:00 (end of day) is not read; write 00:00 of the next day",
        by=(),
    )
    chk.fail(timed & (h > 23), lambda i: f"hour {h[i]} does not exist", by=(h,))
    chk.fail(timed & (mi > 59), lambda i: f"minute {mi[i]} does not exist", by=(mi,))
    chk.fail(
        timed & (s == 60),
        lambda i: (
            f"{h[i]:02d}:{mi[i]:02d}:60 is a leap second, which a datetime value "
            "cannot hold; it is not moved to the next second"
        ),
        by=(h, mi),
    )
    chk.fail(timed & (s > 60), lambda i: f"second {s[i]} does not exist", by=(s,))
    hh = np.where(twelve, h % 12 + np.where(is_pm, 12, 0), h)
    tod = np.where(
        timed,
        ((np.maximum(hh, 0) * 60 + np.maximum(mi, 0)) * 60 + np.maximum(s, 0)) * 1_000_000 + frac,
        0,
    )
    zf = _field(sub, "Z")
    if zf is not None:
        zs = _strs(zf, k)
        zoned = zs != ""
        if zoned.any():
            offset, bad = _zone_offsets(zf, zs, k)
            chk.fail(zoned & bad, lambda i: f'"{zs[i]}" is not a UTC offset', by=(zs,))
            named = np.isin(zs, ["z", "utc", "gmt", "ut"])
            chk.fail(
                zoned & ~timed & ~named,
                lambda i: f'the offset "{zs[i]}" has no time of day to go with',
                by=(zs,),
            )
            offset = np.where(timed, offset, NAIVE).astype(np.int32)
    has_time = timed & ((tod != 0) | (offset != NAIVE) | twelve)
    return tod, offset, has_time, timed


def _zone_offsets(zf: pa.Array, zs: np.ndarray, k: int) -> tuple[np.ndarray, np.ndarray]:
    out = np.full(k, NAIVE, dtype=np.int64)
    for name, minutes in ZONE_NAMES.items():
        out[zs == name] = minutes
    parts = extract(zf, r"^(?:utc|gmt)?(?P<s>[+-])(?P<h>\d{2}):?(?P<m>\d{2})?$")
    num = parts.is_valid().to_numpy(zero_copy_only=False)
    bad = np.zeros(k, dtype=bool)
    if num.any():
        h = _ints(parts.field("h"), 0)
        m = _ints(parts.field("m"), 0)
        sign = np.where(_strs(parts.field("s"), k) == "-", -1, 1)
        val = sign * (h * 60 + m)
        bad = num & ((h > 23) | (m > 59))
        out = np.where(num & ~bad, val, out)
    return out.astype(np.int32), bad


def _read_number(p: Pattern, sub: pa.StructArray, k: int, spec: ParseSpec) -> dict:
    ints = _field(sub, "i")
    i = _ints(ints, 0)
    ndig = _lens(ints)
    neg = (
        _strs(_field(sub, "neg"), k) == "-" if _field(sub, "neg") is not None else np.zeros(k, bool)
    )
    ff = _field(sub, "f")
    live = np.ones(k, dtype=bool)
    chk = _Check(k, live)
    has_frac = np.zeros(k, bool)
    if ff is not None:
        has_frac = _lens(ff) > 0
    if p.kind == "serial":
        # Fraction of a day → microseconds, from the digits (no float error on the date part).
        fstr = _strs(ff, k)
        frac = np.zeros(k, dtype=np.float64)
        if has_frac.any():
            frac[has_frac] = np.array(["0." + x for x in fstr[has_frac]], dtype=np.float64)
        # Spreadsheets keep times to the millisecond; a float fraction carries float noise
        # below that (0.5732638889 day is 13:45:30.000001), so round to the millisecond.
        tod = np.rint(frac * (US_PER_DAY // 1000)).astype(np.int64) * 1000
        if spec.date_system == 1904:
            base = days_from_civil(np.array([1904]), np.array([1]), np.array([1]))[0]
            days = base + i
            chk.fail(
                i > 2957003,
                lambda j: f"serial {i[j]} is after 9999-12-31 (1904 system)",
                by=(i,),
            )
        else:
            b0 = days_from_civil(np.array([1899]), np.array([12]), np.array([31]))[0]
            days = np.where(i < 60, b0 + i, b0 - 1 + i)
            chk.fail(
                i == 0,
                lambda j: (
                    "serial 0 is day zero of the 1900 date system (shown as 1900-01-00), "
                    "not a real day"
                ),
                by=(),
            )
            chk.fail(
                i == 60,
                lambda j: (
                    "serial 60 is 29 February 1900, a day that does not exist (the 1900 "
                    "date system counts 1900 as a leap year)"
                ),
                by=(),
            )
            chk.fail(i > 2958465, lambda j: f"serial {i[j]} is after 9999-12-31", by=(i,))
        value = days * US_PER_DAY + tod
        has_time = tod != 0
    else:
        # Digit counts keep the numeric patterns apart: seconds have 8–10 digits (from
        # 1970-04-26 on) or a minus sign; milliseconds 11–13 digits or a minus sign.
        lo = 8 if p.kind == "epoch-s" else 11
        live = neg | (ndig >= lo)
        chk = _Check(k, live)
        frac = _fraction_us(ff, k) if ff is not None else np.zeros(k, np.int64)
        if p.kind == "epoch-s":
            us = i * 1_000_000 + frac
        else:
            frac_ms = _fraction_us(ff, k) // 1000 if ff is not None else np.zeros(k, np.int64)
            us = i * 1000 + frac_ms
        value = np.where(neg, -us, us)
        lo_us = days_from_civil(np.array([1]), np.array([1]), np.array([1]))[0] * US_PER_DAY
        chk.fail(value < lo_us, lambda j: "the epoch value is before the year 1", by=())
        has_time = np.ones(k, dtype=bool)
    ok = ~chk.bad
    year = np.zeros(k, dtype=np.int64)
    if ok.any():
        year[ok] = (
            value[ok].astype("datetime64[us]").astype("datetime64[Y]").astype(np.int64) + 1970
        )
    offset = np.full(k, NAIVE if p.kind == "serial" else 0, dtype=np.int32)
    return {
        "live": live,
        "ok": ok & live,
        "ambiguous": np.zeros(k, bool),
        "value": value,
        "offset": offset,
        "has_time": has_time,
        "timed": has_time | has_frac if p.kind == "serial" else has_time,
        "reason": chk.reason,
        "order": np.zeros(k, np.int8),
        "two_digit": np.zeros(k, bool),
        "year": year,
    }
