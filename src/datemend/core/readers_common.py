"""What every reader shares: find the header row, name the columns, build the RawTable.

A reader hands over a grid (one object array and one kind array per column, header rows
included) and the real 1-based row number of each grid row; this module picks the header row,
makes the column names usable (unique, never blank) and says in the notes what it changed.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

import numpy as np
import pyarrow as pa

from .table import CellKind, RawColumn, RawTable, ReadError, SourceFacts, _as_text

__all__ = ["build_table", "column_letter"]


def column_letter(index: int) -> str:
    """Spreadsheet column letters for a 0-based index: 0 → A, 25 → Z, 26 → AA."""
    out = ""
    n = index + 1
    while n:
        n, rem = divmod(n - 1, 26)
        out = chr(65 + rem) + out
    return out


def _cell(values: np.ndarray | pa.Array, i: int) -> object:
    """One cell of a reader's column, held as objects or as an Arrow string array."""
    return values[i].as_py() if isinstance(values, pa.Array) else values[i]


def _header_text(value: object, kind: int) -> str:
    if value is None:
        return ""
    return (value if isinstance(value, str) else _as_text(value)).strip()


def build_table(
    values: Sequence[np.ndarray],
    kinds: Sequence[np.ndarray],
    row_numbers: np.ndarray,
    facts: SourceFacts,
    *,
    header_row: int | None,
    col_labels: Sequence[str] | None = None,
    col_numbers: Sequence[int] | None = None,
    notes: Sequence[str] = (),
) -> RawTable:
    """Pick the header row (first non-empty row unless given), name columns, drop empty edges.

    ``col_labels`` names each grid column for messages (spreadsheet letters); CSV uses positions.
    ``col_numbers`` (workbooks) gives each grid column's 1-based sheet column, kept in the facts.
    Rows above the header are skipped; trailing rows with no cell at all are dropped. Here a
    whitespace-only cell counts as empty (its kind is EMPTY), so a trailing row or a headerless
    column holding only whitespace is dropped too.
    """
    where = facts.where()
    n_cols = len(values)
    n_rows = len(row_numbers)
    notes = list(notes)
    if n_cols == 0 or n_rows == 0:
        if header_row is not None:
            raise ReadError(f"{where} has no rows, so header row {header_row} does not exist.")
        raise ReadError(f"{where} has no cells to read.", facts.path)
    count = np.zeros(n_rows, dtype=np.int32)  # non-empty cells in each row
    for k in kinds:
        count += k != CellKind.EMPTY
    filled = count > 0
    title = None
    if header_row is None:
        if not filled.any():
            raise ReadError(f"{where} has no cells to read (every cell is empty).", facts.path)
        h, title = _header_at(count)
    else:
        if header_row < 1:
            raise ReadError(f"Header row {header_row} for {where} must be 1 or more.", facts.path)
        last = int(row_numbers[-1])
        if header_row > last:
            raise ReadError(
                f"Header row {header_row} is past the end of {where}, whose last row is {last}.",
                facts.path,
            )
        h = int(np.searchsorted(row_numbers, header_row, side="left"))
    header_at = int(row_numbers[h])
    data = slice(h + 1, None)
    tail = filled[data]
    end = h + 1 + (int(np.flatnonzero(tail)[-1]) + 1 if tail.any() else 0)
    data = slice(h + 1, end)

    labels = list(col_labels) if col_labels is not None else [str(i + 1) for i in range(n_cols)]
    names: list[str] = []
    keep: list[int] = []
    blank: list[str] = []
    dropped = 0
    empty = int(CellKind.EMPTY)
    has_data = [bool((k[data] != empty).any()) for k in kinds]
    for j in range(n_cols):
        kind = int(kinds[j][h])
        name = "" if kind == empty else _header_text(_cell(values[j], h), kind)
        if not name and not has_data[j]:
            dropped += 1
            continue
        if not name:
            blank.append(labels[j])
            name = f"column {labels[j]}"
        names.append(name)
        keep.append(j)
    unique = _unique(names)
    renamed = [f'"{a}" → "{b}"' for a, b in zip(names, unique) if a != b]
    if blank:
        notes.append(
            f"{len(blank)} column(s) had no header and were named by position "
            f"(columns {', '.join(blank[:8])}{'…' if len(blank) > 8 else ''})."
        )
    if renamed:
        notes.append(
            "Duplicate header names were made unique: "
            + ", ".join(renamed[:8])
            + ("…" if len(renamed) > 8 else "")
            + "."
        )
    if dropped:
        notes.append(f"{dropped} empty column(s) with no header were left out.")
    if h > 0 and int(filled[:h].sum()) > 0:  # wording matched by export._rows_above_note
        why = ""
        if title is not None:
            why = (
                f" (they fill at most {title} cell(s) each, like a title; the header row is the "
                "first row filled like the table — choose another header row if it is not)"
            )
        notes.append(
            f"{int(filled[:h].sum())} non-empty row(s) above the header row were skipped{why}."
        )
    cols = tuple(
        # views into the reader's grid: no copy; nothing writes to a RawTable after this
        RawColumn(name, values[j][data], kinds[j][data])
        for name, j in zip(unique, keep)
    )
    at = tuple((n, int(col_numbers[j])) for n, j in zip(unique, keep)) if col_numbers else ()
    facts = replace(
        facts, header_row=header_at, notes=tuple(facts.notes) + tuple(notes), column_at=at
    )
    return RawTable(cols, facts, np.asarray(row_numbers[data], dtype=np.int64).copy())


#: How many non-empty rows at the top are looked at to find the header (common practice, no
#: source: titles and notes above a table are a line or a few).
_HEAD_ROWS = 20


def _header_at(count: np.ndarray) -> tuple[int, int | None]:
    """(index of the header row, the most cells a skipped title row fills, or None).

    The header is the first non-empty row that fills at least half as many cells as the widest
    of the first rows (and two or more): a title or note line above the table ("Club export,
    October"), which fills one cell or few, is skipped. With one-column data the first
    non-empty row is the header."""
    rows = np.flatnonzero(count > 0)
    first = int(rows[0])
    head = rows[:_HEAD_ROWS]
    widest = int(count[head].max())
    if widest < 2:
        return first, None
    need = max(2, -(-widest // 2))
    h = int(head[np.argmax(count[head] >= need)])
    if h == first:
        return first, None
    return h, int(count[first:h].max())


def _unique(names: Sequence[str]) -> list[str]:
    """Append " (2)", " (3)" … to repeated names; never collide with a name already present."""
    taken = set()
    out = []
    counts: dict[str, int] = {}
    all_names = set(names)
    for name in names:
        if name not in taken:
            out.append(name)
            taken.add(name)
            continue
        n = counts.get(name, 1)
        while True:
            n += 1
            candidate = f"{name} ({n})"
            if candidate not in taken and candidate not in all_names:
                break
        counts[name] = n
        out.append(candidate)
        taken.add(candidate)
    return out
