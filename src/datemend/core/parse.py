"""Vectorised parsing of a column with a ParseSpec: one value, state, pattern and reason per cell.

The pipeline works on distinct values, not cells: the column's texts are factorised, each
distinct text is normalised (case, spaces, quotes, brackets, ordinal suffixes, filler words such
as "de" or "of"), then the spec's patterns are tried in order, each as one RE2 regex over all
texts still unread (``fields.read_pattern``); the first pattern that reads a text validly wins,
and a text no pattern reads keeps the reason given by the first pattern whose shape it had.
Results go back to the cells through the factorisation codes. Real date cells from a workbook
are kept as they are.

A spec by hand (pattern ids are listed in ``patterns.py``)::

    spec = ParseSpec(
        patterns=("num-slash", "iso-date", "serial"),  # tried in this order
        day_order="dmy",          # or "mdy"; None leaves 3/4/2024 AMBIGUOUS
        century="past", pivot_year=2026,  # two-digit years never after 2026
        date_system=1900,         # serials; 1904 for workbooks in that system
        zone="UTC",               # move values with an offset to UTC (None keeps them)
        blank_tokens=("n/a", "unknown"),
    )
    parsed = parse_column(column, spec)   # ParsedColumn: value, state, pattern, reason …
"""

from __future__ import annotations

import datetime as _dt
import weakref
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from . import fields as _fields
from .clean import NAIVE, CellState, ParsedColumn
from .encode import start_encoding
from .fields import EV_DMY, EV_MDY, Reading, _Features, features, read_pattern
from .names import ORDINAL_SUFFIX_RE
from .patterns import label, pattern
from .spec import ParseSpec
from .table import CellKind, RawColumn, SourceFacts

__all__ = [
    "TextResult",
    "iso_text",
    "normalise",
    "parse_column",
    "parse_series",
    "parse_texts",
]

#: Pattern id given to real date cells of a workbook (kept as they are).
DATE_CELL = "date-cell"

_SPACES = r"[\t\n\r\f\v \x{00a0}\x{1680}\x{2000}-\x{200b}\x{202f}\x{205f}\x{3000}\x{feff}]+"
_EDGE = " \"'`“”‘’„«»‹›()[]{}<>,;"
_FILLER = r"(^| )(?:de|del|of|the|le|el|den|der|il|lo|op|em|at|um|à|às|a|las|alle|om)( |$)"
_TIME_ONLY = r"^\d{1,2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?(?: ?[ap]m)?$"


#: Texts that need nothing but lower case: digits and separators with a digit first and last
#: (``_PLAIN``), or a plain ISO date-time (``_CLEAN_TIMED``).
_PLAIN = r"[0-9][0-9/.:-]*[0-9]"
_PLAIN_CHARS = "0123456789/.:-"
_CLEAN_TIMED = r"\d{4}-\d\d-\d\d[t ]\d\d:\d\d(?::\d\d(?:[.,]\d+)?)?(?:z|[+-]\d\d(?::?\d\d)?)?"
_CLEAN = rf"^(?:{_PLAIN}|{_CLEAN_TIMED})$"


def normalise(texts: pa.Array, *, lower: pa.Array | None = None) -> pa.Array:
    """Lower-case, single-spaced text with the noise of exports removed (see module doc).
    ``lower``: ``lower_case(texts)``, when already known."""
    if lower is None:
        lower = lower_case(texts)
    messy = ~_clean(lower)
    if not messy.any():
        return lower
    mi = np.flatnonzero(messy)
    fixed = _normalise_messy(lower.take(pa.array(mi)))
    # the fixed texts in place of the messy ones: one gather (quicker than replace_with_mask)
    at = np.arange(len(lower))
    at[mi] = len(lower) + np.arange(len(mi))
    return pa.concat_arrays([lower, fixed]).take(pa.array(at))


def lower_case(texts: pa.Array) -> pa.Array:
    """The texts in lower case; ASCII texts by Arrow's ASCII kernel, which gives them alike
    and quicker."""
    parts = _utf8_bytes(texts)
    if parts is not None and (not len(parts[1]) or int(parts[1].max()) < 0x80):
        return pc.ascii_lower(texts)
    return pc.utf8_lower(texts)


def _utf8_bytes(texts: pa.Array) -> tuple[np.ndarray, np.ndarray] | None:
    """(offsets from 0, bytes) of a string array without nulls, as numpy views (no copy);
    None for another array."""
    if texts.type != pa.string() or texts.null_count:
        return None
    bufs = texts.buffers()
    off = np.frombuffer(bufs[1], np.int32, count=len(texts) + 1, offset=texts.offset * 4)
    data = np.zeros(0, np.uint8) if bufs[2] is None else np.frombuffer(bufs[2], np.uint8)
    return off - off[0], data[off[0] : off[-1]]


def _clean(lower: pa.Array) -> np.ndarray:
    """Which texts (lower-cased) match ``_CLEAN``: the plain form found by trimming its
    characters and looking at the first and last byte (quicker than RE2 over every text),
    the timed form by RE2 over the others."""
    parts = _utf8_bytes(lower)
    if parts is None:  # nulls (never clean) or another type: RE2 over all
        hit = pc.match_substring_regex(lower, _CLEAN).fill_null(False)
        return hit.to_numpy(zero_copy_only=False)
    off, data = parts
    ok = np.zeros(len(lower), dtype=bool)
    if len(data):
        rest = pc.binary_length(pc.ascii_trim(lower, _PLAIN_CHARS))
        ok = pc.equal(rest, 0).to_numpy(zero_copy_only=False) & (np.diff(off) >= 2)
        first = data[np.minimum(off[:-1], len(data) - 1)]  # an empty text's is never looked at
        last = data[np.maximum(off[1:] - 1, 0)]
        ok &= (first - ord("0") < 10) & (last - ord("0") < 10)  # bytes: below "0" wraps round
    others = np.flatnonzero(~ok)
    if len(others):
        sub = lower if len(others) == len(lower) else lower.take(pa.array(others))
        timed = pc.match_substring_regex(sub, f"^{_CLEAN_TIMED}$")
        ok[others] = timed.to_numpy(zero_copy_only=False)
    return ok


