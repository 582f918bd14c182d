"""``df.datemend``: the date engine one line away from a pandas DataFrame, with no window.

Registering is explicit, so ``import datemend`` stays cheap and never touches pandas' accessor
namespace behind the user's back::

    import pandas as pd
    import datemend.accessor  # registers df.datemend

    df = pd.read_csv("roster.csv", dtype=str, keep_default_na=False)
    df.datemend.scan()                       # one line per column; HTML table in a notebook
    clean = df.datemend.apply("roster.datemend.json")   # a saved fix log -> DataFrame
    df.datemend.replay("roster.datemend.json")          # the drift report first

For a workbook, ``datemend.read_table("roster.xlsx").to_dataframe()`` gives a frame whose cells
keep their kinds (date cells as datetimes, serial numbers as numbers), exactly as the window and
the command line see them.

Nothing here imports Qt. The same core calls run behind the window and the command line, so a
log applied here gives the same values as ``datemend replay``.
"""

from __future__ import annotations

import datetime as _dt
from pathlib import Path
from typing import TYPE_CHECKING, Any

import pandas as pd

from .core.render import ReplayView, ReportsView
from .core.steps import ApplyContext
from .core.table import DatemendError, RawTable, SourceFacts

if TYPE_CHECKING:
    from .core.clean import CleanTable

__all__ = ["ACCESSOR_NAME", "DatemendAccessor"]

#: The attribute name on every DataFrame: ``df.datemend``.
ACCESSOR_NAME = "datemend"


def _load_log(log_or_path: Any) -> Any:
    """A FixLog as given, or loaded (and validated) from a path or a JSON dict."""
    from .core import fixlog

    if isinstance(log_or_path, fixlog.FixLog):
        return log_or_path
    if isinstance(log_or_path, str | Path):
        return fixlog.FixLog.load(log_or_path)
    if isinstance(log_or_path, dict):
        return fixlog.FixLog.from_dict(log_or_path)
    raise DatemendError(
        f"a fix log must be a FixLog, a path to a fix-log file or its JSON dict, "
        f"not {type(log_or_path).__name__}."
    )


