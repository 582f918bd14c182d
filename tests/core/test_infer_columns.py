"""Scan of whole columns: which columns are dates (likeness), placeholders, the mix label,
examples and failures, languages, sampling, and the table-level ``scan``. Expected counts and
dates are worked out by hand from the columns below."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

import datemend
from datemend.core.clean import CellState
from datemend.core.infer import SAMPLE, scan, scan_column
from datemend.core.parse import parse_column
from datemend.core.progress import Progress
from datemend.core.table import RawColumn, RawTable, kinds_of


def col(values: list[object], name: str = "c", text: bool = True) -> RawColumn:
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    return RawColumn(name, arr, kinds_of(arr, text_only=text))


NOT_DATES = [
    ("ID", [str(i) for i in range(1, 301)], "row numbers 1..300 (serials before 1920)"),
    ("Member no", [str(i) for i in range(10001, 10301)], "member numbers: a dense run of ids"),
    ("Amount", [str(20000 + 37 * i) for i in range(200)], "amounts named as such"),
    ("Year", [str(1980 + i % 40) for i in range(200)], "four-digit years are no serials"),
    ("Notes", ["paid", "late", "joined at the AGM", "moved away"] * 10, "free text"),
    ("Phone", [str(2125550000 + 7919 * i) for i in range(100)], "ten-digit phone numbers"),
]


@pytest.mark.parametrize(("name", "values", "why"), NOT_DATES, ids=[n for n, _, _ in NOT_DATES])
def test_columns_that_are_not_dates(name: str, values: list[str], why: str) -> None:
    rep = scan_column(col(values, name), reference_year=2026)
    assert not rep.is_date, f"{why}: {rep.summary}"
    assert rep.likeness < 0.5


def test_not_dates_rows_unique() -> None:
    assert len({n for n, _, _ in NOT_DATES}) == len(NOT_DATES)


def test_serial_column_named_as_dates_is_dates() -> None:
    # 44927..45000 are 2023 dates (date(1899,12,30) + N).
    rep = scan_column(col([44927 + 3 * i for i in range(25)], "Joined", text=False))
    assert rep.is_date and rep.best.spec.patterns == ("serial",)


def test_epoch_column() -> None:
    values = [str(1_600_000_000 + 86_400 * 17 * i) for i in range(30)]
    rep = scan_column(col(values, "created"), reference_year=2026)
    assert rep.is_date and rep.best.spec.patterns[0] == "epoch-s"


def test_compact_column_is_not_taken_for_epochs() -> None:
    days = [dt.date(1950, 1, 1) + dt.timedelta(days=401 * i) for i in range(60)]
    rep = scan_column(col([d.strftime("%Y%m%d") for d in days], "Start"), reference_year=2026)
    best = rep.best
    assert best.spec.patterns == ("compact-ymd",)
    assert best.parsed == 60 and not best.warnings


def test_placeholders_suggested_and_blank_in_the_parse() -> None:
    values = ["2024-01-0" + str(i) for i in range(1, 8)] + ["N/A", "n/a", "unknown", "-", "?"]
    c = col(values, "Joined")
    rep = scan_column(c)
    tokens = dict(rep.placeholders)
    assert tokens == {"n/a": 2, "unknown": 1, "-": 1, "?": 1}
    best = rep.best
    assert best.total == 7 and best.parsed == 7
    parsed = parse_column(c, best.spec)
    assert parsed.counts()["blank"] == 5
    assert all(r.startswith("treated as blank") for r in parsed.reason[7:])


def test_sentinel_dates_are_dates_but_flagged() -> None:
    rep = scan_column(col(["1900-01-01", "2024-03-01", "1900-01-01", "9999-12-31"], "End"))
    warn = " ".join(rep.best.warnings)
    assert "2 values are 1900-01-01" in warn and "1 values are 9999-12-31" in warn
    assert rep.best.parsed == 4


def test_mixed_column_label_and_mix() -> None:
    # 7 M/D/YYYY (one with day 25 decides month first), 2 ISO, 1 serial: by hand.
    values = [f"{m}/{d}/2024" for m, d in [(1, 25), (2, 3), (3, 4), (4, 5), (5, 6), (6, 7), (7, 8)]]
    values += ["2024-08-09", "2024-09-10", "45575"]
    rep = scan_column(col(values, "Joined"))
    best = rep.best
    assert best.label == "M/D/YYYY 70% · ISO 8601 20% · serial 1900 10%"
    assert [(pid, n) for pid, _, n in best.mix] == [
        ("num-slash", 7),
        ("iso-date", 2),
        ("serial", 1),
    ]
    assert ("1/25/2024", "2024-01-25") in best.examples
    # 45575 = date(1899,12,30) + 45575 days = 2024-10-10 (datetime arithmetic)
    parsed = parse_column(col(values, "Joined"), best.spec)
    assert parsed.value[-1] == np.datetime64("2024-10-10", "us")


def test_failures_listed_with_rows_and_reasons() -> None:
    values = ["13/1/2024", "30/2/2024", "2024-02-30", "31/4/2024", "1/1/2024"]
    rep = scan_column(col(values, "Start"))
    best = rep.best
    assert best.failed == 3
    rows = {(f.row, f.source_row, f.raw) for f in best.failures}
    assert rows == {(1, 3, "30/2/2024"), (2, 4, "2024-02-30"), (3, 5, "31/4/2024")}
    assert all("does not exist" in f.text for f in best.failures)
    assert "failed" in rep.summary


def test_language_of_month_names_is_found() -> None:
    rep = scan_column(col(["12 avril 2024", "3 févr. 2024", "1er mai 2024"], "Arrivée"))
    assert rep.best.spec.locales == ("fr",)
    assert rep.best.parsed == 3


def test_real_date_cells_count_as_dates() -> None:
    c = col([dt.date(2024, 1, 2), dt.datetime(2024, 1, 3, 10, 0), "2024-01-04"], text=False)
    rep = scan_column(c)
    assert rep.is_date and rep.best.parsed == 3
    assert ("date-cell", "date cell", 2) in rep.best.mix
    assert rep.kinds == {"text": 1, "date": 1, "datetime": 1}


def test_blank_cells_counted_apart() -> None:
    rep = scan_column(col(["2024-01-02", None, "", "2024-01-03"]))
    assert rep.blank == 2 and rep.best.total == 2


def test_big_column_is_sampled_but_the_best_counts_are_exact() -> None:
    start = np.datetime64("1900-01-01")
    n = SAMPLE + 3000
    days = start + np.arange(n)
    texts = np.datetime_as_string(days, unit="D").astype(object)
    texts[::97] = "N/A"
    c = RawColumn("Joined", texts, kinds_of(texts, text_only=True))
    rep = scan_column(c)
    best = rep.best
    n_na = len(range(0, n, 97))
    assert best.parsed == n - n_na and best.total == n - n_na
    assert any("counts cover every cell" in e for e in best.evidence)
    parsed = parse_column(c, best.spec)
    assert parsed.counts()["parsed"] == n - n_na


def test_scan_accepts_a_dataframe_and_reports_progress() -> None:
    seen: list[tuple[int, int, str]] = []
    df = pd.DataFrame({"a": ["2024-01-02", "x"], "b": ["1", "2"]})
    reports = scan(df, progress=Progress(lambda d, t, s: seen.append((d, t, s))))
    assert [r.column for r in reports] == ["a", "b"]
    assert seen[0] == (0, 2, "scanning a") and seen[-1][0] == 2
    assert datemend.scan(df)[0].best.parsed == 1
    table = RawTable.from_dataframe(df)
    assert scan(table)[0].column == "a"


def test_bad_preference_is_refused() -> None:
    with pytest.raises(ValueError, match="prefer_day_order"):
        scan_column(col(["2024-01-02"]), prefer_day_order="ymd")


def test_states_over_every_cell() -> None:
    c = col(["13/4/2024", "3/4/2024", "n/a", "", "junk"])
    rep = scan_column(c, prefer_day_order="dmy")
    parsed = parse_column(c, rep.best.spec)
    # 13/4 is evidence for day first, so 3/4/2024 is 3 April (by hand).
    assert parsed.state.tolist() == [
        CellState.PARSED,
        CellState.PARSED,
        CellState.BLANK,
        CellState.BLANK,
        CellState.FAILED,
    ]
    assert parsed.value[1] == np.datetime64("2024-04-03", "us")


def test_numbers_outside_plausible_years_are_pointed_out() -> None:
    # 3.5 as a 1900-system serial is 1900-01-03 12:00 (date(1899,12,31) + 3.5 days): read as
    # the spec says, but named in a warning so it is not silently accepted.
    rep = scan_column(col([44927, "2024-01-01", 3.5], "Joined", text=False), reference_year=2026)
    warn = " ".join(rep.best.warnings)
    assert "1 numbers read as serial 1900 give dates outside 1920–2076" in warn
    assert "3.5 → 1900-01-03T12:00:00" in warn


def test_the_heaviest_values_are_picked_as_a_full_sort_picks_them():
    # reference: numpy's stable argsort (ties in order of position), over many tie patterns
    from datemend.core.census import top_by_weight

    rng = np.random.default_rng(7)
    for n in (1, 2, 10, 500, 5_000):
        for high in (2, 5, 1_000):
            w = rng.integers(1, high, n)
            for k in (0, 1, 3, n // 2, n - 1, n, n + 5):
                want = np.argsort(-w, kind="stable")[: max(k, 0)]
                assert top_by_weight(w, k).tolist() == want.tolist(), (n, high, k)
