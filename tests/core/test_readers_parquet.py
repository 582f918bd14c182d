"""Parquet reader: kinds follow the Arrow column types; a folder is read as one dataset."""

import datetime as dt

import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from datemend.core.readers import read_table
from datemend.core.table import CellKind as K
from datemend.core.table import ReadError


def _table():
    return pa.table(
        {
            "no": pa.array([1, None, 3], pa.int64()),
            "name": pa.array(["Zoë", "", None]),
            "born": pa.array([dt.date(1990, 4, 3), None, dt.date(2001, 12, 31)], pa.date32()),
            "seen": pa.array([dt.datetime(2026, 10, 3, 7, 15), None, None], pa.timestamp("us")),
            "fee": pa.array([2.5, float("nan"), None], pa.float64()),
            "paid": pa.array([True, False, None]),
        }
    )


def test_parquet_kinds(tmp_path):
    p = tmp_path / "members.parquet"
    pq.write_table(_table(), p)
    t = read_table(p)
    assert t.facts.format == "parquet"
    assert t.names == ["no", "name", "born", "seen", "fee", "paid"]
    expected = {
        "no": [(1, K.INT), (None, K.EMPTY), (3, K.INT)],
        "name": [("Zoë", K.TEXT), (None, K.EMPTY), (None, K.EMPTY)],
        "born": [(dt.date(1990, 4, 3), K.DATE), (None, K.EMPTY), (dt.date(2001, 12, 31), K.DATE)],
        "seen": [(dt.datetime(2026, 10, 3, 7, 15), K.DATETIME), (None, K.EMPTY), (None, K.EMPTY)],
        "fee": [(2.5, K.FLOAT), (None, K.EMPTY), (None, K.EMPTY)],
        "paid": [(True, K.BOOL), (False, K.BOOL), (None, K.EMPTY)],
    }
    for name, cells in expected.items():
        col = t.column(name)
        assert [(v, K(k)) for v, k in zip(col.values, col.kinds)] == cells, name
    assert type(t.column("no").values[0]) is int
    assert t.source_rows.tolist() == [1, 2, 3]


def test_parquet_folder_dataset(tmp_path):
    d = tmp_path / "export"
    d.mkdir()
    pq.write_table(_table().slice(0, 2), d / "part-0.parquet")
    pq.write_table(_table().slice(2, 1), d / "part-1.parquet")
    t = read_table(d)
    assert t.n_rows == 3
    assert sorted(v for v in t.column("no").values if v is not None) == [1, 3]
    assert t.facts.sha256 is not None


def test_not_parquet(tmp_path):
    p = tmp_path / "fake.parquet"
    p.write_bytes(b"a,b\n1,2\n")
    with pytest.raises(ReadError, match=r"fake\.parquet is not a Parquet file"):
        read_table(p)
    e = tmp_path / "nothing"
    e.mkdir()
    with pytest.raises(ReadError, match=r"nothing is a folder with no Parquet files"):
        read_table(e)
