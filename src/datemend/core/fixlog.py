"""FixLog: the ordered fix steps of one kind of file, saved as JSON and replayed next month.

The JSON file holds data only (it is read with ``json.loads``, never unpickled or evaluated),
says what it is (``"format": "datemend-fixlog"``, an integer ``version``), and carries facts
about the file it was made on — for the drift report, never as a lock. Loading refuses files
over ``MAX_BYTES``, nested deeper than ``MAX_DEPTH`` or with more than ``MAX_STEPS`` steps, and
checks every step against its registered JSON Schema (Draft 2020-12); each problem is a
``FixLogError`` whose one sentence names the file, the step number (1-based) and the field.

Example (shortened)::

    {
      "format": "datemend-fixlog",
      "version": 1,
      "datemend_version": "0.1.0",
      "created": "2026-11-02T09:15:00Z",
      "source": {"file_name": "rowing_club_2026-10.xlsx", "sheet": "Members",
                 "columns": ["Member no", "Name", "Born", …], "sha256": "e62b…", "rows": 300,
                 "date_system": 1900,
                 "ranges": {"Born": ["1950-02-05T00:00:00", "2013-11-30T00:00:00"], …},
                 "unresolved": {"Renewal due": ["31/04/2026"]},
                 "unresolved_shapes": {"Renewal due": ["99/99/9999"]},
                 "keys": ["0102", "0109", …]},
      "key_column": "Member no",
      "notes": [],
      "steps": [
        {"enabled": true, "step": {"kind": "read-dates", "column": "Born",
                                   "spec": {"patterns": ["num-slash"], "day_order": "dmy", …},
                                   "label": "D/M/YY 80% · date cell 20%"}},
        {"enabled": true, "step": {"kind": "set-cell", "column": "Renewal due", "key": "0275",
                                   "value": "2026-04-30", "key_column": "Member no",
                                   "raw": "31/04/2026", "note": ""}}
      ]
    }

Reading the file safely is ``logcheck.py``'s job; applying a log is ``applylog.py``'s.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import json
import os
import tempfile
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from .._version import __version__
from .clean import CellState, CleanTable
from .logcheck import (
    FORMAT,
    MAX_BYTES,
    MAX_DEPTH,
    MAX_STEPS,
    VERSION,
    FixLogError,
    build_step,
    check_envelope,
    fixlog_schema,
    load_step_kinds,
    parse_json,
)
from .steps import Step
from .table import DatemendError

__all__ = [
    "FORMAT",
    "MAX_BYTES",
    "MAX_DEPTH",
    "MAX_STEPS",
    "VERSION",
    "FixLog",
    "FixLogError",
    "LogEntry",
    "LogSource",
    "StepError",
    "fixlog_schema",
    "load_step_kinds",
    "parsed_ranges",
    "unresolved_shapes",
    "unresolved_values",
]


class StepError(DatemendError):
    """A step could not be applied; the message names the step number."""


@dataclass(frozen=True)
class LogEntry:
    """One step of a log and whether it runs."""

    step: Step
    enabled: bool = True


@dataclass(frozen=True)
class LogSource:
    """Facts about the file a log was made on (information for the drift report, not a lock).

    ``ranges``: for each parsed source column, the earliest and latest date read or set by hand
    (ISO 8601), so replay can point at values far outside them. ``unresolved``: the distinct raw
    values (the ``MAX_UNRESOLVED`` most frequent per column) no pattern read in the source, and
    ``unresolved_shapes`` the shapes of all of them, so replay tells a failure already known from
    a new one. ``keys``: the key column's values when the table
    has at most ``MAX_KEYS`` rows, so replay can say which rows are new and which are gone.
    """

    file_name: str | None = None
    sheet: str | None = None
    columns: tuple[str, ...] = ()
    sha256: str | None = None
    rows: int | None = None
    date_system: int | None = None
    ranges: dict[str, tuple[str, str]] = field(default_factory=dict)
    unresolved: dict[str, tuple[str, ...]] = field(default_factory=dict)
    unresolved_shapes: dict[str, tuple[str, ...]] = field(default_factory=dict)
    keys: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        d = dataclasses.asdict(self)
        d["columns"] = list(self.columns)
        d["ranges"] = {k: list(v) for k, v in self.ranges.items()}
        d["unresolved"] = {k: list(v) for k, v in self.unresolved.items()}
        d["unresolved_shapes"] = {k: list(v) for k, v in self.unresolved_shapes.items()}
        d["keys"] = list(self.keys)
        return d

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> LogSource:
        d = dict(d)
        d["columns"] = tuple(d.get("columns", ()))
        d["ranges"] = {k: (v[0], v[1]) for k, v in d.get("ranges", {}).items()}
        d["unresolved"] = {k: tuple(v) for k, v in d.get("unresolved", {}).items()}
        shapes = d.get("unresolved_shapes", {})
        d["unresolved_shapes"] = {k: tuple(v) for k, v in shapes.items()}
        d["keys"] = tuple(d.get("keys", ()))
        return cls(**d)

    @classmethod
    def of(cls, clean: CleanTable) -> LogSource:
        raw = clean.raw
        return cls(
            file_name=raw.facts.file_name,
            sheet=raw.facts.sheet,
            columns=tuple(raw.names),
            sha256=raw.facts.sha256,
            rows=raw.n_rows,
            date_system=raw.facts.date_system,
            ranges=parsed_ranges(clean),
            unresolved=unresolved_values(clean),
            unresolved_shapes=unresolved_shapes(clean),
            keys=_keys_of(clean),
        )


def _keys_of(clean: CleanTable) -> tuple[str, ...]:
    from .rowkey import key_text

    key = clean.key_column
    if key is None or key not in clean.raw or clean.raw.n_rows > MAX_KEYS:
        return ()
    return tuple(str(k) for k in key_text(clean.raw.column(key)))


def parsed_ranges(clean: CleanTable) -> dict[str, tuple[str, str]]:
    """Earliest and latest value (parsed or set by hand) of each parsed column, ISO 8601."""
    out: dict[str, tuple[str, str]] = {}
    for name, pc in clean.parsed.items():
        ok = ((pc.state == CellState.PARSED) | (pc.state == CellState.MANUAL)) & ~np.isnat(pc.value)
        if ok.any():
            vals = pc.value[ok]
            lo, hi = np.datetime_as_string(np.array([vals.min(), vals.max()]), unit="s")
            out[name] = (str(lo), str(hi))
    return out


#: Distinct unresolved values a log keeps per column (and their longest kept length).
MAX_UNRESOLVED = 100
MAX_VALUE_CHARS = 60
#: Largest table whose row keys a log keeps (about 150 kB of JSON for short keys).
MAX_KEYS = 10_000


#: Distinct shapes of unresolved values a log keeps per column.
MAX_SHAPES = 200


def _failed_counts(clean: CleanTable) -> dict[str, pd.Series]:
    """Per parsed column: count of each distinct trimmed raw value no pattern read, most
    frequent first."""
    from .rowkey import cells_text

    out: dict[str, pd.Series] = {}
    for name, pc in clean.parsed.items():
        rows = np.flatnonzero(pc.state == CellState.FAILED)
        if len(rows) and name in clean.raw:
            counts = cells_text(clean.raw.column(name), rows).value_counts()
            out[name] = counts.sort_index(kind="stable").sort_values(ascending=False, kind="stable")
    return out


def unresolved_values(clean: CleanTable) -> dict[str, tuple[str, ...]]:
    """The most frequent distinct raw values of the cells no pattern read, per parsed column."""
    out: dict[str, tuple[str, ...]] = {}
    for name, counts in _failed_counts(clean).items():
        values = [str(v)[:MAX_VALUE_CHARS] for v in counts.index[:MAX_UNRESOLVED]]
        out[name] = tuple(dict.fromkeys(values))
    return out


def unresolved_shapes(clean: CleanTable) -> dict[str, tuple[str, ...]]:
    """The shapes (see ``replay.shape_of``) of every unresolved value, per parsed column."""
    from .replay import shape_of

    out: dict[str, tuple[str, ...]] = {}
    for name, counts in _failed_counts(clean).items():
        shapes = pd.Series(counts.to_numpy(), index=[shape_of(str(v)) for v in counts.index])
        ranked = (
            shapes.groupby(level=0, sort=True).sum().sort_values(ascending=False, kind="stable")
        )
        out[name] = tuple(str(s) for s in ranked.index[:MAX_SHAPES])
    return out


def _now() -> str:
    return _dt.datetime.now(_dt.UTC).replace(microsecond=0).isoformat().replace("+00:00", "Z")


@dataclass(frozen=True)
class FixLog:
    """Ordered fix steps plus facts about the file they were made on. Immutable: every edit
    returns a new log, so an undo history is a list of logs."""

    entries: tuple[LogEntry, ...] = ()
    source: LogSource | None = None
    key_column: str | None = None
    created: str = field(default_factory=_now)
    datemend_version: str = __version__
    notes: tuple[str, ...] = ()

    # ---- reading the log
    def __len__(self) -> int:
        return len(self.entries)

    @property
    def steps(self) -> tuple[Step, ...]:
        """The enabled steps, in order."""
        return tuple(e.step for e in self.entries if e.enabled)

    def blank_tokens(self, column: str) -> set[str]:
        """Tokens (case-folded) this log treats as blank in ``column``."""
        from .steps import BlankTokens, ReadDates

        out: set[str] = set()
        for s in self.steps:
            if isinstance(s, ReadDates) and s.column == column:
                out |= {t.strip().casefold() for t in s.spec.blank_tokens}
            elif isinstance(s, BlankTokens) and (not s.columns or column in s.columns):
                out |= {t.strip().casefold() for t in s.tokens}
        return out

    # ---- edits (each returns a new log)
    def evolve(self, **changes: Any) -> FixLog:
        return dataclasses.replace(self, **changes)

    def _with(self, entries: Iterable[LogEntry]) -> FixLog:
        return self.evolve(entries=tuple(entries))

    def add(self, step: Step, index: int | None = None, *, enabled: bool = True) -> FixLog:
        items = list(self.entries)
        items.insert(len(items) if index is None else index, LogEntry(step, enabled))
        return self._with(items)

    def remove(self, index: int) -> FixLog:
        items = list(self.entries)
        del items[index]
        return self._with(items)

    def replace(self, index: int, step: Step) -> FixLog:
        items = list(self.entries)
        items[index] = LogEntry(step, items[index].enabled)
        return self._with(items)

    def set_enabled(self, index: int, enabled: bool) -> FixLog:
        items = list(self.entries)
        items[index] = LogEntry(items[index].step, enabled)
        return self._with(items)

    def move(self, src: int, dst: int) -> FixLog:
        """Move the step at ``src`` so that it ends up at position ``dst``."""
        items = list(self.entries)
        item = items.pop(src)
        items.insert(dst, item)
        return self._with(items)

    def with_columns_renamed(self, mapping: dict[str, str]) -> FixLog:
        """The log with its steps reading the new names of renamed columns (e.g. the likely
        matches of a drift report); the source facts follow the new names too."""
        entries = tuple(
            LogEntry(e.step.with_columns_renamed(mapping), e.enabled) for e in self.entries
        )
        key = mapping.get(self.key_column, self.key_column) if self.key_column else None
        src = self.source
        if src is not None:
            src = dataclasses.replace(
                src,
                columns=tuple(mapping.get(c, c) for c in src.columns),
                ranges={mapping.get(k, k): v for k, v in src.ranges.items()},
                unresolved={mapping.get(k, k): v for k, v in src.unresolved.items()},
                unresolved_shapes={mapping.get(k, k): v for k, v in src.unresolved_shapes.items()},
            )
        return self.evolve(entries=entries, key_column=key, source=src)

    def with_source(self, clean: CleanTable) -> FixLog:
        """The log with facts (and value ranges) taken from the table it was made on."""
        return self.evolve(source=LogSource.of(clean))

    # ---- JSON
    def to_dict(self) -> dict[str, Any]:
        return {
            "format": FORMAT,
            "version": VERSION,
            "datemend_version": self.datemend_version,
            "created": self.created,
            "source": None if self.source is None else self.source.to_dict(),
            "key_column": self.key_column,
            "notes": list(self.notes),
            "steps": [{"enabled": e.enabled, "step": e.step.to_dict()} for e in self.entries],
        }

    def to_json(self) -> str:
        return json.dumps(self.to_dict(), indent=2, ensure_ascii=False) + "\n"

    def save(self, path: str | Path) -> None:
        """Write the log as UTF-8 JSON, atomically (temporary file in the folder, then moved)."""
        path = Path(path)
        data = self.to_json().encode("utf-8")
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
            os.replace(tmp, path)
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise

    @classmethod
    def from_dict(cls, d: Any, name: str = "the fix log") -> FixLog:
        """Validate JSON data and build the log; every problem is one FixLogError."""
        load_step_kinds()
        check_envelope(d, name)
        entries = []
        for i, item in enumerate(d["steps"], start=1):
            entries.append(LogEntry(build_step(item["step"], i, name), item.get("enabled", True)))
        try:
            source = None if d.get("source") is None else LogSource.from_dict(d["source"])
        except (TypeError, ValueError) as err:
            raise FixLogError(f'{name}: field "source" is not valid ({err}).', name) from None
        return cls(
            entries=tuple(entries),
            source=source,
            key_column=d.get("key_column"),
            created=d.get("created", ""),
            datemend_version=d.get("datemend_version", ""),
            notes=tuple(d.get("notes", ())),
        )

    @classmethod
    def loads(cls, text: str | bytes, name: str = "the fix log") -> FixLog:
        """Read a log from JSON text; refuses oversized or too deeply nested input."""
        if len(text) > MAX_BYTES:
            raise FixLogError(
                f"{name} is larger than {MAX_BYTES // (1024 * 1024)} MB, too big for a fix "
                "log; it was not read.",
                name,
            )
        if isinstance(text, bytes):
            try:
                text = text.decode("utf-8-sig")
            except UnicodeDecodeError as err:
                raise FixLogError(
                    f"{name} is not UTF-8 text (byte {err.start}); it is not a fix log.", name
                ) from None
        return cls.from_dict(parse_json(text, name), name)

    @classmethod
    def load(cls, path: str | Path) -> FixLog:
        """Read a log file (see ``loads``); the error names the file."""
        path = Path(path)
        name = path.name
        try:
            if path.stat().st_size > MAX_BYTES:
                raise FixLogError(
                    f"{name} is larger than {MAX_BYTES // (1024 * 1024)} MB, too big for a fix "
                    "log; it was not read.",
                    str(path),
                )
            with path.open("rb") as fh:
                data = fh.read(MAX_BYTES + 1)
        except OSError as err:
            raise FixLogError(f"{name} could not be opened ({err.strerror}).", str(path)) from None
        try:
            return cls.loads(data, name)
        except FixLogError as err:
            err.path = str(path)
            raise


_APPLY = ("apply_entry", "apply_log", "apply_run", "apply_to_dataframe", "auto_fix")
_APPLY += ("known_names", "make_auto_log")


def __getattr__(name: str) -> Any:
    # Applying lives in applylog.py and replaying in replay.py (both import this module); they
    # are reachable from here too, as ``fixlog.apply_log``, ``fixlog.replay`` and so on.
    if name in _APPLY:
        from . import applylog

        return getattr(applylog, name)
    if name in ("replay", "ReplayReport", "drift_report"):
        from . import replay as _replay

        return getattr(_replay, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
