"""What a scan says about a column: ranked suggestions, each with the evidence behind it."""

from __future__ import annotations

from dataclasses import dataclass, field

from .spec import ParseSpec

__all__ = ["CellNote", "ColumnReport", "Suggestion"]


@dataclass(frozen=True)
class CellNote:
    """One cell worth showing: its row position, 1-based source row, raw text, and a sentence."""

    row: int
    source_row: int
    raw: str
    text: str  # the reason it failed, or what the two readings were


@dataclass(frozen=True)
class Suggestion:
    """One way to parse a column, and why.

    ``mix`` is the share of each pattern among parsed cells, largest first, as
    (pattern id, label, count). ``label`` reads like "D/M/YYYY 70% · ISO 8601 20% · serial 1900 8%".
    ``decisions`` says, for each column-wide choice the spec makes ("day_order", "century",
    "date_system", "zone"), how it was made: "evidence", "preference", "default" or "undecided".
    ``disagreements``: cells where this reading and the next-ranked one give different dates
    (raw, this ISO, other ISO).
    """

    spec: ParseSpec
    label: str
    score: float
    parsed: int
    total: int  # non-blank cells considered
    mix: tuple[tuple[str, str, int], ...] = ()
    examples: tuple[tuple[str, str], ...] = ()  # (raw, parsed ISO 8601)
    evidence: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()
    decisions: dict[str, str] = field(default_factory=dict, hash=False, compare=False)
    disagreements: tuple[tuple[str, str, str], ...] = ()
    failures: tuple[CellNote, ...] = ()  # a capped sample; ``failed`` has the full count
    failed: int = 0
    ambiguous: int = 0

    @property
    def coverage(self) -> float:
        return self.parsed / self.total if self.total else 0.0


@dataclass(frozen=True)
class ColumnReport:
    """The scan of one column."""

    column: str
    n_rows: int
    likeness: float  # 0..1: how much this column looks like dates
    is_date: bool  # likeness above the threshold the engine uses
    blank: int  # empty cells
    kinds: dict[str, int] = field(default_factory=dict, hash=False, compare=False)
    placeholders: tuple[tuple[str, int], ...] = ()  # recurring tokens suggested as blank
    suggestions: tuple[Suggestion, ...] = ()
    summary: str = ""  # one line for the columns list and the CLI

    @property
    def best(self) -> Suggestion | None:
        return self.suggestions[0] if self.suggestions else None