def _normalise_messy(t: pa.Array) -> pa.Array:
    def letters(regex: str) -> str:  # every step keeps ASCII texts ASCII
        return _fields._ascii_letters(regex) if ascii_only else regex

    ascii_only = _fields.all_ascii(t)
    t = pc.replace_substring_regex(t, _SPACES, " ")
    t = pc.utf8_trim(t, _EDGE)
    t = pc.utf8_rtrim(t, ".")
    t = pc.utf8_trim(t, _EDGE)
    # a.m. / p.m. / a. m. → am / pm
    t = pc.replace_substring_regex(t, r"([ \d])([ap])(?:\.|\. )?m\.?( |$)", r"\1\2m\3")
    t = pc.replace_substring_regex(t, ORDINAL_SUFFIX_RE, r"\1\2")
    # "25 märz 23. 9:36": a day's ordinal dot where the year would stand says 23 is a day and
    # 25 a two-digit year; no pattern reads that order, so it is kept unread, not taken as
    # 25 March 2023 (the doubled dot matches nothing).
    t = pc.replace_substring_regex(
        t, letters(r"(\pL) (0?[1-9]|[12]\d|3[01])\. (\d)"), r"\1 \2.. \3"
    )
    t = pc.replace_substring_regex(t, r"(\d)\. ", r"\1 ")  # German ordinal dot: "12. März"
    t = pc.replace_substring_regex(t, letters(r"(\pL)\."), r"\1 ")  # abbreviation dots: "févr."
    t = pc.replace_substring_regex(t, letters(r"(\pL),"), r"\1 ")
    t = pc.replace_substring_regex(t, r",( |$)", r" ")
    for _ in range(2):
        t = pc.replace_substring_regex(t, _FILLER, r"\1")
    t = pc.replace_substring_regex(t, "  +", " ")
    return pc.utf8_trim(t, " ")


@dataclass
class TextResult:
    """Per distinct text: the parse result (arrays of equal length).

    A result parsed without reasons (``parse_texts(..., explain=False)``, as the scan does)
    writes its reason sentences when they are first asked for: ``reason_of(rows)`` for a few
    rows, ``reason`` for all. They are the sentences a parse with reasons gives (parsing is
    per text, so those texts are parsed again, with reasons); tests/core/test_lazy_reasons.py
    checks that."""

    value: np.ndarray  # datetime64[us]
    offset: np.ndarray
    has_time: np.ndarray
    state: np.ndarray
    pattern: np.ndarray
    _reason: np.ndarray
    timed: np.ndarray  # a time of day was written, even a stray 00:00:00
    order: np.ndarray  # evidence of day/month order (fields.EV_*), for the scan
    two_digit: np.ndarray
    year: np.ndarray
    #: (raw texts, spec) to write missing reasons from; None once every reason is written
    _unsaid: tuple[pa.Array, ParseSpec] | None = None
    _known: np.ndarray | None = None  # rows whose reason is written (when ``_unsaid``)
    _zoned: bool = False  # whether ``_apply_zone`` ran on this result

    @property
    def reason(self) -> np.ndarray:
        """Why each text is not PARSED (None where it is), every sentence written."""
        if self._unsaid is not None:
            self._write(np.arange(len(self.state)))
            self._unsaid = self._known = None
        return self._reason

    @reason.setter
    def reason(self, value: np.ndarray) -> None:
        self._reason = value

    def reason_of(self, rows: np.ndarray) -> np.ndarray:
        """The reasons of some rows only, written for those rows if not yet."""
        rows = np.asarray(rows, dtype=np.int64)
        self._write(rows)
        return self._reason[rows]

    def _write(self, rows: np.ndarray) -> None:
        if self._unsaid is not None and len(rows):
            if self._known is None:
                # reasons are str or None; pd.isna tests them in a C loop
                self._known = (self.state == CellState.PARSED) | ~pd.isna(self._reason)
            todo = np.unique(rows[~self._known[rows]])
            if len(todo):
                raw, spec = self._unsaid
                again = parse_texts(raw.take(pa.array(todo)), spec)
                if self._zoned:
                    _apply_zone(again, spec)
                self._reason[todo] = again.reason
                self._known[todo] = True


def _empty_result(n: int) -> TextResult:
    return TextResult(
        value=np.full(n, np.datetime64("NaT"), dtype="datetime64[us]"),
        offset=np.full(n, NAIVE, dtype=np.int32),
        has_time=np.zeros(n, dtype=bool),
        state=np.full(n, CellState.FAILED, dtype=np.int8),
        pattern=np.full(n, -1, dtype=np.int16),
        _reason=np.full(n, None, dtype=object),
        timed=np.zeros(n, dtype=bool),
        order=np.zeros(n, dtype=np.int8),
        two_digit=np.zeros(n, dtype=bool),
        year=np.zeros(n, dtype=np.int64),
    )


def _as_array(texts: object) -> pa.Array:
    if isinstance(texts, pa.ChunkedArray):
        texts = texts.combine_chunks()
    if isinstance(texts, pa.Array):
        return texts.cast(pa.string())
    return pa.array(np.asarray(texts, dtype=object), type=pa.string(), from_pandas=True)


def parse_texts(
    texts: object,
    spec: ParseSpec,
    *,
    norm: pa.Array | None = None,
    feats: dict[str, np.ndarray] | None = None,
    folded: pa.Array | None = None,
    explain: bool = True,
) -> TextResult:
    """Parse texts (a sequence, numpy array or Arrow array of str) with ``spec``. ``norm``,
    ``feats`` (from ``normalise`` and ``fields.features``) and ``folded`` (the texts trimmed
    and lower-cased, ``fold_texts``) may be passed when already known. Without ``explain``
    the reasons are written only when asked for (see ``TextResult``)."""
    raw = _as_array(texts)
    before = _fields._explaining()
    _fields._LOCAL.explain = explain
    try:
        out = _parse_texts(raw, spec, norm, feats, folded)
    finally:
        _fields._LOCAL.explain = before
    if not explain:
        out._unsaid = (raw, spec)
    return out


