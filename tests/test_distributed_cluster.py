"""Replay on a running Dask cluster, reached by its tcp:// address, as ``--scheduler`` uses one.

A real scheduler and worker are started in this process (``LocalCluster``, threads, tcp on
127.0.0.1), so the run goes through ``dask.distributed``'s Client exactly as it would against a
cluster elsewhere. The reference for every comparison is the single-machine path
(``read_table`` → ``replay`` → ``export_table``) run file by file; a few cells and the drift
counts are also worked out by hand.

dask and distributed come with the ``test`` extra, so a missing install fails here instead of
skipping: this file is what proves CI runs the cluster path.
"""

from __future__ import annotations

import calendar
import datetime as _dt
import json
import socket
from collections.abc import Iterator
from pathlib import Path

import pandas as pd
import pytest
from distributed import LocalCluster

from datemend import distributed as dm_distributed
from datemend.cli import EXIT_INPUT, EXIT_UNRESOLVED, main
from datemend.core.export import ExportOptions, export_table
from datemend.core.fixlog import FixLog
from datemend.core.readers import read_table
from datemend.core.replay import ReplayReport, replay
from datemend.core.spec import ParseSpec
from datemend.core.steps import ApplyContext, BlankTokens, ReadDates, RenameColumn, SetCell
from datemend.core.table import DatemendError
from datemend.distributed import replay_dask

TODAY = _dt.date(2026, 11, 30)
KEY = "Member ID"
HEADER = "Member ID,Rower,Born,First outing,Erg test,Seat\n"

# An invented rowing club's roster, one file a month; member IDs are unique within a file.
FILES = {
    "crew_2026-09.csv": [
        "R01,Maud Tiller,14/03/1988,2023-04-01,7 March 2026,stroke",
        "R02,Olu Banks,05/06/1990,TBC,12 January 2026,bow",
        "R03,Pia Gren,,2024-09-15,,cox",
    ],
    "crew_2026-10.csv": [
        "R01,Maud Tiller,14/03/1988,2023-04-01,3 October 2026,stroke",
        "R04,Quin Hale,31/02/1985,2025-05-20,1 September 2026,2",
        "R05,Rae Oduya,29/02/2000,tbc,30 September 2026,3",
    ],
    "crew_2026-11.csv": [
        "R06,Sol Varga,01/12/1979,2026-11-02,,4",
        "R07,Tam Ashby,04/07/1992,2026-02-30,2 November 2026,5",
        "R08,Uma Perl,23/11/2001,2026-11-09,9 November 2026,6",
    ],
}


@pytest.fixture(scope="module")
def cluster() -> Iterator[LocalCluster]:
    """One scheduler and one worker (two threads) in this process, on a real tcp:// port."""
    with LocalCluster(
        processes=False,
        n_workers=1,
        threads_per_worker=2,
        protocol="tcp",
        host="127.0.0.1",
        scheduler_port=0,
        dashboard_address=None,
    ) as running:
        assert running.scheduler_address.startswith("tcp://127.0.0.1:")
        yield running


@pytest.fixture(scope="module")
def data(tmp_path_factory: pytest.TempPathFactory) -> Path:
    folder = tmp_path_factory.mktemp("crew")
    for name, rows in FILES.items():
        (folder / name).write_text(HEADER + "\n".join(rows) + "\n", encoding="utf-8")
    return folder


@pytest.fixture(scope="module")
def log() -> FixLog:
    """A log written by hand (not suggested), so the expected values below follow from it."""
    steps = [
        ReadDates("Born", ParseSpec(patterns=("num-slash",), day_order="dmy")),
        ReadDates("First outing", ParseSpec(patterns=("iso-date",))),
        ReadDates("Erg test", ParseSpec(patterns=("name-dmy",))),
        BlankTokens(("TBC",), ("First outing",)),
        SetCell("First outing", "R07", "2026-02-28", key_column=KEY),
        RenameColumn("Erg test", "Last erg test"),
    ]
    fix_log = FixLog(key_column=KEY)
    for step in steps:
        fix_log = fix_log.add(step)
    return fix_log


def _executed(cluster: LocalCluster) -> int:
    """Tasks the cluster's workers have run so far (proof the work went to the cluster)."""
    return sum(w.state.executed_count for w in cluster.workers.values())


