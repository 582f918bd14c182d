"""Fuzzed values through scan and parse (issue 9 point 1).

Hypothesis draws arbitrary strings, numbers and cells of every kind, mixed with date-like text
from a small grammar (so the deep paths of the engine are reached, not only "no pattern"), into
columns of 200+ cells. At least 10,000 values per run. Invariants (issue 9; clean.py contract):

- no exception escapes ``scan_column`` or ``parse_column``;
- the result is row-aligned, one state per cell, arrays of the documented dtypes;
- a PARSED cell has a real date (not NaT, year 1..9999) and a sane UTC offset;
- a cell that is not PARSED and not BLANK carries a reason;
- BLANK only for an empty cell or a blank token of the spec.
"""

from __future__ import annotations

import datetime as dt
import os
import random
from dataclasses import replace

import numpy as np
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

from datemend.core.clean import NAIVE, CellState
from datemend.core.infer import scan_column
from datemend.core.parse import parse_column
from datemend.core.spec import ParseSpec
from datemend.core.table import CellKind, RawColumn, kinds_of

# DATEMEND_PROPERTY_EXAMPLES raises the count for a longer campaign
EXAMPLES = int(os.environ.get("DATEMEND_PROPERTY_EXAMPLES", "20"))
PER_COLUMN = 520  # 20 × 520 = 10,400 values a run (a scan costs about a second: few, long columns)

MONTHS = ["jan", "February", "MARS", "März", "févr.", "dic", "mei", "ago.", "Sept", "okt"]
DAYS = ["Mon", "friday", "Freitag", "sáb", "zo", "Thu,"]
SEPS = ["/", "-", ".", " ", ":", "T", ",", "", "  ", "\t", "/ "]
TAILS = ["", "Z", "+05:30", "-0800", " GMT", " am", "PM", " p.m.", "+24:00", "-99:99", "Z!"]
ODD = [
    "",
    " ",
    "\x00",
    "N/A",
    "unknown",
    "-",
    "00/00/0000",
    "0000-00-00",
    "9" * 40,
    "١٢/٠٤/١٩٨٥",
    "１９８５－０４－１２",
    "🙂",
    "nan",
    "inf",
    "-0",
    "1e10",
    "0x1F",
    "\u200b2024-01-01",
    "2024-02-30",
    "1990-12-31T23:59:60Z",
    "29/02/1900",
    "60",
    "−5",
    "1985-W54-1",
    "1985-367",
    "24:00",
    "T",
    "W",
    "2024-01-01T25:61:61",
    "99999999999999999999",
    "#N/A",
    ";",
    "/",
    "...",
    "x" * 5000,
]


def grammar_value(rng: random.Random) -> str:
    """A date-like string: digit groups, separators, names, times and zones in odd mixes."""
    parts: list[str] = []
    for _ in range(rng.randint(1, 5)):
        r = rng.random()
        if r < 0.55:
            parts.append(str(rng.randint(0, 10 ** rng.randint(1, 5))).zfill(rng.randint(0, 4)))
        elif r < 0.7:
            parts.append(rng.choice(MONTHS))
        elif r < 0.8:
            parts.append(rng.choice(DAYS))
        else:
            parts.append(f"{rng.randint(0, 30)}:{rng.randint(0, 70):02d}")
        parts.append(rng.choice(SEPS))
    text = "".join(parts) + rng.choice(TAILS)
    if rng.random() < 0.1:
        text = text.upper()
    return text


def cell_value(rng: random.Random) -> object:
    """One cell of any kind a reader can produce."""
    r = rng.random()
    if r < 0.45:
        return grammar_value(rng)
    if r < 0.55:
        return rng.choice(ODD)
    if r < 0.65:
        return rng.choice(
            [
                rng.randint(-(10**6), 10**6),
                rng.randint(0, 3 * 10**6),
                rng.randint(10**8, 10**13),
                rng.randint(-(2**63), 2**63 - 1),
                10**30,
            ]
        )
    if r < 0.73:
        return rng.choice(
            [
                rng.uniform(-1e6, 3e6),
                rng.uniform(0, 1),
                float("nan"),
                float("inf"),
                -0.0,
                1e308,
                5e-324,
                rng.uniform(1e9, 2e12),
            ]
        )
    if r < 0.76:
        return rng.random() < 0.5
    if r < 0.82:
        return dt.date.fromordinal(rng.randint(1, dt.date.max.toordinal()))
    if r < 0.88:
        d = dt.datetime.fromordinal(rng.randint(1, dt.date.max.toordinal()))
        d = d.replace(hour=rng.randrange(24), microsecond=rng.randrange(10**6))
        if rng.random() < 0.3:
            d = d.replace(tzinfo=dt.timezone(dt.timedelta(minutes=rng.randint(-1439, 1439))))
        return d
    if r < 0.9:
        return dt.time(rng.randrange(24), rng.randrange(60))
    if r < 0.92:
        return np.int64(rng.randint(-(2**40), 2**40))
    if r < 0.95:
        return None
    return "#" + rng.choice(["N/A", "VALUE!", "REF!", "DIV/0!"])