def _parse_texts(
    raw: pa.Array,
    spec: ParseSpec,
    norm: pa.Array | None,
    feats: dict[str, np.ndarray] | None,
    folded: pa.Array | None = None,
) -> TextResult:
    n = len(raw)
    out = _empty_result(n)
    if n == 0:
        return out
    if norm is None:
        norm = normalise(raw)
    # Blank tokens compare with the text trimmed and case-folded (ParseSpec's contract).
    folded_tokens = {t.strip().casefold() for t in spec.blank_tokens}
    folded_tokens |= {t.strip().lower() for t in spec.blank_tokens}
    tokens = pa.array(sorted(folded_tokens), pa.string())
    blank = np.zeros(n, dtype=bool)
    if len(tokens):
        if folded is None or len(folded) != n:
            folded = fold_texts(raw)
        blank = pc.is_in(folded, value_set=tokens).to_numpy(zero_copy_only=False)
        bi = np.flatnonzero(blank)
        out.reason[bi] = [f'treated as blank: "{s}"' for s in raw.take(bi).to_pylist()]
    out.state[blank] = CellState.BLANK
    nothing = pc.equal(pc.utf8_length(norm), 0).to_numpy(zero_copy_only=False) & ~blank
    if nothing.any():
        out.reason[nothing] = "no date here: only punctuation"
    remaining = np.flatnonzero(~blank & ~nothing)
    if not isinstance(feats, _Features) or len(feats.texts) != n:
        feats = features(norm)
    rivals_done = False
    for k, pid in enumerate(spec.patterns):
        if len(remaining) == 0:
            break
        if pid == DATE_CELL or (pid in spec.rivals and rivals_done):
            continue
        if len(remaining) == n:  # every text still unread: no copy
            sub, sub_feats = norm, feats
        else:
            sub = norm.take(pa.array(remaining))
            sub_feats = feats.subset(remaining, sub)
        if pid in spec.rivals:
            rivals_done = True
            r, ks = _read_rivals(sub, sub_feats, spec)
        else:
            r = read_pattern(pattern(pid), sub, spec, sub_feats)
            ks = np.full(len(remaining), k, dtype=np.int16)
        _take(out, remaining, r, ks)
        done = r.ok | r.ambiguous
        remaining = remaining[~done]
    if len(remaining):
        _explain_unread(out, remaining, norm, spec)
    if spec.plausible:
        _doubt_numbers(out, norm, feats, spec)
    return out


def fold_texts(texts: pa.Array, *, lower: pa.Array | None = None) -> pa.Array:
    """Texts lower-cased and trimmed of white space, as blank tokens are compared.
    ``lower``: ``lower_case(texts)``, when already known."""
    return pc.utf8_trim_whitespace(lower_case(texts) if lower is None else lower)


#: Dates written on purpose to mean "no date": a number reading them keeps its reading.
_SENTINELS = np.array(
    ["1899-12-30", "1899-12-31", "1900-01-01", "1970-01-01", "9999-12-31"], dtype="datetime64[us]"
)


_NAT = np.iinfo(np.int64).min  # NaT as an int64 datetime64 value


def _doubt_numbers(out: TextResult, norm: pa.Array, feats: _Features, spec: ParseSpec) -> None:
    """Numbers read outside their pattern's plausible years that another number reading also
    reads become AMBIGUOUS, with both readings in the reason (see ``ParseSpec.plausible``)."""
    # A year before ``lo`` or after ``hi``: a value before 1 January of ``lo`` or from
    # 1 January of ``hi + 1`` on (compared as microseconds, no conversion to years).
    value = out.value.view(np.int64)
    parsed = out.state == CellState.PARSED
    doubt = np.zeros(len(out.state), dtype=bool)
    for pid, lo, hi in spec.plausible:
        if pid not in spec.patterns:
            continue
        k = spec.patterns.index(pid)
        first, after = (
            _fields.days_from_civil(
                np.array([lo, hi + 1]), np.ones(2, np.int64), np.ones(2, np.int64)
            )
            * _fields.US_PER_DAY
        )
        doubt |= parsed & (out.pattern == k) & ((value < first) | (value >= after))
    if not doubt.any():
        return
    doubt &= ~np.isin(out.value, _SENTINELS)
    if not doubt.any():
        return
    idx = np.flatnonzero(doubt)
    sub = norm.take(pa.array(idx))
    sub_feats = feats.subset(idx, sub)
    # only whether and how each other number reading reads them counts: no reasons
    others = [
        (alt, read_pattern(pattern(alt), sub, spec, sub_feats, explain=False))
        for alt in spec.alternates
    ]
    serial_hi = next((hi for pid, _, hi in spec.plausible if pid == "serial"), 0)
    years_alone = _year_alone(sub, serial_hi)
    own_pid = np.array(spec.patterns, dtype=object)[out.pattern[idx]]
    own_value = out.value[idx].astype(np.int64)
    own_has_time = out.has_time[idx].copy()
    # another reading: the year alone (for a serial), or another number reading's other date
    more = (own_pid == "serial") & np.array([y is not None for y in years_alone], dtype=bool)
    for alt, r in others:
        more |= (own_pid != alt) & r.ok & (r.value != own_value)
    if not more.any():
        return
    amb = idx[more]
    out.state[amb] = CellState.AMBIGUOUS
    out.value[amb] = np.datetime64("NaT")
    out.has_time[amb] = False
    if not _fields._explaining():  # the sentences are written when asked for
        return
    names = {p: label(p, date_system=spec.date_system) for p in (*spec.patterns, *spec.alternates)}
    at = np.flatnonzero(more)
    own_iso = iso_text(own_value[at].view("datetime64[us]"), out.offset[amb], own_has_time[at])
    alt_iso = {
        alt: iso_text(
            np.where(r.ok[at], r.value[at], _NAT).view("datetime64[us]"),
            r.offset[at],
            r.has_time[at],
        )
        for alt, r in others
    }
    reasons = []
    for n, j in enumerate(at):  # per ambiguous distinct number: its sentence
        own = own_pid[j]
        readings = [f"{own_iso[n]} ({names[own]})"]
        if own == "serial" and years_alone[j]:
            readings.append(f"the year {years_alone[j]} alone, with no month or day")
        for alt, r in others:
            if alt != own and r.ok[j] and r.value[j] != own_value[j]:
                readings.append(f"{alt_iso[alt][n]} ({names[alt]})")
        reasons.append(
            "could be " + " or ".join(readings) + "; the first is outside the years "
            "this column's numbers otherwise give"
        )
    out.reason[amb] = np.array(reasons, dtype=object)


