"""Smoke test of the self-contained bundle (scripts/build_bundle.py), when it has been built.

Skipped when dist/datemend is absent: building takes minutes and is not part of CI. The bundle is
run with a scrubbed environment (no PYTHONPATH, no virtual environment on PATH), so it can only
work from what it carries.
"""

from __future__ import annotations

import os
import subprocess
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
APP = ROOT / "dist" / "datemend"
EXE = APP / "datemend"
SAMPLE = ROOT / "sample_files" / "rowing_club_2026-10.csv"

pytestmark = pytest.mark.skipif(
    not EXE.exists(), reason="bundle not built (scripts/build_bundle.py)"
)


def _env() -> dict[str, str]:
    env = {
        k: v
        for k, v in os.environ.items()
        if not k.startswith(("PYTHON", "VIRTUAL_ENV", "CONDA")) and k != "PATH"
    }
    env["PATH"] = "/usr/bin:/bin"  # no Python of ours on the way
    env["QT_QPA_PLATFORM"] = "offscreen"
    return env


def _run(*args: str, timeout: float = 120) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [str(EXE), *args], capture_output=True, text=True, env=_env(), timeout=timeout, cwd=APP
    )


def test_version():
    from datemend import __version__

    out = _run("--version")
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == f"datemend {__version__}"


@pytest.mark.skipif(not SAMPLE.exists(), reason="sample_files/ not built")
def test_scan_a_sample():
    out = _run("scan", str(SAMPLE), "--json")
    assert out.returncode in (0, 4), out.stderr  # 4: some column is ambiguous (documented)
    assert "Traceback" not in out.stderr
    import json

    reports = json.loads(out.stdout)
    columns = [r["column"] for r in (reports if isinstance(reports, list) else reports["columns"])]
    # the sample's date columns, as its ground truth (sample_files/truth.json) names them
    truth = json.loads((ROOT / "sample_files" / "truth.json").read_text(encoding="utf-8"))
    assert set(truth["date_columns"]) <= set(columns)


@pytest.mark.skipif(not SAMPLE.exists(), reason="sample_files/ not built")
def test_auto_then_replay(tmp_path):
    log = tmp_path / "oct.datemend.json"
    out = _run("auto", str(SAMPLE), "-o", str(tmp_path / "oct.xlsx"), "--log-out", str(log))
    assert out.returncode in (0, 4), out.stderr
    assert log.exists() and (tmp_path / "oct.xlsx").exists()
    out = _run("replay", str(log), str(SAMPLE), "-o", str(tmp_path / "again.csv"))
    assert out.returncode in (0, 4), out.stderr
    assert (tmp_path / "again.csv").stat().st_size > 0


def test_window_starts_offscreen():
    proc = subprocess.Popen(
        [str(EXE)], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=_env()
    )
    try:
        time.sleep(6)  # long enough to import Qt and show the window; it must still be running
        alive = proc.poll() is None
    finally:
        proc.terminate()
        try:
            _, err = proc.communicate(timeout=20)
        except subprocess.TimeoutExpired:
            proc.kill()
            _, err = proc.communicate()
    assert alive, err
    assert "Traceback" not in err


def test_desktop_entry_and_icon_travel_with_the_bundle():
    entry = APP / "share" / "applications" / "datemend.desktop"
    text = entry.read_text(encoding="utf-8")
    # keys required by the freedesktop.org Desktop Entry Specification for Type=Application
    assert text.startswith("[Desktop Entry]")
    for key in ("Type=Application", "Name=", "Exec="):
        assert key in text
    assert (APP / "share" / "icons" / "hicolor" / "256x256" / "apps" / "datemend.png").exists()


def test_parquet_is_read_after_trimming_pyarrow(tmp_path):
    pa = pytest.importorskip("pyarrow")
    import pyarrow.parquet as pq

    path = tmp_path / "outings.parquet"
    pq.write_table(pa.table({"Outing": ["2026-10-03", "2026-10-10"], "Crew": ["A", "B"]}), path)
    out = _run("scan", str(path), "--json")
    assert out.returncode in (0, 4), out.stderr
    assert "Outing" in out.stdout