def make_column(seed: int, drawn: list[object]) -> RawColumn:
    rng = random.Random(seed)
    values: list[object] = [cell_value(rng) for _ in range(PER_COLUMN)]
    # sometimes a column that is mostly one real shape, so scanning picks real patterns
    if rng.random() < 0.5:
        base = rng.choice(["2024-03-{:02d}", "{:d}/3/2024", "3/{:d}/24", "{:d} mars 2024"])
        for i in range(0, PER_COLUMN, 2):
            values[i] = base.format(rng.randint(1, 31))
    for v in drawn:
        values[rng.randrange(PER_COLUMN)] = v
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    kinds = kinds_of(arr)
    errors = np.array([isinstance(v, str) and v.startswith("#") for v in values])
    kinds[errors] = CellKind.ERROR
    return RawColumn("fuzz", arr, kinds)


def problems(col: RawColumn, spec: ParseSpec) -> list[str]:
    """Every cell the parse result does not account for, as sentences (empty when all is well)."""
    out = parse_column(col, spec, None)
    n = len(col)
    bad: list[str] = []
    for name in ("value", "offset_min", "has_time", "state", "pattern", "reason"):
        if len(getattr(out, name)) != n:
            bad.append(f"{name} has {len(getattr(out, name))} cells, not {n}")
    if bad:
        return bad
    if out.value.dtype != np.dtype("datetime64[us]"):
        bad.append(f"values are {out.value.dtype}, not datetime64[us]")
    states = out.state.astype(int)
    known = {int(s) for s in CellState}
    tokens = {t.strip().casefold() for t in spec.blank_tokens}
    text = col.text()
    for i in range(n):
        where = f"cell {i} {col.values[i]!r} (kind {CellKind(col.kinds[i]).name}) with {spec}"
        if states[i] not in known:
            bad.append(f"unknown state {states[i]}: " + where)
            continue
        s = CellState(states[i])
        if s in (CellState.PARSED, CellState.MANUAL):
            v = out.value[i]
            if np.isnat(v):
                bad.append("PARSED without a value: " + where)
                continue
            year = v.astype("datetime64[Y]").astype(int) + 1970
            if not 1 <= year <= 9999:
                bad.append(f"PARSED to year {year}: " + where)
            off = int(out.offset_min[i])
            if off != NAIVE and abs(off) >= 24 * 60:
                bad.append(f"offset {off}: " + where)
        elif s == CellState.BLANK:
            empty = col.kinds[i] == CellKind.EMPTY
            token = text[i] is not None and str(text[i]).strip().casefold() in tokens
            if not (empty or token):
                bad.append("BLANK but neither empty nor a blank token: " + where)
        else:
            r = out.reason[i]
            if not (isinstance(r, str) and r.strip()):
                bad.append("unresolved without a reason: " + where)
    return bad


def check(col: RawColumn, spec: ParseSpec) -> None:
    bad = problems(col, spec)
    assert not bad, f"{len(bad)} cells not accounted for: " + "; ".join(bad[:5])


SEEN = {"values": 0, "columns": 0}


@settings(
    max_examples=EXAMPLES,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
    # no shrinking: each example costs seconds, and a failure already names the cells
    phases=[Phase.explicit, Phase.reuse, Phase.generate],
)
@given(
    seed=st.integers(0, 2**32 - 1),
    drawn=st.lists(
        st.one_of(
            st.text(max_size=40),
            st.integers(),
            st.floats(allow_nan=True, allow_infinity=True),
            st.booleans(),
            st.dates(),
            st.datetimes(),
            st.none(),
        ),
        max_size=25,
    ),
)
def _fuzz_once(seed: int, drawn: list[object]) -> None:
    col = make_column(seed, drawn)
    SEEN["values"] += len(col)
    SEEN["columns"] += 1
    prefer = (None, "dmy", "mdy")[seed % 3]
    report = scan_column(col, None, prefer_day_order=prefer, reference_year=2026)
    assert report.n_rows == len(col)
    for sug in report.suggestions[:2]:
        check(col, sug.spec)
    if report.best is not None:
        spec = report.best.spec
        changed = (
            replace(spec, day_order="mdy", century="past", pivot_year=2026)
            if seed % 2
            else replace(spec, date_system=1904, blank_tokens=("n/a", "-", "unknown"))
        )
        check(col, changed)


def test_fuzzed_columns_never_crash_and_every_cell_is_accounted_for() -> None:
    SEEN.update(values=0, columns=0)
    _fuzz_once()
    assert SEEN["values"] >= 10_000, SEEN
