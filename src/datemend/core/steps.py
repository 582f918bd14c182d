"""Fix steps: small frozen dataclasses, each a pure, row-local change to a CleanTable.

A step's fields are its parameters and its JSON form; ``apply`` never infers anything (that
happened before the step was made), so replaying a log gives the same result on a whole file or
on any partition of it. Register new step kinds with ``@register_step``.
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass, field
from typing import Any, ClassVar, TypeVar

from .clean import CleanTable

__all__ = ["STEP_TYPES", "ApplyContext", "Step", "register_step", "step_from_dict"]


@dataclass(frozen=True)
class ApplyContext:
    """Facts a step may need that are not in the table: "today" for steps whose reference date is
    the day of replay, and the key column chosen for the run."""

    today: _dt.date = field(default_factory=_dt.date.today)
    key_column: str | None = None


class Step:
    """Base of every fix step. Subclasses are ``@dataclass(frozen=True)`` and set ``kind``."""

    kind: ClassVar[str] = ""

    def apply(self, table: CleanTable, ctx: ApplyContext) -> CleanTable:
        raise NotImplementedError

    def describe(self) -> str:
        """The one sentence the fix-log panel shows."""
        raise NotImplementedError

    def columns_read(self) -> tuple[str, ...]:
        """Source or output column names this step needs."""
        return ()

    def to_dict(self) -> dict[str, Any]:
        """JSON form: ``{"kind": self.kind, ...parameters}``; JSON values only."""
        raise NotImplementedError

    @classmethod
    def schema(cls) -> dict[str, Any]:
        """JSON Schema of this step's JSON form; the fix log's schema is built from these."""
        raise NotImplementedError

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> Step:
        raise NotImplementedError


S = TypeVar("S", bound=type[Step])

#: Every step kind by its JSON name.
STEP_TYPES: dict[str, type[Step]] = {}


def register_step(cls: S) -> S:
    if not cls.kind:
        raise TypeError(f"{cls.__name__} has no kind")
    if cls.kind in STEP_TYPES and STEP_TYPES[cls.kind] is not cls:
        raise TypeError(f"step kind {cls.kind!r} registered twice")
    STEP_TYPES[cls.kind] = cls
    return cls


def step_from_dict(d: dict[str, Any]) -> Step:
    """Build a step from its JSON form (validated beforehand by the fix log's schema)."""
    kind = d.get("kind")
    if kind not in STEP_TYPES:
        raise KeyError(kind)
    return STEP_TYPES[kind].from_dict(d)
