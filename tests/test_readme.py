"""The README's two set-up commands are the ones CI runs, and they point at files that exist."""

import pathlib
import re

ROOT = pathlib.Path(__file__).resolve().parents[1]
README = (ROOT / "README.md").read_text(encoding="utf-8")


def _setup_commands() -> list[str]:
    section = README.split("## Set up and run", 1)[1].split("\n## ", 1)[0]
    return re.findall(r"```\n(.*?)\n```", section, flags=re.S)


def test_exactly_two_setup_commands():
    cmds = _setup_commands()
    assert len(cmds) == 2, cmds
    assert all("\n" not in c for c in cmds), "each set-up command is one line"


def test_ci_runs_the_readme_test_command_word_for_word():
    test_cmd = _setup_commands()[1]
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert test_cmd in ci
    assert "pytest" in test_cmd and "QT_QPA_PLATFORM=offscreen" in test_cmd


def test_first_command_opens_a_sample_that_exists():
    run_cmd = _setup_commands()[0]
    sample = re.search(r"(sample_files/\S+)", run_cmd)
    assert sample, run_cmd
    assert (ROOT / sample.group(1)).is_file()


def test_readme_has_cautions_and_troubleshooting():
    assert "## Cautions" in README and "local rules" in README.lower()
    assert "Troubleshooting" in README
