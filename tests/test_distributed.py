"""Replay on Dask (datemend.distributed) gives the same cells as the single-machine replay.

The reference for every comparison is the single-machine path the command line uses:
``read_table`` → ``apply_log`` → ``export_table``, run file by file (CSV) or on the whole dataset
(Parquet). A few cells are also checked against values worked out by hand.
"""

from __future__ import annotations

import datetime as _dt
import sys
from pathlib import Path

import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

pytest.importorskip("dask.dataframe")
from datemend.core.export import ExportOptions, export_table
from datemend.core.fixlog import FixLog, apply_log, make_auto_log
from datemend.core.readers import read_table
from datemend.core.steps import ApplyContext, BlankTokens, RenameColumn, SetCell
from datemend.core.table import DatemendError
from datemend.distributed import replay_dask

# dask's Parquet reader calls a pandas method pandas 3.1 deprecates; not ours to fix
pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword")

TODAY = _dt.date(2026, 11, 30)
HEADER = "Member no,Name,Born,Joined,Notes\n"

# Three monthly files of an invented rowing-club roster. Member numbers are unique (the key).
FILES = {
    "roster_2026-09.csv": [
        "101,Ada Quill,1981-03-04,2019-05-01,",
        "102,Bo Lantern,1990-12-31,n/a,captain",
        "103,Cy Drummond,,2021-07-15,",
        "104,Di Ferrow,1975-02-28,2020-02-29,odd = 1+1",
    ],
    "roster_2026-10.csv": [
        "101,Ada Quill,1981-03-04,2019-05-01,",
        "105,Ed Marsh,2001-06-09,2024-13-01,month 13 does not exist",
        "106,Fi Ostler,N/A,2025-01-10,",
    ],
    "roster_2026-11.csv": [
        "107,Gus Renn,1968-11-30,2026-11-01,",
        "108,Hal Pim,1999-01-01,2023-03-05,",
        "102,Bo Lantern,1990-12-31,2018-04-20,back again",
        "109,Ivy Cole,  ,2026-02-30,",
    ],
}


@pytest.fixture(scope="module")
def dataset(tmp_path_factory: pytest.TempPathFactory) -> Path:
    root = tmp_path_factory.mktemp("dask-data")
    csv_dir = root / "csv"
    csv_dir.mkdir()
    for name, rows in FILES.items():
        (csv_dir / name).write_text(HEADER + "\n".join(rows) + "\n", encoding="utf-8")
    pq_dir = root / "parquet"
    pq_dir.mkdir()
    for i, (_, rows) in enumerate(FILES.items()):
        cols = list(zip(*(r.split(",", 4) for r in rows)))
        table = pa.table(
            {
                "Member no": pa.array([int(v) for v in cols[0]], pa.int64()),
                "Name": pa.array(cols[1]),
                "Born": pa.array([v or None for v in cols[2]]),
                "Joined": pa.array(cols[3]),
                "Notes": pa.array(cols[4]),
            }
        )
        pq.write_table(table, pq_dir / f"part-{i}.parquet")
    return root


@pytest.fixture(scope="module")
def log(dataset: Path) -> FixLog:
    raw = read_table(dataset / "csv" / "roster_2026-09.csv")
    auto = make_auto_log(raw, key_column="Member no")
    # The placeholder engine and the full one may pick different readings; the log is made
    # once and the comparison is between two ways of running that same log.
    auto = auto.add(BlankTokens(("n/a",)))
    auto = auto.add(SetCell("Joined", "105", "2024-01-13", key_column="Member no"))
    auto = auto.add(RenameColumn("Born", "Date of birth"))
    assert {"Born", "Joined"} <= {s.column for s in auto.steps if hasattr(s, "column")}
    return auto


def _single_machine(log: FixLog, source: Path, target: Path) -> pd.DataFrame:
    clean = apply_log(log, read_table(source), ApplyContext(today=TODAY, key_column="Member no"))
    # Parquet parts always keep the raw text (one schema for every part of the dataset)
    export_table(clean, target, options=ExportOptions(keep_raw=target.suffix == ".parquet"))
    return _read_out(target)