@pd.api.extensions.register_dataframe_accessor(ACCESSOR_NAME)
class DatemendAccessor:
    """Scan a DataFrame's columns for dates, apply or replay a saved fix log.

    ``text_only`` (default: True when every column holds only strings) reads each non-empty
    value as text, the way a CSV file is read; otherwise each cell's kind comes from its Python
    type (datetimes from ``read_excel`` stay dates, numbers stay numbers).
    """

    def __init__(self, df: pd.DataFrame) -> None:
        self._df = df

    # -------------------------------------------------------------------------------- input

    def _all_text(self) -> bool:
        """True when every non-missing value is a string (a CSV read with ``dtype=str``)."""
        return all(
            pd.api.types.infer_dtype(self._df.iloc[:, i], skipna=True) in ("string", "empty")
            for i in range(self._df.shape[1])
        )

    def raw(self, *, text_only: bool | None = None, name: str | None = None) -> RawTable:
        """The DataFrame as the engine's RawTable (values kept as given, a kind per cell)."""
        if text_only is None:
            text_only = self._all_text()
        facts = SourceFacts(path=name, format="dataframe")
        return RawTable.from_dataframe(self._df, facts, text_only=text_only)

    # -------------------------------------------------------------------------------- scan

    def scan(
        self,
        columns: list[str] | None = None,
        *,
        prefer_day_order: str | None = None,
        reference_year: int | None = None,
        text_only: bool | None = None,
    ) -> ReportsView:
        """Report, per column, how its values read as dates: ranked suggestions with evidence.

        ``prefer_day_order`` ("dmy" or "mdy") decides only where the data cannot, and the report
        says so. The result prints as a table and renders as HTML in a notebook; index it by
        position or column name, ``.detail(name)`` shows one column in full.
        """
        from .core.infer import scan

        raw = self.raw(text_only=text_only)
        if columns is not None:
            missing = [c for c in columns if c not in raw]
            if missing:
                raise DatemendError(f'the DataFrame has no column "{missing[0]}".')
            raw = RawTable(tuple(raw.column(c) for c in columns), raw.facts, raw.source_rows)
        reports = scan(raw, prefer_day_order=prefer_day_order, reference_year=reference_year)
        return ReportsView(reports)

    def auto_log(
        self,
        *,
        prefer_day_order: str | None = None,
        reference_year: int | None = None,
        text_only: bool | None = None,
    ) -> Any:
        """A fix log of the engine's best, unambiguous suggestion for each date column."""
        from .core.fixlog import make_auto_log
        from .core.infer import scan

        raw = self.raw(text_only=text_only)
        reports = scan(raw, prefer_day_order=prefer_day_order, reference_year=reference_year)
        return make_auto_log(raw, reports)

    # -------------------------------------------------------------------------------- apply

    def clean(
        self,
        log: Any,
        *,
        today: _dt.date | None = None,
        key_column: str | None = None,
        text_only: bool | None = None,
    ) -> CleanTable:
        """The core's CleanTable for this DataFrame and log: raw beside parsed, state per cell."""
        from .core.fixlog import apply_log

        return apply_log(
            _load_log(log), self.raw(text_only=text_only), self._context(today, key_column)
        )

    def apply(
        self,
        log: Any,
        *,
        keep_raw: bool = False,
        today: _dt.date | None = None,
        key_column: str | None = None,
        text_only: bool | None = None,
    ) -> pd.DataFrame:
        """Apply a saved fix log (a FixLog, a path, or its JSON dict) and return a new DataFrame.

        Each fixed column holds ``datetime64[us]`` dates (NaT where a cell stayed unresolved:
        see ``clean()`` for the reason of each); derived columns are appended; with ``keep_raw``
        the original text sits beside each fixed column. The index and every untouched column
        are kept as they were. ``today`` fixes "the day of replay" for steps that use it.
        """
        return self._frame(
            self.clean(log, today=today, key_column=key_column, text_only=text_only), keep_raw
        )

    def replay(
        self,
        log: Any,
        *,
        keep_raw: bool = False,
        today: _dt.date | None = None,
        key_column: str | None = None,
        text_only: bool | None = None,
    ) -> ReplayView:
        """Replay a fix log and say what changed: the drift report (``.report``), shown as a
        table, with the replayed DataFrame in ``.frame``."""
        from .core import fixlog

        raw = self.raw(text_only=text_only)
        result = fixlog.replay(_load_log(log), raw, self._context(today, key_column))
        report, clean = _split_replay(result)
        return ReplayView(report, None if clean is None else self._frame(clean, keep_raw))

    # -------------------------------------------------------------------------------- helpers

    @staticmethod
    def _context(today: _dt.date | None, key_column: str | None) -> ApplyContext:
        if today is None:
            return ApplyContext(key_column=key_column)
        return ApplyContext(today=today, key_column=key_column)

    def _frame(self, clean: CleanTable, keep_raw: bool) -> pd.DataFrame:
        """CleanTable -> DataFrame with this DataFrame's index and untouched columns as given."""
        out = clean.to_dataframe(keep_raw=keep_raw)
        fixed = {pc.output_name for pc in clean.parsed.values()}
        for i, rc in enumerate(clean.raw.columns):
            if i >= self._df.shape[1]:
                break
            if rc.name in out.columns and rc.name not in fixed and rc.name not in clean.derived:
                out[rc.name] = self._df.iloc[:, i].reset_index(drop=True)
        out.index = self._df.index
        return out


def _split_replay(result: Any) -> tuple[Any, CleanTable | None]:
    """(drift report, replayed table): the core's ReplayReport carries its table."""
    return result, getattr(result, "table", None)
