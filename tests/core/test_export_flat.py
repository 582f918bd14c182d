"""CSV, Parquet and the streaming XLSX writer, read back with pyarrow and openpyxl.

Expected text is built with Python's ``date.isoformat`` / ``datetime.isoformat`` (ISO 8601 and
RFC 3339 §5.6 forms), instants with ``datetime.astimezone`` and ``zoneinfo``.
"""

from __future__ import annotations

import datetime as dt
from zoneinfo import ZoneInfo

import numpy as np
import openpyxl
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv
import pyarrow.parquet as pq
import pytest
from test_export_book import (
    HEADERS,
    JOINED,
    OUTING,
    B,
    M,
    P,
    build_book,
    clean_table,
    member_rows,
    parsed,
)

from datemend.core.clean import CellState, CleanTable
from datemend.core.export import ExportOptions, export_table
from datemend.core.table import RawTable, SourceFacts

UTC = dt.UTC


def _read_csv_strings(path, delimiter=","):
    with open(path, encoding="utf-8-sig", newline="") as fh:
        head = fh.readline().rstrip("\r\n").split(delimiter)
    types = dict.fromkeys(head, pa.string())
    table = pacsv.read_csv(
        path,
        parse_options=pacsv.ParseOptions(delimiter=delimiter),
        convert_options=pacsv.ConvertOptions(column_types=types, strings_can_be_null=False),
    )
    return table


def _outing_text(i: int, zone: str = "UTC") -> str:
    state, value, offset, _, _ = OUTING[i]
    if state in (P, M):
        if offset is None:
            return value.isoformat()
        aware = dt.datetime.fromisoformat(member_rows(False)[i][5])
        return aware.astimezone(ZoneInfo(zone)).isoformat()
    return "" if state == B else member_rows(False)[i][5]


@pytest.fixture
def club(tmp_path):
    src = build_book(tmp_path / "club.xlsx")
    return src, clean_table(src)


def test_csv_values_are_iso_and_raw_text(club, tmp_path):
    _, table = club
    out = tmp_path / "club.csv"
    result = export_table(table, out)
    assert result.writer == "csv"
    t = _read_csv_strings(out)
    assert t.schema.names == ["Member", "Member since", *HEADERS[2:]]
    assert all(f.type == pa.string() for f in t.schema)
    rows = member_rows(False)
    joined = [
        v.date().isoformat() if s == P else "" if s == B else str(rows[i][1])
        for i, (s, v, _) in enumerate(JOINED)
    ]
    assert t["Member since"].to_pylist() == joined
    assert t["Last outing"].to_pylist() == [_outing_text(i) for i in range(len(OUTING))]
    # RFC 3339 §5.8: 1996-12-19T16:39:57-08:00 is 1996-12-20T00:39:57Z
    assert t["Last outing"][2].as_py() == "1996-12-20T00:39:57+00:00"
    assert t["Fee"].to_pylist() == ["40", "42.5", "", "10", "#N/A", "0", "12", "TRUE", "7"]
    assert t["Double fee"].to_pylist()[:4] == ["80", "", "", "92.5"]  # cached values only
    assert t["Note"].to_pylist()[:5] == ["=1+1", "@SUM(A1)", "+44 20 7946 0000", "-5", "keeps"]
    renewal = t["Renewal"].to_pylist()
    assert renewal[0] == dt.datetime(2026, 10, 1).isoformat()  # a date cell left as it was


def test_csv_layout_options(club, tmp_path):
    _, table = club
    out = tmp_path / "club.csv"
    opts = ExportOptions(delimiter=";", bom=True, keep_raw=True, line_terminator="\n")
    export_table(table, out, options=opts)
    data = out.read_bytes()
    assert data.startswith(b"\xef\xbb\xbf")  # UTF-8 byte order mark
    assert b"\r\n" not in data
    t = _read_csv_strings(out, ";")
    assert t.schema.names[:4] == ["Member", "Member since", "Joined (raw)", "Fee"]
    raw = [str(r[1]) if r[1] is not None else "" for r in member_rows(False)]
    assert t["Joined (raw)"].to_pylist() == raw


def test_csv_zone_offsets_follow_zoneinfo(club, tmp_path):
    _, table = club
    out = tmp_path / "ny.csv"
    result = export_table(table, out, options=ExportOptions(zone="America/New_York"))
    t = _read_csv_strings(out)
    want = [_outing_text(i, "America/New_York") for i in range(len(OUTING))]
    assert t["Last outing"].to_pylist() == want
    assert t["Last outing"][0].as_py() == "2021-03-04T03:00:00-05:00"  # EST before the DST change
    assert any("America/New_York" in n for n in result.notes)


