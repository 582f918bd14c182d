"""datemend: preview and fix messy date columns in spreadsheets, and replay the fixes next month.

The public API is small and Qt-free; the desktop window is a front over the same calls.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from ._version import __version__

if TYPE_CHECKING:
    from .core.infer import scan
    from .core.readers import read_table

__all__ = ["__version__", "read_table", "scan"]


def __getattr__(name: str) -> Any:
    # Lazy, so `import datemend` stays cheap for the command line.
    if name == "scan":
        from .core.infer import scan

        return scan
    if name == "read_table":
        from .core.readers import read_table

        return read_table
    raise AttributeError(f"module 'datemend' has no attribute {name!r}")
