"""Moving the times of a parsed column to another time zone (IANA names, via zoneinfo).

Values that carry a UTC offset are moved to the wall-clock time of the chosen zone, and their
offset becomes that zone's offset at that instant. Naive values (no offset written) are left
alone, unless the step names the zone they were written in: then they are first placed in that
zone (dates with no time of day stay as they are: they name a day, not an instant). A naive time
that zone skips (clocks forward) or repeats (clocks back) is not guessed: the cell becomes
FAILED or AMBIGUOUS with the reason, so no time is silently shifted.
"""

from __future__ import annotations

from functools import lru_cache
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError, available_timezones

import numpy as np
import pandas as pd

from .clean import NAIVE, CellState, ParsedColumn
from .steps import FieldValueError

__all__ = ["check_zone", "convert_zone"]

_NAT = np.datetime64("NaT", "us")
# Keep a day clear of the calendar's ends so no conversion leaves years 1–9999.
_LO = np.datetime64("0001-01-02", "us")
_HI = np.datetime64("9999-12-30", "us")


@lru_cache(maxsize=1)
def _zone_names() -> frozenset[str]:
    return frozenset(available_timezones())


def check_zone(name: str, field_name: str) -> ZoneInfo:
    try:
        if name not in _zone_names():
            raise ZoneInfoNotFoundError(name)
        return ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        raise FieldValueError(
            field_name, f'"{name}" is not an IANA time zone name (like "Europe/Paris")'
        ) from None


def convert_zone(col: ParsedColumn, zone: str, naive_zone: str | None = None) -> ParsedColumn:
    """``col`` with its aware values (and, with ``naive_zone``, its naive ones placed in that
    zone) moved to ``zone``. Cells the move cannot be sure of become FAILED/AMBIGUOUS."""
    to = check_zone(zone, "zone")
    usable = (col.state == CellState.PARSED) | (col.state == CellState.MANUAL)
    usable &= ~np.isnat(col.value)
    value = col.value.copy()
    offset = col.offset_min.copy()
    state = col.state.copy()
    reason = col.reason.copy()
    aware = usable & (offset != NAIVE)
    utc = np.full(len(col), _NAT)
    utc[aware] = value[aware] - offset[aware].astype("timedelta64[m]")
    if naive_zone is not None:
        frm = check_zone(naive_zone, "naive_zone")
        # a date without a time of day names a day, not an instant: it is not moved
        naive = usable & (offset == NAIVE) & col.has_time & (value > _LO) & (value < _HI)
        wall = pd.Series(value[naive])
        loc = wall.dt.tz_localize(frm, ambiguous="NaT", nonexistent="NaT")
        skipped = wall.dt.tz_localize(frm, ambiguous=np.ones(len(wall), bool), nonexistent="NaT")
        placed = loc.notna().to_numpy()
        idx = np.flatnonzero(naive)
        utc[idx[placed]] = loc[placed].dt.tz_convert(None).to_numpy(dtype="datetime64[us]")
        gap = idx[skipped.isna().to_numpy()]
        fold = idx[~placed & skipped.notna().to_numpy()]
        _mark(
            value,
            offset,
            state,
            reason,
            gap,
            CellState.FAILED,
            f"this time does not exist in {naive_zone} (the clocks skip it)",
        )
        _mark(
            value,
            offset,
            state,
            reason,
            fold,
            CellState.AMBIGUOUS,
            f"this time happens twice in {naive_zone} (clocks go back); which is unknown",
        )
        aware = ~np.isnat(utc)
    edge = aware & ((utc <= _LO) | (utc >= _HI))
    _mark(
        value,
        offset,
        state,
        reason,
        np.flatnonzero(edge),
        CellState.FAILED,
        "too near the calendar's first or last day to move to another zone",
    )
    move = np.flatnonzero(aware & ~edge)
    local = pd.Series(utc[move]).dt.tz_localize("UTC").dt.tz_convert(to)
    wall = local.dt.tz_localize(None).to_numpy(dtype="datetime64[us]")
    off_us = (wall - utc[move]).astype(np.int64)
    whole = off_us % 60_000_000 == 0
    value[move[whole]] = wall[whole]
    offset[move[whole]] = (off_us[whole] // 60_000_000).astype(np.int32)
    _mark(
        value,
        offset,
        state,
        reason,
        move[~whole],
        CellState.FAILED,
        f"{zone} had an offset of seconds (local mean time) then; not moved",
    )
    has_time = col.has_time | aware
    return col.evolve(value=value, offset_min=offset, state=state, reason=reason, has_time=has_time)


def _mark(value, offset, state, reason, rows, new_state, why) -> None:  # type: ignore[no-untyped-def]
    if len(rows) == 0:
        return
    value[rows] = _NAT
    offset[rows] = NAIVE
    state[rows] = new_state
    reason[rows] = why