def _year_alone(texts: pa.Array, last: int) -> list[str | None]:
    """The year a whole four-digit number ("2024" or "2024.0", 1850 to ``last``) may stand for
    alone: read as a serial it lands in 1905–1908, so among real serials it is most likely a
    year (common practice, no source). 2225 (a 1904-system serial for 1910) is no such year."""
    hit = pc.extract_regex(texts, r"^(?P<y>[12]\d{3})(?:\.0*)?$")
    return [
        None if h is None or not 1850 <= int(h["y"]) <= last else h["y"] for h in hit.to_pylist()
    ]


def _read_rivals(
    texts: pa.Array, feats: dict[str, np.ndarray], spec: ParseSpec
) -> tuple[Reading, np.ndarray]:
    """Read texts with every rival pattern; where two read a text as different dates the
    result is ambiguous, otherwise the first that reads it wins."""
    n = len(texts)
    comb = Reading(
        matched=np.zeros(n, bool),
        ok=np.zeros(n, bool),
        ambiguous=np.zeros(n, bool),
        value=np.zeros(n, np.int64),
        offset=np.full(n, NAIVE, np.int32),
        has_time=np.zeros(n, bool),
        timed=np.zeros(n, bool),
        reason=np.full(n, None, object),
        order=np.zeros(n, np.int8),
        two_digit=np.zeros(n, bool),
        year=np.zeros(n, np.int64),
    )
    ks = np.full(n, -1, dtype=np.int16)
    reads = [
        (k, pid, read_pattern(pattern(pid), texts, spec, feats))
        for k, pid in enumerate(spec.patterns)
        if pid in spec.rivals
    ]
    against = _against_order(texts, feats, spec, reads)
    for k, _pid, r in reads:
        take = r.ok & ~comb.ok
        for f in ("value", "offset", "has_time", "timed", "order", "two_digit", "year"):
            getattr(comb, f)[take] = getattr(r, f)[take]
        ks[take] = k
        comb.ok |= take
        first_fail = r.matched & ~r.ok & ~comb.matched
        comb.reason[first_fail] = r.reason[first_fail]
        ks[first_fail] = k
        comb.matched |= r.matched
    conflict = np.zeros(n, bool)
    for _, _, r in reads:
        conflict |= r.ok & comb.ok & ((r.value != comb.value) | (r.offset != comb.offset))
    explain = _fields._explaining()
    if conflict.any() and explain:
        idx = np.flatnonzero(conflict)
        texts_by = []
        for _, pid, r in reads:
            iso = iso_text(r.value[idx].view("datetime64[us]"), r.offset[idx], r.has_time[idx])
            labs = _rival_labels(pid, r, idx, spec, against)
            shown = [f"{t} ({lab})" for t, lab in zip(iso, labs, strict=True)]
            texts_by.append(np.where(r.ok[idx], shown, ""))
        comb.reason[idx] = [
            "could be " + " or ".join(t for t in row if t) + "; nothing in the column decides"
            for row in zip(*texts_by, strict=True)
        ]
    # A rival that is itself undecided (24/01/05 read D/M/YY or M/D/YY) keeps the cell open
    # even where another rival (YY/MM/DD) reads it: taking that one would be a guess.
    # Its reason replaces that of a rival that failed on the text (31/04/20: no 31 April 2020,
    # but 2031-04-20 or 1931-04-20 year first).
    own = np.zeros(n, bool)
    for _, _, r in reads:
        ia = np.flatnonzero(r.ambiguous & ~conflict & ~own)
        comb.reason[ia] = r.reason[ia]
        own[ia] = True
    if own.any():
        for _, pid, r in reads:
            io = np.flatnonzero(own & r.ok) if explain else ()
            if len(io):
                iso = iso_text(r.value[io].view("datetime64[us]"), r.offset[io], r.has_time[io])
                lab = label(pid, date_system=spec.date_system)
                comb.reason[io] = [
                    f"could be {t} ({lab}), or " + str(why).removeprefix("could be ")
                    for t, why in zip(iso, comb.reason[io], strict=True)
                ]
        ks[own & (ks < 0)] = next(k for k, pid, r in reads if r.ambiguous.any())
        conflict |= own
    comb.ambiguous = conflict
    comb.ok &= ~conflict
    return comb, ks


