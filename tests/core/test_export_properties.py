"""Property checks of the vectorised export formatting against Python's datetime (ISO 8601 /
RFC 3339 text, offsets moved to UTC or a zone with zoneinfo) and openpyxl's ``to_excel``
(ISO/IEC 29500-1 §18.17.4 serials)."""

from __future__ import annotations

import datetime as dt
from zoneinfo import ZoneInfo

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from openpyxl.utils.datetime import to_excel

from datemend.core.clean import NAIVE, CellState, ParsedColumn
from datemend.core.export import ExportOptions, prepare_dates
from datemend.core.export_flat import iso_text
from datemend.core.export_stream import serials

# Offsets keep the UTC instant inside years 1..9999.
moments = st.datetimes(min_value=dt.datetime(2, 1, 1), max_value=dt.datetime(9998, 12, 31))
offsets = st.one_of(st.none(), st.integers(min_value=-14 * 60, max_value=14 * 60))


def _column(values, offs, has_time=True) -> ParsedColumn:
    n = len(values)
    return ParsedColumn.empty("When", n).evolve(
        value=np.array(values, dtype="datetime64[us]"),
        offset_min=np.array([NAIVE if o is None else o for o in offs], dtype=np.int32),
        has_time=np.full(n, has_time),
        state=np.full(n, CellState.PARSED, dtype=np.int8),
    )


@settings(max_examples=100, deadline=None)
@given(st.lists(st.tuples(moments, offsets), min_size=1, max_size=20))
def test_iso_text_matches_python_isoformat(cells):
    values = [v for v, _ in cells]
    offs = [o for _, o in cells]
    d = prepare_dates(_column(values, offs), np.ones(len(values), np.int8), ExportOptions())
    got = list(iso_text(d))
    want = []
    for v, o in cells:
        if o is None:
            want.append(v.isoformat())
        else:
            aware = v.replace(tzinfo=dt.timezone(dt.timedelta(minutes=o)))
            want.append(aware.astimezone(dt.UTC).isoformat())
    assert got == want


@settings(max_examples=100, deadline=None)
@given(
    st.lists(
        st.tuples(
            st.datetimes(min_value=dt.datetime(1971, 1, 1), max_value=dt.datetime(2099, 1, 1)),
            st.integers(min_value=-12 * 60, max_value=14 * 60),
        ),
        min_size=1,
        max_size=10,
    ),
    st.sampled_from(["Europe/London", "America/Sao_Paulo", "Asia/Kathmandu", "Pacific/Chatham"]),
)
def test_zone_text_matches_zoneinfo(cells, zone):
    values = [v for v, _ in cells]
    offs = [o for _, o in cells]
    opts = ExportOptions(zone=zone)
    d = prepare_dates(_column(values, offs), np.ones(len(values), np.int8), opts)
    got = list(iso_text(d))
    want = [
        v.replace(tzinfo=dt.timezone(dt.timedelta(minutes=o)))
        .astimezone(ZoneInfo(zone))
        .isoformat()
        for v, o in cells
    ]
    assert got == want


@settings(max_examples=100, deadline=None)
@given(st.lists(st.datetimes(min_value=dt.datetime(1900, 1, 1)), min_size=1, max_size=20))
def test_serials_match_openpyxl(values):
    got = serials(np.array(values, dtype="datetime64[us]"))
    want = [to_excel(v) for v in values]
    assert np.allclose(got, want, rtol=0, atol=1e-9)


@settings(max_examples=100, deadline=None)
@given(st.lists(st.dates(min_value=dt.date(1, 1, 1)), min_size=1, max_size=20))
def test_date_only_text_matches_date_isoformat(days):
    values = [dt.datetime(d.year, d.month, d.day) for d in days]
    col = _column(values, [None] * len(values), has_time=False)
    d = prepare_dates(col, np.ones(len(values), np.int8), ExportOptions())
    assert list(iso_text(d)) == [x.isoformat() for x in days]


DAYS_WITH_OFFSETS = [
    # (wall-clock value, offset minutes, date_only flag, why)
    ("2021-07-01T00:00", 540, True, "a time part dropped by a step: +09:00 must not pull it back"),
    ("2021-07-01T00:00", -420, False, "no cell has a time: a calendar date, not an instant"),
    ("1987-02-12T00:00", 330, True, "a half-hour offset"),
]


def test_day_table_has_no_repeats():
    assert len({d[:3] for d in DAYS_WITH_OFFSETS}) == len(DAYS_WITH_OFFSETS)


@pytest.mark.parametrize(("value", "offset", "flag", "why"), DAYS_WITH_OFFSETS)
def test_date_only_columns_keep_their_day(value, offset, flag, why, tmp_path):
    """The day as written (datetime.date.fromisoformat as the reference), in every writer."""
    import pyarrow.parquet as pq

    from datemend.core.clean import CleanTable
    from datemend.core.export import export_table
    from datemend.core.table import RawColumn, RawTable, SourceFacts

    col = _column([dt.datetime.fromisoformat(value)], [offset], has_time=False)
    col = col.evolve(date_only=flag)
    d = prepare_dates(col, np.ones(1, np.int8), ExportOptions(zone="UTC"))
    want = dt.date.fromisoformat(value[:10])
    assert list(iso_text(d)) == [want.isoformat()], why
    raw = RawTable((RawColumn("When", np.array([value], dtype=object), np.ones(1, np.int8)),),
                   SourceFacts(format="csv"))  # fmt: skip
    table = CleanTable(raw).with_parsed(col)
    export_table(table, tmp_path / "d.parquet")
    assert pq.read_table(tmp_path / "d.parquet")["When"].to_pylist() == [want], why