def _read_out(path: Path) -> pd.DataFrame:
    if path.suffix == ".parquet":
        return pd.read_parquet(path)
    return pd.read_csv(path, dtype=str, keep_default_na=False)


@pytest.mark.parametrize("scheduler", ["synchronous", "threads"])
def test_csv_files_match_single_machine_replay(dataset, log, tmp_path, scheduler):
    out = tmp_path / "out"
    result = replay_dask(
        log,
        str(dataset / "csv" / "roster_*.csv"),
        out_dir=out,
        today=TODAY,
        key_column="Member no",
        scheduler=scheduler,
    )
    assert result.written
    assert [p.name for p in result.outputs] == sorted(FILES)  # one output per input, same stem
    assert result.rows == sum(len(r) for r in FILES.values())
    ref_dir = tmp_path / "ref"
    ref_dir.mkdir()
    for name in sorted(FILES):
        expected = _single_machine(log, dataset / "csv" / name, ref_dir / name)
        got = _read_out(out / name)
        pd.testing.assert_frame_equal(got, expected)  # every cell, every header
    # hand-checked cells (ISO 8601 calendar dates; set-cell value from the log above)
    oct_ = _read_out(out / "roster_2026-10.csv").set_index("Member no")
    assert oct_.loc["105", "Joined"].startswith("2024-01-13")
    sep = _read_out(out / "roster_2026-09.csv").set_index("Member no")
    assert sep.loc["102", "Joined"] == ""  # "n/a" was made blank
    assert sep.loc["101", "Date of birth"].startswith("1981-03-04")
    assert sep.loc["104", "Notes"] == "odd = 1+1"  # untouched text kept as written
    assert not list(out.glob(".datemend-partial-*"))  # staging folder removed


@pytest.mark.parametrize("scheduler", ["synchronous", "threads"])
def test_parquet_dataset_matches_single_machine_replay(dataset, log, tmp_path, scheduler):
    out = tmp_path / "out"
    result = replay_dask(
        log,
        dataset / "parquet",
        out_dir=out,
        today=TODAY,
        key_column="Member no",
        scheduler=scheduler,
    )
    assert result.written and len(result.outputs) == 3
    got = pd.concat([_read_out(p) for p in result.outputs], ignore_index=True)
    expected = _single_machine(log, dataset / "parquet", tmp_path / "ref.parquet")
    pd.testing.assert_frame_equal(got, expected)
    # hand-checked: member 105's joining date was set by hand to 13 January 2024
    row = got[got["Member no"] == 105].iloc[0]
    assert pd.Timestamp(row["Joined"]) == pd.Timestamp(_dt.date(2024, 1, 13))


