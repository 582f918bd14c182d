"""The core and the command-line scan path must never load Qt (ARCHITECTURE.md's main rule)."""

import pathlib
import subprocess
import sys

import pytest

CORE = pathlib.Path(__file__).resolve().parents[1] / "src" / "datemend" / "core"


def _modules_after(code: str) -> set[str]:
    out = subprocess.run(
        [sys.executable, "-c", code + "\nimport sys; print('\\n'.join(sorted(sys.modules)))"],
        capture_output=True,
        text=True,
        check=True,
    ).stdout
    return set(out.split())


@pytest.mark.parametrize(
    "code",
    [
        "import datemend.core",
        "import datemend.core.infer, datemend.core.parse, datemend.core.steps",
        "import pkgutil, importlib, datemend.core as c\n"
        "for m in pkgutil.iter_modules(c.__path__):\n"
        "    importlib.import_module('datemend.core.' + m.name)",
        "from datemend.cli import main",
    ],
)
def test_core_loads_no_qt(code):
    loaded = _modules_after(code)
    qt = sorted(m for m in loaded if m.split(".")[0] in {"PySide6", "shiboken6", "PyQt5", "PyQt6"})
    assert qt == [], f"{code!r} loaded Qt modules: {qt[:5]}"


def test_core_sources_do_not_mention_qt_imports():
    offenders = [
        p.name
        for p in CORE.glob("*.py")
        if any(
            line.lstrip().startswith(("import PySide6", "from PySide6", "import shiboken6"))
            for line in p.read_text(encoding="utf-8").splitlines()
        )
    ]
    assert offenders == []