def _read_out(path: Path) -> pd.DataFrame:
    return pd.read_csv(path, dtype=str, keep_default_na=False)


def _single_machine(log: FixLog, source: Path, target: Path) -> pd.DataFrame:
    """The reference: one file through the single-machine core calls."""
    report = replay(log, read_table(source), ApplyContext(today=TODAY, key_column=KEY))
    export_table(report.table, target, options=ExportOptions())
    return _read_out(target)


def _assert_same_as_single_machine(log: FixLog, data: Path, out: Path, ref: Path) -> None:
    ref.mkdir()
    assert sorted(p.name for p in out.iterdir()) == sorted(FILES)  # no staging folder left
    for name in sorted(FILES):
        expected = _single_machine(log, data / name, ref / name)
        pd.testing.assert_frame_equal(_read_out(out / name), expected)  # every cell and header


def _assert_hand_checked_cells(out: Path) -> None:
    sep = _read_out(out / "crew_2026-09.csv").set_index(KEY)
    oct_ = _read_out(out / "crew_2026-10.csv").set_index(KEY)
    nov = _read_out(out / "crew_2026-11.csv").set_index(KEY)
    # day first (the log says dmy): 05/06/1990 is 5 June, 01/12/1979 is 1 December
    assert sep.loc["R02", "Born"] == _dt.date(1990, 6, 5).isoformat()
    assert nov.loc["R06", "Born"] == _dt.date(1979, 12, 1).isoformat()
    # 2000 is a leap year (divisible by 400; calendar.isleap), so 29/02/2000 is a real day
    assert calendar.isleap(2000)
    assert oct_.loc["R05", "Born"] == _dt.date(2000, 2, 29).isoformat()
    # February 1985 has 28 days (calendar.monthrange): 31/02/1985 stays as written
    assert calendar.monthrange(1985, 2)[1] == 28
    assert oct_.loc["R04", "Born"] == "31/02/1985"
    # "TBC" and "tbc" are blank (tokens compare case-folded); R07's 2026-02-30 was set by hand
    assert sep.loc["R02", "First outing"] == "" and oct_.loc["R05", "First outing"] == ""
    assert nov.loc["R07", "First outing"] == _dt.date(2026, 2, 28).isoformat()
    # day-month-name-year, renamed column; untouched text kept as written
    assert sep.loc["R01", "Last erg test"] == _dt.date(2026, 3, 7).isoformat()
    assert nov.loc["R08", "Last erg test"] == _dt.date(2026, 11, 9).isoformat()
    assert sep.loc["R03", "Seat"] == "cox" and sep.loc["R03", "Rower"] == "Pia Gren"


# Drift counts over all nine rows, worked out by hand from FILES and the log above.
HAND_COUNTS = [
    # (column, matched, blank, manual, unmatched, why)
    ("Born", 7, 1, 0, 1, "R03 blank; 31/02/1985 names no day"),
    ("First outing", 6, 2, 1, 0, "TBC and tbc blank; R07's 2026-02-30 set by hand"),
    ("Erg test", 7, 2, 0, 0, "R03 and R06 blank; the rest are day, month name, year"),
]
assert len({row[0] for row in HAND_COUNTS}) == len(HAND_COUNTS)


def _assert_merged_report(report: ReplayReport, log: FixLog, data: Path) -> None:
    ctx = ApplyContext(today=TODAY, key_column=KEY)
    singles = [replay(log, read_table(data / n), ctx) for n in sorted(FILES)]
    assert report.rows == sum(r.rows for r in singles) == 9  # 3 + 3 + 3 data rows
    for column, matched, blank, manual, unmatched, _why in HAND_COUNTS:
        got = report.column(column)
        per_file = [r.column(column) for r in singles]
        assert (got.matched, got.blank, got.manual, got.unmatched) == (
            matched,
            blank,
            manual,
            unmatched,
        )
        assert got.matched == sum(c.matched for c in per_file)
        assert got.blank == sum(c.blank for c in per_file)
        assert got.manual == sum(c.manual for c in per_file)
        assert got.unmatched == sum(c.unmatched for c in per_file)
    assert report.unresolved == 1  # only 31/02/1985
    assert not report.lost_keys  # R07 is only in November's file, yet its step found it


