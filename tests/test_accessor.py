"""The ``df.datemend`` accessor: scan a DataFrame, apply or replay a saved fix log, no window.

The reference for applied values is the single-machine path the command line runs on a file:
``read_table`` → ``apply_log`` (core.fixlog). A few cells are also checked by hand.
"""

from __future__ import annotations

import datetime as _dt
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import datemend.accessor  # noqa: F401  (registers df.datemend)
from datemend.core.fixlog import FixLog, apply_log, make_auto_log
from datemend.core.readers import read_table
from datemend.core.render import ReportsView
from datemend.core.steps import ApplyContext, BlankTokens, SetCell
from datemend.core.table import DatemendError

SAMPLES = Path(__file__).resolve().parents[1] / "sample_files"
TODAY = _dt.date(2026, 11, 30)


def _roster_csv(path: Path) -> Path:
    # invented rowing-club export: ISO dates, a placeholder, an impossible day, a blank
    path.write_text(
        "Member no,Name,Joined,Notes\n"
        "201,Ada Quill,2019-05-01,\n"
        "202,Bo Lantern,n/a,captain\n"
        "203,Cy Drummond,2021-02-30,typo\n"
        "204,Di Ferrow,,\n"
        "205,Ed Marsh,2024-02-29,leap day\n",
        encoding="utf-8",
    )
    return path


def _read_like_a_notebook(path: Path) -> pd.DataFrame:
    return pd.read_csv(path, dtype=str, keep_default_na=False)