def test_existing_output_is_refused_without_overwrite(dataset, log, tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    (out / "roster_2026-10.csv").write_text("keep me", encoding="utf-8")
    with pytest.raises(DatemendError, match=r"roster_2026-10\.csv"):
        replay_dask(log, str(dataset / "csv" / "*.csv"), out_dir=out, scheduler="synchronous")
    assert (out / "roster_2026-10.csv").read_text(encoding="utf-8") == "keep me"
    result = replay_dask(
        log, str(dataset / "csv" / "*.csv"), out_dir=out, scheduler="synchronous", overwrite=True
    )
    assert (out / "roster_2026-10.csv").read_text(encoding="utf-8") != "keep me"
    assert len(result.outputs) == 3


@pytest.mark.parametrize(
    ("paths", "message"),
    [
        ("nowhere/*.csv", "no file matches"),
        ("roster.xlsx", "neither CSV nor Parquet"),
        ([], "no input files"),
    ],
)
def test_bad_inputs_get_one_sentence(log, tmp_path, paths, message):
    if paths == "roster.xlsx":
        (tmp_path / "roster.xlsx").write_bytes(b"PK")
        paths = str(tmp_path / "roster.xlsx")
    elif isinstance(paths, str):
        paths = str(tmp_path / paths)
    with pytest.raises(DatemendError, match=message):
        replay_dask(log, paths, out_dir=tmp_path / "out", scheduler="synchronous")


def test_a_cluster_address_needs_distributed(dataset, log, tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "distributed", None)  # import fails as if not installed
    with pytest.raises(DatemendError, match=r"dask\.distributed"):
        replay_dask(
            log,
            str(dataset / "csv" / "*.csv"),
            out_dir=tmp_path / "out",
            scheduler="tcp://127.0.0.1:1",
        )
    assert not list((tmp_path / "out").iterdir())  # nothing written, no staging left


def test_missing_dask_is_a_clear_error(log, tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "dask.dataframe", None)
    with pytest.raises(DatemendError, match=r"datemend\[dask\]"):
        replay_dask(log, str(tmp_path / "*.csv"), out_dir=tmp_path / "out")


def test_import_datemend_does_not_load_dask():
    import subprocess

    code = "import datemend, datemend.cli, sys; print('dask' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_drift_report_adds_up_over_partitions(dataset, log, tmp_path):
    from datemend.core.replay import replay

    result = replay_dask(
        log,
        str(dataset / "csv" / "*.csv"),
        out_dir=tmp_path / "out",
        today=TODAY,
        key_column="Member no",
        scheduler="threads",
    )
    ctx = ApplyContext(today=TODAY, key_column="Member no")
    singles = [replay(log, read_table(dataset / "csv" / n), ctx) for n in sorted(FILES)]
    merged = result.report
    assert merged.rows == sum(r.rows for r in singles) == 11  # 4 + 3 + 4 data rows, by hand
    for col in merged.columns:
        per_file = [r.column(col.column) for r in singles]
        assert col.matched == sum(c.matched for c in per_file)
        assert col.unmatched == sum(c.unmatched for c in per_file)
        assert col.blank == sum(c.blank for c in per_file)
    joined = merged.column("Joined")
    # by hand: 2026-02-30 names no day (February has at most 29); member 105 was set by hand;
    # the hand-set step's key (105) is only in the October file, yet it is not lost overall
    assert joined.unmatched == 1
    assert joined.manual == 1
    assert not merged.lost_keys
    assert merged.file == "3 files (*.csv)"
    assert merged.has_drift and merged.unresolved >= 1


def test_strict_writes_nothing_when_anything_drifted(dataset, log, tmp_path):
    out = tmp_path / "out"
    result = replay_dask(
        log, str(dataset / "csv" / "*.csv"), out_dir=out, scheduler="synchronous", strict=True
    )
    assert not result.written and result.outputs == ()
    assert result.report.unresolved >= 1  # 2026-02-30 in November's file
    assert list(out.iterdir()) == []


def test_progress_is_reported_and_cancel_stops_the_run(dataset, log, tmp_path):
    from datemend.core.progress import Cancelled, Progress

    seen: list[tuple[int, int]] = []
    replay_dask(
        log,
        str(dataset / "csv" / "*.csv"),
        out_dir=tmp_path / "a",
        scheduler="synchronous",
        progress=Progress(lambda d, t, _: seen.append((d, t))),
    )
    assert seen and seen[-1][0] == seen[-1][1]  # ends at 100 %
    prog = Progress()
    prog.cancel()
    with pytest.raises(Cancelled):
        replay_dask(
            log,
            str(dataset / "csv" / "*.csv"),
            out_dir=tmp_path / "b",
            scheduler="synchronous",
            progress=prog,
        )
    assert list((tmp_path / "b").iterdir()) == []


SAMPLE = Path(__file__).resolve().parents[1] / "sample_files" / "rowing_club_2026-10.csv"


@pytest.mark.skipif(not SAMPLE.exists(), reason="sample_files/ not built yet")
def test_sample_csv_dialect_is_detected_and_values_match(tmp_path):
    # the sample is written with semicolons in Windows-1252, as some spreadsheet exports are
    raw = read_table(SAMPLE)
    log = make_auto_log(raw)
    result = replay_dask(log, [SAMPLE], out_dir=tmp_path / "out", today=TODAY)
    expected = _single_machine(log, SAMPLE, tmp_path / "ref.csv")
    got = _read_out(result.outputs[0])
    pd.testing.assert_frame_equal(got, expected)
    assert "Grip is Müller-ish, needs coaching" in got["Notes"].tolist()  # é/ü decoded right
