"""Rule steps: which rows break each rule, counts, row numbers, labels and sentences.
Expected rows worked out by hand from the small table below."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

from datemend.core.checks import (
    NotAfter,
    NotAfterColumn,
    WithinRange,
    rule_rows,
    rule_summary,
)
from datemend.core.clean import NAIVE, CellState, CleanTable, ParsedColumn
from datemend.core.steps import ApplyContext
from datemend.core.table import RawTable

CTX = ApplyContext(today=dt.date(2026, 11, 30))

COLS = {
    #        row 2          row 3          row 4         row 5          row 6
    "Born": ["1950-05-05", "2027-01-01", None, "1899-12-31", "2026-11-30T20:00"],
    "Joined": ["2020-01-01", "2026-01-01", "2026-02-02", "2026-03-03", "2026-11-30"],
    "Last": ["2019-12-31", "2026-01-01", "2026-02-01", None, "2026-12-01"],
}


def _table() -> CleanTable:
    raw = RawTable.from_dataframe(pd.DataFrame(COLS), text_only=True)
    parsed = {}
    for name, vals in COLS.items():
        v = np.array(
            [np.datetime64("NaT") if x is None else np.datetime64(x, "us") for x in vals],
            dtype="datetime64[us]",
        )
        n = len(v)
        parsed[name] = ParsedColumn(
            source=name,
            value=v,
            offset_min=np.full(n, NAIVE, np.int32),
            has_time=np.zeros(n, bool),
            state=np.where(np.isnat(v), CellState.FAILED, CellState.PARSED).astype(np.int8),
            pattern=np.zeros(n, np.int16),
            patterns=("iso",),
            reason=np.full(n, None, object),
        )
    return CleanTable(raw, parsed)


RULES = [
    # (rule, offending rows (0-based), why) — by hand from COLS
    (WithinRange(column="Born", earliest="1900-01-01"), [3], "31 Dec 1899 is before 1900"),
    (WithinRange(column="Born", latest="2026-11-30"), [1], "the 30 Nov evening is that day"),
    (
        WithinRange(column="Born", earliest="1950-05-05", latest="2026-11-30"),
        [1, 3],
        "both bounds are allowed days",
    ),
    (NotAfter(column="Born"), [1], "replay day 2026-11-30: 2027 is after it, 30 Nov is not"),
    (NotAfter(column="Born", as_of="2026-11-29"), [1, 4], "fixed reference day"),
    (NotAfterColumn(first="Joined", second="Last"), [0, 2], "joined after last outing"),
    (NotAfterColumn(first="Born", second="Joined"), [1], "born after joining"),
    (NotAfterColumn(first="Born", second="Joined", strict=True), [1, 4], "same day breaks strict"),
    (NotAfterColumn(first="Joined", second="Last", strict=True), [0, 1, 2], "equal day row 1"),
]


def test_rule_rows_unique():
    keys = [r[0] for r in RULES]
    assert len(keys) == len(set(keys))


@pytest.mark.parametrize(("rule", "rows", "why"), RULES, ids=[r[2] for r in RULES])
def test_offending_rows(rule, rows, why):
    out = rule.apply(_table(), CTX)
    mask = out.rule_hits[rule.rule_label]
    assert mask.dtype == bool and len(mask) == 5
    assert list(np.flatnonzero(mask)) == rows, why


def test_missing_dates_break_no_rule():
    out = NotAfterColumn(first="Joined", second="Last").apply(_table(), CTX)
    assert not out.rule_hits["Joined not after Last"][3]  # "Last" is missing in row 3


def test_summary_counts_and_source_rows():
    t = _table()
    for rule in (NotAfter(column="Born", label="born in future"),
                 NotAfterColumn(first="Joined", second="Last")):  # fmt: skip
        t = rule.apply(t, CTX)
    assert rule_summary(t) == {"born in future": 1, "Joined not after Last": 2}
    # the header is file row 1, so data rows 0 and 2 are file rows 2 and 4
    assert list(rule_rows(t, "Joined not after Last")) == [2, 4]


def test_replay_day_comes_from_the_context():
    t = _table()
    later = NotAfter(column="Born").apply(t, ApplyContext(today=dt.date(2027, 1, 1)))
    assert rule_summary(later) == {"Born not after the day of replay": 0}


def test_missing_column_warns():
    out = NotAfter(column="Nope").apply(_table(), CTX)
    assert out.rule_hits == {}
    assert any('"Nope"' in w for w in out.warnings)


def test_sentences_say_what_is_checked():
    assert WithinRange(column="Born", earliest="1900-01-01").describe() == (
        'Check that "Born" is not before 1900-01-01 (both days allowed).'
    )
    assert NotAfter(column="Born").describe() == 'Check that "Born" is not after the day of replay.'
    assert NotAfterColumn(first="Born", second="Joined", strict=True).describe() == (
        'Check that "Born" is before "Joined" in each row.'
    )