def test_registered_under_our_name_and_no_qt_loaded():
    code = (
        "import pandas as pd, datemend.accessor, sys\n"
        "df = pd.DataFrame({'a': ['2020-01-02']})\n"
        "print(type(df.datemend).__name__)\n"
        "print(sorted(m for m in sys.modules if m.split('.')[0] in "
        "{'PySide6', 'shiboken6', 'PyQt5', 'PyQt6'}))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split("\n")[:2] == ["DatemendAccessor", "[]"]


def test_scan_reports_every_column(tmp_path):
    df = _read_like_a_notebook(_roster_csv(tmp_path / "roster.csv"))
    view = df.datemend.scan()
    assert isinstance(view, ReportsView)
    assert view.columns == ["Member no", "Name", "Joined", "Notes"]
    joined = view["Joined"]
    # by hand: 5 rows, one empty cell; "n/a" and 2021-02-30 are not dates
    assert joined.n_rows == 5 and joined.blank == 1
    assert joined.is_date
    assert not view["Name"].is_date
    html = view._repr_html_()
    assert "Joined" in html and "<table" in html
    assert "Joined" in str(view)
    assert [r.column for r in df.datemend.scan(["Joined"])] == ["Joined"]
    with pytest.raises(DatemendError, match="Missing"):
        df.datemend.scan(["Missing"])


def _log_for(path: Path) -> FixLog:
    raw = read_table(path)
    log = make_auto_log(raw, key_column="Member no")
    log = log.add(BlankTokens(("n/a",)))
    return log.add(SetCell("Joined", "203", "2021-02-28", key_column="Member no"))


def test_apply_matches_the_core_replay_of_the_same_file(tmp_path):
    path = _roster_csv(tmp_path / "roster.csv")
    log = _log_for(path)
    log_path = tmp_path / "roster.datemend.json"
    log.save(log_path)
    df = _read_like_a_notebook(path)
    df.index = pd.Index([10, 11, 12, 13, 14], name="row")  # the user's own index is kept

    got = df.datemend.apply(log_path, today=TODAY)
    core = apply_log(log, read_table(path), ApplyContext(today=TODAY)).to_dataframe()

    assert list(got.columns) == list(core.columns)
    assert got.index.equals(df.index)
    np.testing.assert_array_equal(got["Joined"].to_numpy(), core["Joined"].to_numpy())
    for name in ("Member no", "Name", "Notes"):  # untouched columns: exactly as given
        pd.testing.assert_series_equal(got[name], df[name])
        # the core holds None for an empty cell where read_csv holds ""
        assert got[name].tolist() == core[name].fillna("").tolist()
    # by hand (ISO 8601 calendar dates): row 201 read, "n/a" blank, 2021-02-30 set by hand to
    # 2021-02-28, empty cell stays empty, 2024-02-29 exists (2024 is a leap year)
    expected = pd.to_datetime(["2019-05-01", None, "2021-02-28", None, "2024-02-29"]).as_unit("us")
    np.testing.assert_array_equal(got["Joined"].to_numpy(), expected.to_numpy())


def test_apply_accepts_a_log_object_or_its_json_dict(tmp_path):
    path = _roster_csv(tmp_path / "roster.csv")
    log = _log_for(path)
    df = _read_like_a_notebook(path)
    a = df.datemend.apply(log, today=TODAY)
    b = df.datemend.apply(log.to_dict(), today=TODAY)
    pd.testing.assert_frame_equal(a, b)
    kept = df.datemend.apply(log, today=TODAY, keep_raw=True)
    assert kept["Joined (raw)"].tolist()[:3] == ["2019-05-01", "n/a", "2021-02-30"]
    with pytest.raises(DatemendError, match="fix log"):
        df.datemend.apply(42)


def test_missing_log_file_is_one_sentence(tmp_path):
    df = pd.DataFrame({"a": ["2020-01-01"]})
    with pytest.raises(DatemendError) as err:
        df.datemend.apply(tmp_path / "nope.json")
    assert "\n" not in str(err.value) and "nope.json" in str(err.value)


def test_typed_frame_keeps_cell_kinds():
    # read_excel-style frame: a real datetime cell and a number are not text
    df = pd.DataFrame({"When": [pd.Timestamp("2020-01-02"), None], "n": [1.5, 2.0]})
    raw = df.datemend.raw()
    assert [int(k) for k in raw.column("When").kinds] == [5, 0]  # DATETIME, EMPTY
    assert [int(k) for k in raw.column("n").kinds] == [3, 3]  # FLOAT
    text = pd.DataFrame({"When": ["2020-01-02", ""]})
    assert [int(k) for k in text.datemend.raw().column("When").kinds] == [1, 0]  # TEXT, EMPTY


def test_auto_log_then_apply_round_trip(tmp_path):
    path = _roster_csv(tmp_path / "roster.csv")
    df = _read_like_a_notebook(path)
    log = df.datemend.auto_log()
    assert any(getattr(s, "column", None) == "Joined" for s in log.steps)
    out = df.datemend.apply(log, today=TODAY)
    assert out["Joined"].iloc[0] == pd.Timestamp("2019-05-01")  # ISO 8601, by hand


def test_replay_gives_the_drift_report_and_the_frame(tmp_path):
    from datemend.core.replay import replay

    path = _roster_csv(tmp_path / "roster.csv")
    log = _log_for(path)
    df = _read_like_a_notebook(path)
    view = df.datemend.replay(log, today=TODAY)
    core = replay(log, read_table(path), ApplyContext(today=TODAY))
    # a frame has no file name and no checksum to compare with the log's source file
    assert view.report.to_dict() == {**core.to_dict(), "file": None, "same_file": None}
    joined = view.report.column("Joined")
    # by hand: 2019-05-01 and 2024-02-29 read; "n/a" and the empty cell blank; 2021-02-30 was
    # set by hand (February 2021 has 28 days)
    assert (joined.matched, joined.blank, joined.manual, joined.unmatched) == (2, 2, 1, 0)
    pd.testing.assert_frame_equal(view.frame, df.datemend.apply(log, today=TODAY))
    assert "Joined" in str(view)
    assert "<table" in view._repr_html_()


# ------------------------------------------------------------------------------ samples

OCTOBER = SAMPLES / "rowing_club_2026-10.csv"
NOVEMBER = SAMPLES / "rowing_club_2026-11.xlsx"
needs_samples = pytest.mark.skipif(
    not (OCTOBER.exists() and NOVEMBER.exists()), reason="sample_files/ not built yet"
)


@pytest.fixture(scope="module")
def october():
    """The October sample read the notebook way, its scan, and the auto log from that scan."""
    raw = read_table(OCTOBER)
    enc = raw.facts.encoding or "utf-8"
    df = pd.read_csv(
        OCTOBER,
        dtype=str,
        keep_default_na=False,
        sep=raw.facts.delimiter or ",",
        encoding="utf-8-sig" if enc in ("utf-8", "utf-8-sig") else enc,
    )
    view = df.datemend.scan()
    return raw, df, view, make_auto_log(raw, list(view))


@needs_samples
def test_sample_scan_apply_same_values_as_core(october):
    raw, df, view, log = october
    assert view.columns == raw.names
    assert len(log.entries) >= 1  # the accessor's scan fed the CLI's auto log
    got = df.datemend.apply(log, today=TODAY)
    core = apply_log(log, raw, ApplyContext(today=TODAY))
    core_df = core.to_dataframe()
    assert list(got.columns) == list(core_df.columns)
    for pc in core.parsed.values():
        name = pc.output_name
        np.testing.assert_array_equal(got[name].to_numpy(), core_df[name].to_numpy(), err_msg=name)


@needs_samples
def test_sample_replay_on_next_month_matches_core_replay(october):
    from datemend.core.replay import replay

    _, _, _, log = october
    raw = read_table(NOVEMBER)
    nov = raw.to_dataframe()  # a workbook's cells with their kinds, as a DataFrame
    view = nov.datemend.replay(log, today=TODAY)
    core = replay(log, raw, ApplyContext(today=TODAY))
    mine, ref = view.report.to_dict(), core.to_dict()
    # a DataFrame has no file name, sheet or checksum; everything else must be the same
    for key in ("file", "sheet", "same_file"):
        mine.pop(key), ref.pop(key)
    assert mine == ref
    ref_df = core.table.to_dataframe()
    for pc in core.table.parsed.values():
        name = pc.output_name
        np.testing.assert_array_equal(
            view.frame[name].to_numpy(), ref_df[name].to_numpy(), err_msg=name
        )
    assert "read by none" in str(view)  # the drift table is there in text