def _against_order(
    texts: pa.Array, feats: _Features, spec: ParseSpec, reads: list[tuple[int, str, Reading]]
) -> np.ndarray:
    """Texts a YY/MM/DD rival reads that the D/M/YY (or M/D/YY) rival reads only in the day
    order the spec did not choose (25/04/18 in a month-first column). The column's day order
    says nothing of where a two-digit year stands, so that reading still counts: such a text
    is ambiguous, not silently year first. The num rival's reading is widened in place."""
    n = len(texts)
    against = np.zeros(n, bool)
    if spec.day_order is None:
        return against
    first = np.zeros(n, bool)
    for _, pid, r in reads:
        if pid.startswith("yymd-"):
            first |= r.ok
    if not first.any():
        return against
    other = replace(spec, day_order="mdy" if spec.day_order == "dmy" else "dmy")
    for _, pid, r in reads:
        if pattern(pid).kind != "num":
            continue
        idx = np.flatnonzero(r.matched & ~r.ok & ~r.ambiguous & first)
        if not len(idx):
            continue
        sub = texts.take(pa.array(idx))
        r2 = read_pattern(pattern(pid), sub, other, feats.subset(idx, sub))
        read = r2.ok | r2.ambiguous  # ambiguous: its century is undecided too
        hit = idx[read]
        for f in ("value", "offset", "has_time", "timed", "order", "two_digit", "year"):
            getattr(r, f)[hit] = getattr(r2, f)[read]
        r.ok[hit] = r2.ok[read]
        r.ambiguous[hit] = r2.ambiguous[read]
        r.reason[hit] = r2.reason[read]
        against[hit] = True
    return against


def _rival_labels(
    pid: str, r: Reading, idx: np.ndarray, spec: ParseSpec, against: np.ndarray
) -> np.ndarray:
    """Labels of one rival's readings of some texts: "D/M/YY", "M/D/YYYY", "YY/MM/DD", and
    for a reading against the spec's day order, "D/M/YY, against the column's month-first
    order". Undecided day orders are named by the order the text's fields allow."""
    kw = {"date_system": spec.date_system}
    if pattern(pid).kind != "num":
        return np.where(
            r.two_digit[idx],
            label(pid, two_digit_year=True, day_order=spec.day_order, **kw),
            label(pid, day_order=spec.day_order, **kw),
        )
    two = r.two_digit[idx]
    ag = against[idx]
    if spec.day_order is None:
        code = r.order[idx]
        order = np.where(code == EV_DMY, "dmy", np.where(code == EV_MDY, "mdy", ""))
    else:
        order = np.where(ag, "mdy" if spec.day_order == "dmy" else "dmy", spec.day_order)
    out = np.empty(len(idx), dtype=object)
    for o in ("dmy", "mdy", ""):
        for t in (False, True):
            m = (order == o) & (two == t)
            if m.any():
                out[m] = label(pid, day_order=o or None, two_digit_year=t, **kw)
    if ag.any():
        said = "day-first" if spec.day_order == "dmy" else "month-first"
        out[ag] = out[ag] + f", against the column's {said} order"
    return out


def _take(out: TextResult, rows: np.ndarray, r: Reading, ks: np.ndarray) -> None:
    # Without reasons (the scan's parse) every sentence of ``r`` is None: none is copied.
    explain = _fields._explaining()
    done = r.ok | r.ambiguous
    at = rows[done]
    out.value[at] = r.value[done].view("datetime64[us]")
    out.offset[at] = r.offset[done]
    out.has_time[at] = r.has_time[done]
    out.timed[at] = r.timed[done]
    out.state[at] = np.where(r.ok[done], CellState.PARSED, CellState.AMBIGUOUS)
    out.pattern[at] = ks[done]
    if explain:
        out.reason[at] = np.where(r.ok[done], None, r.reason[done])
    amb_at = rows[r.ambiguous]
    out.value[amb_at] = np.datetime64("NaT")
    out.has_time[amb_at] = False
    seen = rows[r.matched]
    out.order[seen] = r.order[r.matched]
    out.two_digit[seen] = r.two_digit[r.matched]
    out.year[seen] = r.year[r.matched]
    # Shape matched but the value is impossible: keep the first such reason.
    failed = r.matched & ~done
    first = failed & (out.pattern[rows] < 0)
    if explain:
        out.reason[rows[first]] = r.reason[first]
    out.pattern[rows[first]] = ks[first]


def _explain_unread(out: TextResult, rows: np.ndarray, norm: pa.Array, spec: ParseSpec) -> None:
    no_reason = rows[out.pattern[rows] < 0]
    if len(no_reason) == 0:
        return
    sub = norm.take(pa.array(no_reason))
    time_only = pc.match_substring_regex(sub, _TIME_ONLY).to_numpy(zero_copy_only=False)
    labels = ", ".join(
        dict.fromkeys(
            label(p, day_order=spec.day_order, date_system=spec.date_system)
            for p in spec.patterns
            if p != DATE_CELL
        )
    )
    generic = f"no pattern of this column reads it ({labels})" if labels else "no pattern given"
    out.reason[no_reason] = np.where(time_only, "a time of day with no date", generic)