def _aware_table(texts: list[str]) -> CleanTable:
    """A CSV-like table whose "Start" column is fully parsed, with offsets, by hand."""
    df = pd.DataFrame({"Start": texts, "Crew": [f"crew {i}" for i in range(len(texts))]})
    raw = RawTable.from_dataframe(df, SourceFacts(path=None, format="csv"), text_only=True)
    rows = []
    for t in texts:
        aware = dt.datetime.fromisoformat(t)
        off = aware.utcoffset()
        mins = None if off is None else int(off.total_seconds() // 60)
        rows.append((P, aware.replace(tzinfo=None), mins, True, None))
    return CleanTable(raw).with_parsed(parsed("Start", rows))


AWARE = [
    ("1985-04-12T23:20:50.520000+00:00", "RFC 3339 §5.8 first example, UTC"),
    ("1996-12-19T16:39:57-08:00", "RFC 3339 §5.8, eight hours west"),
    ("1937-01-01T12:00:27.870000+00:20", "RFC 3339 §5.8, a twenty-minute offset"),
    ("2038-01-19T03:14:07+00:00", "POSIX: 2147483647 seconds"),
]


def test_aware_table_has_no_repeats():
    assert len({a[0] for a in AWARE}) == len(AWARE)


@pytest.mark.parametrize("zone", ["UTC", "Europe/Berlin"])
def test_parquet_aware_column_is_a_zoned_timestamp(tmp_path, zone):
    texts = [a[0] for a in AWARE]
    out = tmp_path / "starts.parquet"
    export_table(_aware_table(texts), out, options=ExportOptions(zone=zone))
    t = pq.read_table(out)
    assert t.schema.field("Start").type == pa.timestamp("us", tz=zone)
    got = t["Start"].to_pylist()
    want = [dt.datetime.fromisoformat(x).astimezone(UTC) for x in texts]  # the same instants
    assert got == want
    assert [g.timestamp() for g in got[:2]] == [482196050.52, 851042397]  # RFC 3339 §5.8 values


def test_csv_aware_with_fractions_and_odd_offsets(tmp_path):
    texts = [a[0] for a in AWARE]
    out = tmp_path / "starts.csv"
    export_table(_aware_table(texts), out, options=ExportOptions(zone="Asia/Kolkata"))
    t = _read_csv_strings(out)
    want = [
        dt.datetime.fromisoformat(x).astimezone(ZoneInfo("Asia/Kolkata")).isoformat() for x in texts
    ]
    assert t["Start"].to_pylist() == want


def test_parquet_types_and_values(club, tmp_path):
    _, table = club
    out = tmp_path / "club.parquet"
    result = export_table(table, out)
    assert result.writer == "parquet"
    t = pq.read_table(out)
    types = {f.name: f.type for f in t.schema}
    assert list(types) == [
        "Member",
        "Member since",
        "Joined (raw)",  # kept: a typed column cannot hold the unresolved text
        "Fee",
        "Double fee",
        "Note",
        "Last outing",
        "Last outing (raw)",
        "Renewal",
    ]
    assert types["Member since"] == pa.date32()
    assert types["Last outing"] == pa.timestamp("us")  # mixed offsets: wall clock, with a note
    assert types["Member"] == pa.string() and types["Fee"] == pa.string()
    assert types["Double fee"] == pa.float64() and types["Renewal"] == pa.timestamp("us")
    joined = [v.date() if s == P else None for s, v, _ in JOINED]
    assert t["Member since"].to_pylist() == joined
    outing = t["Last outing"].to_pylist()
    assert outing[0] == dt.datetime(2021, 3, 4, 8, 0)  # 10:00+02:00 in UTC
    assert outing[5] == dt.datetime(2022, 7, 1, 12, 30, 15, 250000)  # a hand-set value
    assert outing[3] is None and outing[4] is None
    raw = t["Joined (raw)"].to_pylist()
    assert raw[3] == "soon" and raw[8] == "=1+1" and raw[4] is None
    assert t["Fee"].to_pylist()[4] == "#N/A"
    notes = t.schema.metadata[b"datemend.notes"].decode()
    assert "mixes times with and without a UTC offset" in notes
    assert any("mixes kinds" in n for n in result.notes)


def test_extreme_years_survive(tmp_path):
    """Years 1 and 9999 (datetime.date.min / max) in CSV and Parquet."""
    df = pd.DataFrame({"Born": ["0001-01-01", "9999-12-31", "x"]})
    raw = RawTable.from_dataframe(df, SourceFacts(format="csv"), text_only=True)
    rows = [(P, dt.datetime(1, 1, 1), None), (P, dt.datetime(9999, 12, 31), None)]
    rows.append((CellState.FAILED, None, "no date"))
    table = CleanTable(raw).with_parsed(parsed("Born", rows))
    export_table(table, tmp_path / "b.csv")
    export_table(table, tmp_path / "b.parquet")
    assert _read_csv_strings(tmp_path / "b.csv")["Born"].to_pylist() == [
        dt.date.min.isoformat(),
        dt.date.max.isoformat(),
        "x",
    ]
    t = pq.read_table(tmp_path / "b.parquet")
    assert t["Born"].to_pylist() == [dt.date.min, dt.date.max, None]
    assert t["Born (raw)"].to_pylist() == ["0001-01-01", "9999-12-31", "x"]


WRITERS = [
    # (source format, target, streaming option, writer, why)
    ("xlsx", "out.xlsx", None, "workbook", "a workbook source is kept"),
    ("xlsx", "out2.xlsx", True, "streaming", "asked to stream"),
    ("csv", "out.xlsx", None, "streaming", "nothing to keep from a CSV source"),
    ("ods", "out.xlsx", None, "streaming", "ODS is read, not written"),
    ("xlsx", "out.csv", None, "csv", "flat target"),
    ("csv", "out.parquet", None, "parquet", "flat target"),
]


def test_writer_table_has_no_repeats():
    assert len({w[:3] for w in WRITERS}) == len(WRITERS)


@pytest.mark.parametrize(("fmt", "target", "streaming", "writer", "why"), WRITERS)
def test_writer_choice(club, tmp_path, fmt, target, streaming, writer, why):
    _, table = club
    if fmt != "xlsx":
        facts = SourceFacts(path=str(tmp_path / f"in.{fmt}"), format=fmt, sheet="Members")
        table = table.evolve(raw=RawTable(table.raw.columns, facts, table.raw.source_rows))
    result = export_table(table, tmp_path / target, options=ExportOptions(streaming=streaming))
    assert result.writer == writer, why
    assert result.writer_text


def test_streaming_workbook_round_trip(club, tmp_path):
    _, table = club
    out = tmp_path / "stream.xlsx"
    result = export_table(
        table, out, options=ExportOptions(streaming=True, keep_raw=True, unresolved_sheet=True)
    )
    assert result.writer == "streaming"
    assert any("not copied by the streaming writer" in n for n in result.notes)
    wb = openpyxl.load_workbook(out)
    assert wb.sheetnames == ["Members", "Unresolved cells"]
    ws = wb["Members"]
    head = [c.value for c in ws[1]]
    assert head[:3] == ["Member", "Member since", "Joined (raw)"]
    raw = table.raw
    for i, (s, v, _) in enumerate(JOINED):
        cell = ws.cell(i + 2, 2)
        if s == P:
            assert cell.is_date and cell.value == v and cell.number_format == "yyyy-mm-dd"
        elif s == B:
            assert cell.value is None
        else:
            assert cell.value == raw.column("Joined").values[i] and cell.data_type == "s"
    outing = [ws.cell(i + 2, head.index("Last outing") + 1).value for i in range(len(OUTING))]
    assert outing[2] == dt.datetime(1996, 12, 20, 0, 39, 57)  # RFC 3339 §5.8, in UTC
    fee = [ws.cell(i + 2, head.index("Fee") + 1) for i in range(raw.n_rows)]
    assert [c.value for c in fee] == [40, 42.5, None, 10, "#N/A", 0, 12, True, 7]
    assert fee[4].data_type == "e"  # an error cell stays an error
    note = ws.cell(2, head.index("Note") + 1)
    assert (note.value, note.data_type) == ("=1+1", "s")
    assert len(list(wb["Unresolved cells"].iter_rows())) == 1 + result.unresolved


def test_big_csv_source_round_trip(tmp_path):
    """Many rows through the vectorised CSV path: each value comes back (no timing asserted)."""
    n = 20_000
    days = np.arange(n) % 20000
    iso = (np.datetime64("1970-01-01") + days).astype(str)
    df = pd.DataFrame({"Raced": iso, "Crew": np.where(days % 7 == 0, "=crew", "crew")})
    raw = RawTable.from_dataframe(df, SourceFacts(format="csv"), text_only=True)
    col = parsed("Raced", [(P, None, None)] * n)
    col = col.evolve(value=iso.astype("datetime64[us]"))
    out = tmp_path / "big.csv"
    export_table(CleanTable(raw).with_parsed(col), out)
    t = _read_csv_strings(out)
    want = [(dt.date(1970, 1, 1) + dt.timedelta(days=int(d))).isoformat() for d in days]
    assert t["Raced"].to_pylist() == want  # Python's date arithmetic as the reference
    assert t["Crew"].to_pylist() == df["Crew"].tolist()


def _with_derived(table: CleanTable) -> CleanTable:
    from datemend.core.clean import DerivedColumn

    n = table.raw.n_rows
    age = pd.Series(pd.array([41, None] + [7] * (n - 2), dtype="Int64"))
    due = pd.Series(pd.to_datetime(["2030-06-30", None] + ["2031-01-01"] * (n - 2)).as_unit("us"))
    at = pd.Series(pd.to_datetime(["2030-06-30 08:15", None] + [None] * (n - 2)).as_unit("us"))
    label = pd.Series(["=odd", None] + ["q1"] * (n - 2), dtype="string")
    return table.evolve(
        derived={
            "Age": DerivedColumn("Age", age),
            "Due": DerivedColumn("Due", due),
            "At": DerivedColumn("At", at),
            "Label": DerivedColumn("Label", label),
        }
    )


def test_derived_columns_in_csv_and_parquet(club, tmp_path):
    _, table = club
    table = _with_derived(table)
    export_table(table, tmp_path / "d.csv")
    export_table(table, tmp_path / "d.parquet")
    t = _read_csv_strings(tmp_path / "d.csv")
    assert t.schema.names[-4:] == ["Age", "Due", "At", "Label"]
    assert t["Age"].to_pylist()[:3] == ["41", "", "7"]
    assert t["Due"].to_pylist()[:3] == ["2030-06-30", "", "2031-01-01"]  # midnight only: dates
    assert t["At"].to_pylist()[:2] == [dt.datetime(2030, 6, 30, 8, 15).isoformat(), ""]
    assert t["Label"].to_pylist()[:2] == ["=odd", ""]
    p = pq.read_table(tmp_path / "d.parquet")
    assert p.schema.field("Age").type == pa.int64()
    assert p.schema.field("Due").type == pa.timestamp("us")
    assert p.schema.field("Label").type == pa.string()
    assert p["Age"].to_pylist()[:2] == [41, None]
    assert p["Due"].to_pylist()[0] == dt.datetime(2030, 6, 30)


def test_csv_guard_covers_derived_text_only(club, tmp_path):
    # OWASP CSV injection advice applies to text; numbers such as -5 stay numbers.
    _, table = club
    table = _with_derived(table)
    n = table.raw.n_rows
    from datemend.core.clean import DerivedColumn

    delta = DerivedColumn("Delta", pd.Series(pd.array([-5] + [None] * (n - 1), dtype="Int64")))
    table = table.evolve(derived={**table.derived, "Delta": delta})
    out = tmp_path / "g.csv"
    export_table(table, out, options=ExportOptions(csv_formula_guard=True))
    t = _read_csv_strings(out)
    assert t["Label"].to_pylist()[:3] == ["'=odd", "", "q1"]
    assert t["Delta"].to_pylist()[0] == "-5"
    assert t["Note"].to_pylist()[:4] == ["'=1+1", "'@SUM(A1)", "'+44 20 7946 0000", "'-5"]


def test_csv_in_small_chunks_is_the_same_file(club, tmp_path, monkeypatch):
    from datemend.core import export_flat, export_stream

    _, table = club
    table = _with_derived(table)
    opts = ExportOptions(keep_raw=True)
    export_table(table, tmp_path / "one.csv", options=opts)
    export_table(table, tmp_path / "one.xlsx", options=ExportOptions(streaming=True))
    monkeypatch.setattr(export_flat, "_CHUNK", 2)
    monkeypatch.setattr(export_stream, "_ROWS", 2)
    export_table(table, tmp_path / "many.csv", options=opts)
    export_table(table, tmp_path / "many.xlsx", options=ExportOptions(streaming=True))
    assert (tmp_path / "one.csv").read_bytes() == (tmp_path / "many.csv").read_bytes()
    a = list(openpyxl.load_workbook(tmp_path / "one.xlsx").active.iter_rows(values_only=True))
    b = list(openpyxl.load_workbook(tmp_path / "many.xlsx").active.iter_rows(values_only=True))
    assert a == b and len(a) == table.raw.n_rows + 1
