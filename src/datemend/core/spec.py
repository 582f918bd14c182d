"""ParseSpec: everything needed to parse one column the same way every time.

A spec is made once (by the engine's suggestion, or the user's choice) and stored in the fix log,
so replay never infers again: the same spec on the same cell always gives the same result.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field
from typing import Any

__all__ = ["CENTURY_RULES", "DAY_ORDERS", "ParseSpec"]

#: Order of numeric day and month fields: day first, month first, or undecided (ambiguous cells
#: stay AMBIGUOUS). Year-first numeric dates (2024/03/04) are always read year-month-day.
DAY_ORDERS = ("dmy", "mdy", None)

#: Two-digit year rules:
#: - "posix": 69–99 → 1969–1999, 00–68 → 2000–2068 (POSIX strptime, ISO C).
#: - "past": the latest year not after ``pivot_year`` ending in those two digits (for dates of
#:   birth, start dates: never in the future as of ``pivot_year``).
#: - "either": undecided; a two-digit year the two rules above read differently (27–68 with
#:   pivot 2026) leaves its cell AMBIGUOUS with both readings. Needs ``pivot_year``.
CENTURY_RULES = ("posix", "past", "either")


@dataclass(frozen=True)
class ParseSpec:
    """Column-wide decisions plus the patterns allowed, in priority order.

    ``patterns`` are pattern ids from ``datemend.core.patterns`` (stable strings, JSON-safe).
    ``blank_tokens`` are compared after trimming and case-folding.
    ``zone``: None keeps offsets as written; "UTC" or an IANA name converts aware values there.
    ``naive_zone``: when converting, the zone naive values are taken to be in (None: left naive).
    ``rivals``: pattern ids (also listed in ``patterns``) that compete for the same texts, such
    as YYMMDD and DDMMYY: where two of them read a text as different dates, the cell is
    AMBIGUOUS and its reason gives each reading; where only one reads it, that one wins. For a
    two-digit year's place (``num-*`` and ``yymd-*`` rivals) the day order says nothing of
    where the year stands, so a ``num-*`` reading in the other day order still counts against
    the ``yymd-*`` one: 25/04/18 in a month-first column stays AMBIGUOUS (25 April 2018 or
    2025-04-18), not silently year first.
    ``plausible``: (pattern id, first year, last year) for number readings (serial, epoch,
    compact digits): a number its reading puts outside those years, and that one of the
    ``alternates`` (number pattern ids) also reads, is AMBIGUOUS with both readings, so
    "21001121" among epoch seconds is not silently 1970-09-01. Sentinel dates (9999-12-31 …)
    keep their reading.
    """

    patterns: tuple[str, ...]
    day_order: str | None = None
    century: str = "posix"
    pivot_year: int | None = None
    date_system: int = 1900
    zone: str | None = None
    naive_zone: str | None = None
    blank_tokens: tuple[str, ...] = ()
    locales: tuple[str, ...] = ("en",)
    rivals: tuple[str, ...] = ()
    plausible: tuple[tuple[str, int, int], ...] = ()
    alternates: tuple[str, ...] = ()
    extra: dict[str, Any] = field(default_factory=dict, compare=False, hash=False)

    def __post_init__(self) -> None:
        if self.day_order not in DAY_ORDERS:
            raise ValueError(f"day_order must be one of {DAY_ORDERS}, not {self.day_order!r}")
        if self.century not in CENTURY_RULES:
            raise ValueError(f"century must be one of {CENTURY_RULES}, not {self.century!r}")
        if self.century in ("past", "either") and self.pivot_year is None:
            raise ValueError(f'century rule "{self.century}" needs a pivot_year')
        if self.date_system not in (1900, 1904):
            raise ValueError(f"date_system must be 1900 or 1904, not {self.date_system!r}")

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        for key in ("patterns", "blank_tokens", "locales", "rivals", "alternates"):
            d[key] = list(d[key])
        d["plausible"] = [list(t) for t in d["plausible"]]
        return d

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> ParseSpec:
        d = dict(d)
        for key in ("patterns", "blank_tokens", "locales", "rivals", "alternates"):
            if key in d:
                d[key] = tuple(d[key])
        if "plausible" in d:
            d["plausible"] = tuple(tuple(t) for t in d["plausible"])
        return cls(**d)