def _apply_zone(res: TextResult, spec: ParseSpec) -> None:
    """Move aware values (and naive ones, when ``naive_zone`` is set) to ``spec.zone``."""
    if not spec.zone:
        return
    res._zoned = True
    parsed = res.state == CellState.PARSED
    aware = parsed & (res.offset != NAIVE)
    utc = res.value.copy()
    utc[aware] = res.value[aware] - res.offset[aware].astype("timedelta64[m]")
    movable = aware.copy()
    if spec.naive_zone:
        naive = parsed & (res.offset == NAIVE) & res.timed  # a date is no instant
        if naive.any():
            local = pd.Series(res.value[naive]).dt.tz_localize(
                spec.naive_zone, ambiguous="NaT", nonexistent="NaT"
            )
            as_utc = local.dt.tz_convert("UTC").dt.tz_localize(None).to_numpy("datetime64[us]")
            lost = np.isnat(as_utc)
            idx = np.flatnonzero(naive)
            utc[idx] = as_utc
            bad = idx[lost]
            res.state[bad] = CellState.FAILED
            res._reason[bad] = (
                f"this wall-clock time is skipped or repeated by a clock change in "
                f"{spec.naive_zone}, so its instant is not known"
            )
            movable[idx[~lost]] = True
    if not movable.any():
        return
    if spec.zone.upper() == "UTC":
        res.value[movable] = utc[movable]
        res.offset[movable] = 0
    else:
        conv = pd.Series(utc[movable]).dt.tz_localize("UTC").dt.tz_convert(spec.zone)
        wall = conv.dt.tz_localize(None).to_numpy("datetime64[us]")
        res.value[movable] = wall
        res.offset[movable] = ((wall - utc[movable]) // np.timedelta64(1, "m")).astype(np.int32)
    res.has_time[movable] = True


def iso_text(value: np.ndarray, offset: np.ndarray, has_time: np.ndarray) -> np.ndarray:
    """ISO 8601 text of parsed values: "2024-03-01", "2024-03-01T10:30:00",
    "2024-03-01T10:30:00.250000+02:00"; "" where there is no value. Vectorised."""
    n = len(value)
    out = np.full(n, "", dtype=object)
    ok = ~np.isnat(value)
    if not ok.any():
        return out
    v = value[ok]
    frac = (v - v.astype("datetime64[s]")).astype(np.int64) != 0
    day = np.datetime_as_string(v, unit="D").astype(object)
    sec = np.datetime_as_string(v, unit="s").astype(object)
    usec = np.datetime_as_string(v, unit="us").astype(object)
    timed = has_time[ok] | (offset[ok] != NAIVE)
    text = np.where(timed, np.where(frac, usec, sec), day)
    off = offset[ok].astype(np.int64)
    aware = off != NAIVE
    if aware.any():
        a = np.abs(off[aware])
        sign = np.where(off[aware] < 0, "-", "+")
        hh = np.char.zfill((a // 60).astype(str), 2)
        mm = np.char.zfill((a % 60).astype(str), 2)
        suffix = np.char.add(np.char.add(np.char.add(sign, hh), ":"), mm).astype(object)
        text[aware] = text[aware] + suffix
    out[ok] = text
    return out


def _numbers_text(values: np.ndarray) -> np.ndarray:
    """Distinct number cells (or other non-text values) as text. Whole numbers only (an ID
    column) are written by Arrow in one pass; anything else takes one Python call each."""
    if len(values) and pd.api.types.infer_dtype(values, skipna=False) == "integer":
        try:
            ints = np.asarray(values, dtype=np.int64)
        except OverflowError:  # beyond 64 bits: Python writes it
            ints = None
        if ints is not None:
            return _ints_text(ints)
    return np.array([_num_text(v) for v in values], dtype=object)


def _ints_text(ints: np.ndarray) -> np.ndarray:
    """int64 numbers as Python's str() writes them, by Arrow in one pass."""
    return pc.cast(pa.array(ints), pa.string()).to_numpy(zero_copy_only=False)


#: Whole numbers up to this size are exact as float64 (IEEE 754 binary64: 53-bit significand).
_EXACT_WHOLE = 2**53


def _factorize_numbers(values: np.ndarray, kinds: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(code of each, distinct numbers as text) of number cells, equal numbers (3 and 3.0)
    coded alike, in order of first appearance. The numbers are hashed as float64 when that is
    exact (every whole-number cell within ±2**53); otherwise as Python objects."""
    nums: np.ndarray | None = None
    plain = pd.api.types.infer_dtype(values, skipna=False)  # ints and floats only (no Decimal)
    try:
        if plain in ("integer", "floating", "mixed-integer-float"):
            nums = np.asarray(values, dtype=np.float64)
        whole = kinds == CellKind.INT
        if nums is not None and whole.any():
            ints = np.asarray(values[whole], dtype=np.int64)
            if ((ints > _EXACT_WHOLE) | (ints < -_EXACT_WHOLE)).any():
                nums = None
    except (OverflowError, TypeError, ValueError):  # beyond 64 bits, or not numbers
        nums = None
    if nums is None:
        codes, objs = pd.factorize(values, use_na_sentinel=False)
        return codes, _numbers_text(objs)
    codes, uniq = pd.factorize(nums, use_na_sentinel=False)
    return codes, _floats_text(uniq)


def _floats_text(values: np.ndarray) -> np.ndarray:
    """float64 numbers as ``_num_text`` writes them: whole ones as integers (by Arrow, in one
    pass), others as Python's shortest round-trip repr."""
    out = np.empty(len(values), dtype=object)
    whole = np.isfinite(values) & (np.floor(values) == values) & (np.abs(values) < 2.0**63)
    if whole.any():
        out[whole] = _ints_text(values[whole].astype(np.int64))
    rest = np.flatnonzero(~whole)
    out[rest] = [_num_text(float(v)) for v in values[rest]]
    return out


def _num_text(v: object) -> str:
    if isinstance(v, float):
        return str(int(v)) if v.is_integer() else repr(v)
    return str(v)


#: Cell kinds read as text (numbers too: serials and epochs are written as numbers).
TEXT_LIKE = np.zeros(len(CellKind), dtype=bool)
TEXT_LIKE[[CellKind.TEXT, CellKind.INT, CellKind.FLOAT, CellKind.ERROR]] = True

NUMBER_KIND = np.zeros(len(CellKind), dtype=bool)
NUMBER_KIND[[CellKind.INT, CellKind.FLOAT]] = True

#: Text-like cells that are no numbers (hashed as strings).
TEXT_CELL = TEXT_LIKE & ~NUMBER_KIND

_DISTINCT: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def _of_kinds(kinds: np.ndarray, wanted: np.ndarray, count: np.ndarray) -> np.ndarray:
    """Which cells have a kind ``wanted`` marks (a table by kind), by comparing with the kinds
    the column has (``count``: cells per kind): quicker than a lookup by every cell's kind."""
    mask = np.zeros(len(kinds), dtype=bool)
    for k in np.flatnonzero(wanted & (count > 0)):
        mask |= kinds == k
    return mask


def distinct_texts(column: RawColumn) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(row positions of text-like cells, code of each, distinct texts), computed once per
    column (a RawColumn is never changed, so the scan and the parse share the work).
    Text cells and number cells are factorised apart, so only distinct numbers are turned
    into text."""
    hit = _DISTINCT.get(column)
    if hit is not None:
        return hit
    kinds = column.kinds
    n = len(column)
    count = column.kind_counts()
    index_type = np.int32 if n < 2**31 else np.int64  # kept for the column's life
    if int(count[TEXT_LIKE].sum()) == n:
        rows = np.arange(n, dtype=index_type)
    else:
        rows = np.flatnonzero(_of_kinds(kinds, TEXT_LIKE, count)).astype(index_type)
    arrow: pa.Array | None = None  # the distinct texts as Arrow, when hashing made them so
    if not len(rows):
        out = (rows.astype(np.int64), np.zeros(0, np.int64), np.zeros(0, dtype=object))
    elif column.arrow is not None:  # text cells only, held as Arrow strings
        arr = column.arrow if len(rows) == n else column.arrow.take(rows)
        codes, dictionary = _encode_arrow(arr)
        out = (rows, codes, _as_objects(dictionary))
        arrow = dictionary.cast(pa.string())  # a large_string column: the engine's own type
    else:
        finish, skip = None, None
        if count[TEXT_CELL].sum():
            # the text cells' hashing may run on a helper thread while the numbers are read
            skip = ~_of_kinds(kinds, TEXT_CELL, count)
            finish = start_encoding(column.values, skip)
        numbers = None
        if count[NUMBER_KIND].sum():
            at = np.flatnonzero(_of_kinds(kinds, NUMBER_KIND, count))
            numbers = at, _factorize_numbers(column.values[at], kinds[at])
        if finish is not None:
            hashed = finish()
            if hashed is None:  # not every text cell a str: pandas hashes them
                code_at, uniques = _factorize_objects(column.values, skip)
            else:
                code_at, uniques, arrow = hashed
        else:
            code_at, uniques = np.full(n, -1, dtype=index_type), np.zeros(0, dtype=object)
        if numbers is not None:
            at, (codes, texts) = numbers
            code_at = code_at.astype(index_type, copy=False)  # writable (as the hashing gives them)
            code_at[at] = codes + len(uniques)
            uniques = np.concatenate([uniques, texts])
            if arrow is not None:
                arrow = pa.concat_arrays([arrow.cast(pa.string()), pa.array(texts, pa.string())])
        # every cell text or number (no blanks, no date cells): the codes are the cells'
        out = (rows, code_at if len(rows) == n else code_at[rows], uniques)
    if n < 2**31:
        out = (out[0].astype(np.int32, copy=False), out[1].astype(np.int32, copy=False), out[2])
    _DISTINCT[column] = out
    if arrow is not None:
        _DISTINCT_ARROW[column] = arrow
    return out


_DISTINCT_ARROW: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def cells_and_first(codes: np.ndarray, k: int) -> tuple[np.ndarray, np.ndarray]:
    """For codes 0…k-1 (``distinct_texts``' codes): how many cells each distinct text has, and
    the position (among the codes) of its first cell; -1 for a text with none."""
    cells = np.bincount(codes, minlength=k).astype(np.int64)
    first = np.full(k, -1, dtype=np.int64)
    first[codes[::-1]] = np.arange(len(codes))[::-1]  # the last write is the first cell
    return cells, first


def distinct_arrow(column: RawColumn) -> pa.Array:
    """``distinct_texts(column)``'s distinct texts as an Arrow string array (kept when hashing
    made one, so they are not turned back from Python strings)."""
    texts = distinct_texts(column)[2]
    hit = _DISTINCT_ARROW.get(column)
    if hit is None or len(hit) != len(texts):
        hit = pa.array(texts, type=pa.string())
        _DISTINCT_ARROW[column] = hit
    return hit


def _encode_arrow(arr: pa.Array) -> tuple[np.ndarray, pa.Array]:
    """(code of each value, distinct values) of an Arrow string array; distinct values in order
    of first appearance, nulls coded -1."""
    enc = pc.dictionary_encode(arr)
    codes = enc.indices
    if codes.null_count:
        codes = pc.fill_null(codes, -1)
    return codes.to_numpy(zero_copy_only=False), enc.dictionary


def _as_objects(arr: pa.Array) -> np.ndarray:
    return arr.to_numpy(zero_copy_only=False).astype(object, copy=False)


def _factorize_objects(values: np.ndarray, skip: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(codes, distinct values as text) of the cells of an object array not in ``skip``, by
    pandas, for text cells Arrow cannot take as strings (such as an error cell from a reader
    that gives no text; ``encode.start_encoding`` hashes the others about twice as fast);
    non-strings become text. Skipped cells are coded -1."""
    at = np.flatnonzero(~skip)
    codes, uniques = pd.factorize(values[at])
    if pd.api.types.infer_dtype(uniques, skipna=False) != "string":
        uniques = _numbers_text(uniques)
    code_at = np.full(len(values), -1, dtype=np.int64)
    code_at[at] = codes
    return code_at, np.asarray(uniques, dtype=object)


_RESULTS: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def remember(column: RawColumn, spec: ParseSpec, res: TextResult) -> None:
    """Keep the result of ``spec`` over the distinct texts of ``column`` (zones applied), so
    parsing the column with the spec the scan just chose costs only the scatter to cells."""
    _RESULTS.setdefault(column, {})
    _RESULTS[column].clear()
    _RESULTS[column][spec] = res


def parse_column(
    column: RawColumn, spec: ParseSpec, facts: SourceFacts | None = None
) -> ParsedColumn:
    """Parse every cell of ``column`` with ``spec``; row-aligned result, one state per cell.

    ``facts`` is information only: the spec's ``date_system`` decides how serials are read.
    """
    n = len(column)
    kinds = column.kinds
    nat = np.datetime64("NaT")
    blank = (  # per array: (type, value of a cell with no text)
        ("datetime64[us]", nat),
        (np.int32, NAIVE),
        (bool, False),
        (np.int8, CellState.BLANK),
        (np.int16, -1),
    )
    reason = np.full(n, None, dtype=object)
    patterns = tuple(spec.patterns)
    rows, codes, uniques = distinct_texts(column)
    if not len(rows):
        value, offset, has_time, state, pat = (np.full(n, fill, dtype=typ) for typ, fill in blank)
    else:
        res = _RESULTS.get(column, {}).get(spec)
        if res is None or len(res.state) != len(uniques):
            res = parse_texts(uniques, spec)
            _apply_zone(res, spec)
        # each cell's code + 1, 0 where no text: 0 takes the value of a cell with no text,
        # put first (numpy gathers fastest with its own index type, and every index valid)
        at = np.zeros(n, dtype=np.intp)
        if len(rows) == n:  # every cell is text
            np.add(codes, 1, out=at)
        else:
            at[rows] = codes + 1
        # one gather per array (cheaper than a gather and a scatter to the text cells)
        per_text = (res.value, res.offset, res.has_time, res.state, res.pattern)
        value, offset, has_time, state, pat = (
            _gather(arr, typ, fill, at) for arr, (typ, fill) in zip(per_text, blank, strict=True)
        )
        # reasons are Python objects: copy only those there are (most cells read have none)
        said = ~pd.isna(res.reason)  # a C loop (a compare with None calls Python per text)
        if said.any():
            hit = _gather(said, bool, False, at)
            reason[hit] = res.reason[at[hit] - 1]
    count = column.kind_counts()
    if count[CellKind.DATE] or count[CellKind.DATETIME]:
        dated = (kinds == CellKind.DATE) | (kinds == CellKind.DATETIME)
        if DATE_CELL not in patterns:
            patterns = (*patterns, DATE_CELL)
        _date_cells(column, dated, spec, value, offset, has_time, state, reason)
        pat[dated & (state == CellState.PARSED)] = patterns.index(DATE_CELL)
    for kind, why in (
        (CellKind.TIME, "a time-of-day cell with no date"),
        (CellKind.BOOL, "a true/false cell, not a date"),
    ):
        if count[kind]:
            hit = kinds == kind
            state[hit] = CellState.FAILED
            reason[hit] = why
    return ParsedColumn(
        source=column.name,
        value=value,
        offset_min=offset,
        has_time=has_time,
        state=state,
        pattern=pat,
        patterns=patterns,
        reason=reason,
        labels=pattern_labels(patterns, spec, res if len(rows) else None),
    )


def pattern_labels(
    patterns: tuple[str, ...], spec: ParseSpec, res: TextResult | None = None
) -> tuple[str, ...]:
    """A short human label for each pattern a column was read with, in the spec's day order
    and date system: "D/M/YYYY", "serial 1900", "date cell". With the texts' result ``res``, a
    pattern whose every reading wrote a two-digit year is labelled so ("D/M/YY"); one with
    both kinds of year names both ("D/M/YY or D/M/YYYY")."""
    kw = {"day_order": spec.day_order, "date_system": spec.date_system}
    out = []
    for k, pid in enumerate(patterns):
        full = label(pid, **kw)
        short = label(pid, two_digit_year=True, **kw)
        two = np.zeros(0, dtype=bool)
        if res is not None and short != full:
            read = (res.pattern == k) & (res.state != CellState.FAILED)
            two = res.two_digit[read]
        if not two.any():
            out.append(full)
        elif two.all():
            out.append(short)
        else:
            out.append(f"{short} or {full}")
    return tuple(out)


def _gather(per_text: np.ndarray, typ: object, fill: object, at: np.ndarray) -> np.ndarray:
    """``per_text[at - 1]`` as ``typ``, where ``at`` 0 gives ``fill`` (a cell with no text)."""
    if (per_text == fill).all():  # e.g. no offsets, no times: nothing to gather
        return np.full(len(at), fill, dtype=typ)
    ext = np.empty(len(per_text) + 1, dtype=typ)
    ext[0] = fill
    ext[1:] = per_text
    return np.take(ext, at, mode="clip")  # every index is valid: clip is the quickest check


def _date_cells(
    column: RawColumn,
    dated: np.ndarray,
    spec: ParseSpec,
    value: np.ndarray,
    offset: np.ndarray,
    has_time: np.ndarray,
    state: np.ndarray,
    reason: np.ndarray,
) -> None:
    idx = np.flatnonzero(dated)
    codes, uniques = pd.factorize(column.values[idx])
    u_val = np.full(len(uniques), np.datetime64("NaT"), dtype="datetime64[us]")
    u_off = np.full(len(uniques), NAIVE, dtype=np.int32)
    for j, v in enumerate(uniques):  # per distinct date cell: Python objects from the reader
        tz = getattr(v, "tzinfo", None)
        if tz is not None and v.utcoffset() is not None:
            u_off[j] = int(v.utcoffset().total_seconds() // 60)
            v = v.replace(tzinfo=None)
        u_val[j] = np.datetime64(v, "us")
    res = _empty_result(len(uniques))
    res.value, res.offset = u_val, u_off
    res.state[:] = CellState.PARSED
    day_us = (u_val - u_val.astype("datetime64[D]")).astype(np.int64)
    res.has_time = (day_us != 0) | (u_off != NAIVE)
    res.timed = res.has_time | np.array([isinstance(v, _dt.datetime) for v in uniques], dtype=bool)
    _apply_zone(res, spec)
    value[idx] = res.value[codes]
    offset[idx] = res.offset[codes]
    has_time[idx] = res.has_time[codes]
    state[idx] = res.state[codes]
    reason[idx] = res.reason[codes]


def parse_series(series: pd.Series, spec: ParseSpec) -> ParsedColumn:
    """Parse a pandas Series (texts, numbers or dates) with ``spec``, for notebook use."""
    from .table import RawTable

    table = RawTable.from_dataframe(series.to_frame(name=str(series.name or "values")))
    return parse_column(table.columns[0], spec)
