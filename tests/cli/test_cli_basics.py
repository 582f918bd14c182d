"""The command line's shell: help, version, module entry, and how errors reach the user."""

import subprocess
import sys

import pytest

from datemend import __version__
from datemend.cli import EXIT_INPUT, EXIT_INTERNAL, main


def test_version(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["--version"])
    assert exc.value.code == 0
    assert capsys.readouterr().out.strip() == f"datemend {__version__}"


def test_help_lists_subcommands(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    out = capsys.readouterr().out
    for cmd in ("open", "scan", "auto", "replay"):
        assert cmd in out


def test_python_dash_m_works():
    out = subprocess.run(
        [sys.executable, "-m", "datemend", "--version"], capture_output=True, text=True, check=True
    )
    assert __version__ in out.stdout


def test_missing_file_is_one_sentence_and_exit_3(tmp_path, capsys):
    code = main(["scan", str(tmp_path / "nowhere.csv")])
    err = capsys.readouterr().err
    assert code == EXIT_INPUT
    assert "nowhere.csv" in err
    assert "Traceback" not in err
    assert len(err.strip().splitlines()) == 1


def test_internal_error_goes_to_log_file_not_screen(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("DATEMEND_LOG_DIR", str(tmp_path / "logs"))

    def boom(args):
        raise RuntimeError("something broke")

    import datemend.cli_commands as cc

    monkeypatch.setattr(cc, "run_scan", boom)
    code = main(["scan", "whatever.csv"])
    err = capsys.readouterr().err
    assert code == EXIT_INTERNAL
    assert "Traceback" not in err
    log = (tmp_path / "logs" / "datemend.log").read_text()
    assert "Traceback" in log and "something broke" in log


def test_output_over_source_is_refused(tmp_path):
    from datemend.cli_commands import check_output_path
    from datemend.core.table import DatemendError

    src = tmp_path / "in.csv"
    src.write_text("a\n1\n")
    with pytest.raises(DatemendError, match="never writes over its input"):
        check_output_path(src, str(src), overwrite=True)
    other = tmp_path / "out.csv"
    other.write_text("x")
    with pytest.raises(DatemendError, match="--overwrite"):
        check_output_path(other, str(src), overwrite=False)
    check_output_path(other, str(src), overwrite=True)  # allowed: no exception
    assert other.read_text() == "x"


def test_one_row_is_said_in_the_singular(tmp_path, capsys):
    src = tmp_path / "one.csv"
    src.write_text("Member,Joined\nR1,2019-10-03\n", encoding="utf-8")
    main(["auto", str(src), "-o", str(tmp_path / "out.csv")])
    assert "(1 row," in capsys.readouterr().out