def test_replay_on_a_cluster_address_matches_single_machine(cluster, data, log, tmp_path):
    out = tmp_path / "out"
    before = _executed(cluster)
    result = replay_dask(
        log,
        str(data / "crew_*.csv"),
        out_dir=out,
        today=TODAY,
        key_column=KEY,
        scheduler=cluster.scheduler_address,
    )
    assert _executed(cluster) - before >= len(FILES)  # at least one task per file ran there
    assert result.written
    assert [p.name for p in result.outputs] == sorted(FILES)
    assert [p[2] for p in result.partitions] == [3, 3, 3]
    _assert_same_as_single_machine(log, data, out, tmp_path / "ref")
    _assert_hand_checked_cells(out)
    _assert_merged_report(result.report, log, data)
    assert result.report.file == "3 files (crew_*.csv)"


def test_cli_replay_with_scheduler_address(cluster, data, log, tmp_path, capsys):
    log_path = tmp_path / "crew.fixlog.json"
    log.save(log_path)
    out = tmp_path / "out"
    report_path = tmp_path / "drift.json"
    before = _executed(cluster)
    code = main(
        [
            "replay",
            str(log_path),
            str(data / "crew_*.csv"),
            "--engine",
            "dask",
            "-o",
            str(out),
            "--scheduler",
            cluster.scheduler_address,
            "--today",
            TODAY.isoformat(),
            "--report",
            str(report_path),
        ]
    )
    printed = capsys.readouterr()
    # exit code 4 (README, cli.py): written, but one cell (31/02/1985) stayed unresolved
    assert code == EXIT_UNRESOLVED, printed.err
    assert _executed(cluster) - before >= len(FILES)
    assert f"Wrote 3 files into {out}." in printed.out
    assert "Traceback" not in printed.err
    _assert_same_as_single_machine(log, data, out, tmp_path / "ref")
    _assert_hand_checked_cells(out)
    saved = ReplayReport.from_dict(json.loads(report_path.read_text(encoding="utf-8")))
    _assert_merged_report(saved, log, data)


@pytest.fixture
def closed_port() -> Iterator[int]:
    """A local port that is bound but not listening: connecting to it is refused, for sure."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        yield sock.getsockname()[1]


@pytest.fixture
def short_timeout(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(dm_distributed, "CONNECT_TIMEOUT_S", 1)


BAD_ADDRESSES = [
    # (address, sentence it must give, why)
    ("CLOSED", "could not reach the Dask scheduler at", "nothing listens there"),
    ("crew-cluster", "is neither a local scheduler", "no port: not an address"),
    ("tcp://127.0.0.1:port", "is neither a local scheduler", "port is not a number"),
]
assert len({row[0] for row in BAD_ADDRESSES}) == len(BAD_ADDRESSES)


def _address(given: str, port: int) -> str:
    return f"tcp://127.0.0.1:{port}" if given == "CLOSED" else given


@pytest.mark.parametrize(("given", "sentence", "why"), BAD_ADDRESSES)
def test_bad_address_is_one_sentence(
    data, log, tmp_path, closed_port, short_timeout, given, sentence, why
):
    address = _address(given, closed_port)
    out = tmp_path / "out"
    with pytest.raises(DatemendError, match=sentence) as caught:
        replay_dask(log, str(data / "crew_*.csv"), out_dir=out, scheduler=address)
    assert f'"{address}"' in str(caught.value)
    assert list(out.iterdir()) == []  # nothing written, staging folder removed


@pytest.mark.parametrize(("given", "sentence", "why"), BAD_ADDRESSES)
def test_cli_bad_address_exits_3_with_one_line(
    data, log, tmp_path, closed_port, short_timeout, capsys, given, sentence, why
):
    address = _address(given, closed_port)
    log_path = tmp_path / "crew.fixlog.json"
    log.save(log_path)
    out = tmp_path / "out"
    code = main(
        ["replay", str(log_path), str(data / "crew_*.csv"), "--engine", "dask", "-o", str(out)]
        + ["--scheduler", address]
    )
    err = capsys.readouterr().err
    assert code == EXIT_INPUT  # 3: a problem the user can fix (cli.py exit codes)
    assert err.startswith("datemend: ") and sentence in err and address in err
    assert err.count("\n") == 1 and "Traceback" not in err  # one line, no traceback
    assert list(out.iterdir()) == []
