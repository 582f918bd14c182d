"""XLSX/XLSM and ODS workbooks → RawTable, each cell keeping its kind.

Cell values come from python-calamine (one read of the sheet). What calamine does not say is taken
from the file's own XML, read as bytes and searched, never parsed cell by cell a second time:
- the date system (``date1904`` on ``workbookPr``; ODS ``table:null-date``). Checked: calamine
  0.9.1 applies ``date1904`` to date cells itself (tests/core/test_readers_book.py proves it);
- error cells: calamine returns them as empty text (XLSX) or 0.0 / empty text (ODS), so their
  positions and text (``#N/A``, ``#DIV/0!``) are read from the sheet XML and put back as ERROR;
- durations (``[h]:mm`` formats) come from calamine as timedelta; they are kept as the number of
  days the cell holds (FLOAT) with a note, since a duration is not a date;
- hidden rows and columns, merged ranges and formulas without a saved result are noted.
"""

from __future__ import annotations

import datetime as _dt
import zipfile
from concurrent.futures import Future, ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .progress import Progress
from .readers_bookxml import (
    merged_note,
    ods_facts,
    refuse_sparse_giant,
    short_list,
    xlsx_date_system,
    xlsx_sheet_extras,
    xlsx_sheet_part,
)
from .readers_common import build_table, column_letter
from .table import CellKind, RawTable, ReadError, SourceFacts

__all__ = ["SheetInfo", "cell_kinds", "list_book_sheets", "read_book_table"]


@dataclass(frozen=True)
class SheetInfo:
    """One sheet of a workbook as listed to the user."""

    name: str
    visible: bool
    state: str = "visible"  # "visible", "hidden" or "very hidden"
    kind: str = "worksheet"  # "worksheet", "chartsheet", "dialogsheet", "macrosheet"


def _check_ods_xml(path: str, name: str) -> None:
    """Refuse an ODS whose content.xml is not well-formed XML before calamine sees it: its ODS
    parser can loop forever on some broken files (found by fuzzing python-calamine 0.9.1)."""
    from xml.parsers import expat

    try:
        with zipfile.ZipFile(path) as z:
            content = z.read("content.xml")
        expat.ParserCreate().Parse(content, True)
    except KeyError:
        raise ReadError(f"{name} is a zip archive but not an ODS spreadsheet.", path) from None
    except (expat.ExpatError, zipfile.BadZipFile, OSError, ValueError, EOFError) as err:
        raise ReadError(f"{name} is damaged ({_short(err)}).", path) from None


def _open_calamine(path: str, name: str):
    from python_calamine import CalamineWorkbook, PasswordError

    if path.lower().endswith(".ods"):
        _check_ods_xml(path, name)
    try:
        return CalamineWorkbook.from_path(path)
    except PasswordError:
        raise ReadError(
            f"{name} is password-protected; save an unprotected copy and open that.", path
        ) from None
    except (KeyboardInterrupt, SystemExit):
        raise
    except BaseException as err:  # CalamineError, OSError, or a Rust panic
        raise ReadError(f"{name} could not be read as a workbook ({_short(err)}).", path) from None


def _short(err: BaseException) -> str:
    text = " ".join(str(err).split()).rstrip(".") or type(err).__name__
    return text if len(text) <= 120 else text[:117] + "…"


def _sheet_infos(book) -> list[SheetInfo]:
    out = []
    for meta in book.sheets_metadata:
        vis = str(meta.visible).rsplit(".", 1)[-1]
        typ = str(meta.typ).rsplit(".", 1)[-1]
        state = {"Visible": "visible", "Hidden": "hidden", "VeryHidden": "very hidden"}.get(
            vis, vis.lower()
        )
        kind = {
            "WorkSheet": "worksheet",
            "ChartSheet": "chartsheet",
            "DialogSheet": "dialogsheet",
            "MacroSheet": "macrosheet",
        }.get(typ, typ.lower())
        out.append(SheetInfo(meta.name, state == "visible", state, kind))
    return out


def list_book_sheets(path: str) -> list[SheetInfo]:
    """Every sheet of a workbook, in workbook order, with its visibility."""
    book = _open_calamine(path, Path(path).name)
    try:
        return _sheet_infos(book)
    finally:
        book.close()


# --- the read itself -------------------------------------------------------------------------


_KIND_OF_TYPE = {
    type(None): CellKind.EMPTY,
    str: CellKind.TEXT,
    bool: CellKind.BOOL,
    int: CellKind.INT,
    float: CellKind.FLOAT,
    _dt.datetime: CellKind.DATETIME,
    _dt.date: CellKind.DATE,
    _dt.time: CellKind.TIME,
    _dt.timedelta: CellKind.FLOAT,  # a duration: kept as its number of days, with a note
}


def _number_kinds(f: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Kinds of number cells (a spreadsheet holds every number as a float): FLOAT, EMPTY for
    NaN, INT for whole ones; plus which are whole and those as Python ints, for the cells."""
    kinds = np.full(len(f), CellKind.FLOAT, dtype=np.int8)
    kinds[np.isnan(f)] = CellKind.EMPTY
    whole = np.isfinite(f) & (np.abs(f) < 2.0**53)
    whole[whole] = f[whole] == np.floor(f[whole])
    kinds[whole] = CellKind.INT
    return kinds, whole, f[whole].astype(np.int64).astype(object)


_type_of = np.frompyfunc(type, 1, 1)  # about 2.5x faster than Series.map(type)


def cell_kinds(flat: np.ndarray) -> tuple[np.ndarray, list[str]]:
    """Kinds of calamine's Python values, like ``table.kinds_of`` but one pass over the types.

    Works per distinct Python type (a handful) instead of per cell; blank text is found with
    pyarrow. Changes ``flat`` in place: durations become float days, integral floats become int,
    empty cells and NaN become None; whitespace-only text keeps its string (kind EMPTY, so the
    engine treats it as blank, and an export writes it back as it was).
    tests/core/test_readers_book.py checks it agrees with ``kinds_of``.
    """
    notes: list[str] = []
    n = len(flat)
    if n == 0:
        return np.zeros(0, dtype=np.int8), notes
    keep: np.ndarray | None = None  # whitespace-only text cells: EMPTY, string kept
    codes, uniques = pd.factorize(_type_of(flat), sort=False)
    lut = np.array([_KIND_OF_TYPE.get(t, CellKind.TEXT) for t in uniques], dtype=np.int8)
    kinds = lut[codes]
    for code, typ in enumerate(uniques):
        if typ is str:
            idx = np.flatnonzero(codes == code)
            arr = pa.array(flat[idx], type=pa.string())
            blank = pc.equal(pc.utf8_trim_whitespace(arr), "").to_numpy(zero_copy_only=False)
            kinds[idx[blank]] = CellKind.EMPTY
            keep = idx[blank & pc.greater(pc.utf8_length(arr), 0).to_numpy(zero_copy_only=False)]
        elif typ is _dt.timedelta:
            idx = np.flatnonzero(codes == code)
            flat[idx] = [v / _dt.timedelta(days=1) for v in flat[idx]]
            notes.append(f"{len(idx)} cell(s) hold durations; they were read as numbers of days.")
        elif typ not in _KIND_OF_TYPE:
            idx = np.flatnonzero(codes == code)
            flat[idx] = [str(v) for v in flat[idx]]
    floats = np.flatnonzero(kinds == CellKind.FLOAT)
    if len(floats):
        kinds[floats], whole, ints = _number_kinds(flat[floats].astype(np.float64))
        flat[floats[whole]] = ints
    empty = kinds == CellKind.EMPTY
    if keep is not None:
        empty[keep] = False
    flat[empty] = None
    return kinds, notes


#: Kinds a column of one Python type gets without a pass of ``cell_kinds`` (no value changes).
_SAME_TYPE = {
    _dt.datetime: CellKind.DATETIME,
    _dt.date: CellKind.DATE,
    _dt.time: CellKind.TIME,
    bool: CellKind.BOOL,
    int: CellKind.INT,
}


#: Top rows of a sheet typed cell by cell: the header, and any title or note rows above it.
_HEAD = 32


def _grid_columns(
    rows: list[list[object]], errors: list[tuple[int, int, str]], start: tuple[int, int]
) -> tuple[list[np.ndarray | pa.Array], list[np.ndarray], list[str]]:
    """Rows of Python values → (values, kinds) per grid column, plus notes; ``errors`` (sheet
    row, column, text; 0-based) are written in as ERROR cells.

    A column of text cells only (calamine gives an empty cell as "") is held as an Arrow string
    array, as the CSV reader holds its columns (a quarter of the memory, and the engine hashes
    it directly); a column of numbers only is typed in one numpy pass, one of a single other
    type by a lookup; any other column (mixed kinds, durations) goes through ``cell_kinds``.
    tests/core/test_readers_book.py checks every way against ``cell_kinds``."""
    height = len(rows)
    width = max(map(len, rows), default=0)
    grid = np.empty((height, width), dtype=object)
    try:
        grid[:, :] = rows
    except ValueError:  # ragged rows (not seen from calamine, but cheap to survive)
        grid[:, :] = ""
        for i, r in enumerate(rows):
            grid[i, : len(r)] = r
    values: list[np.ndarray | pa.Array] = [None] * width  # type: ignore[list-item]
    kinds: list[np.ndarray] = [None] * width  # type: ignore[list-item]
    r0, c0 = start
    bad = {c - c0 for _, c, _ in errors}
    head = min(_HEAD, height)  # the header (and any title rows) may differ from the data
    slow: list[tuple[int, int]] = []  # (column, top rows at least) left to cell_kinds
    for j in range(width):
        col = grid[:, j]  # a view: writes go into the grid
        arr = None
        # error cells are not text: a column with any keeps Python objects
        if j not in bad and type(col[-1]) is str:
            # all text (the common case): Arrow checks every cell as it copies it, refusing
            # numbers, dates and booleans (calamine gives those, str, and "" for empty; a
            # None would become a null, so a column with one takes the other way)
            try:
                arr = pa.array(col, type=pa.string())
            except (pa.ArrowTypeError, pa.ArrowInvalid):
                arr = None
            if arr is not None and arr.null_count:
                arr = None
        if arr is not None:
            empty = pc.equal(pc.utf8_length(arr), 0)
            blank = pc.equal(pc.utf8_trim_whitespace(arr), "").to_numpy(zero_copy_only=False)
            kinds[j] = np.where(blank, CellKind.EMPTY, CellKind.TEXT).astype(np.int8)
            values[j] = pc.if_else(empty, pa.scalar(None, pa.string()), arr)
            continue
        how = pd.api.types.infer_dtype(col[head:], skipna=False)
        vals = np.ascontiguousarray(col)
        k = np.empty(height, dtype=np.int8)
        values[j], kinds[j] = vals, k
        body = vals[head:]
        if how == "floating":
            k[head:], whole, ints = _number_kinds(body.astype(np.float64))
            body[k[head:] == CellKind.EMPTY] = None
            body[whole] = ints
            slow.append((j, 0))
            continue
        if how in ("date", "datetime", "time", "boolean", "integer"):
            types = set(map(type, body))
            if len(types) == 1 and (only := types.pop()) in _SAME_TYPE:
                k[head:] = _SAME_TYPE[only]
                slow.append((j, 0))
                continue
        slow.append((j, height))
    notes: list[str] = []
    if slow:
        # the cells the passes above left (the top rows, and whole columns of mixed kinds),
        # typed together: cell_kinds changes the copy, which is then put back
        parts = [values[j][: max(n, head)] for j, n in slow]
        sub = np.concatenate(parts)
        sub_kinds, notes = cell_kinds(sub)
        at = 0
        for (j, _), part in zip(slow, parts, strict=True):
            m = len(part)
            values[j][:m] = sub[at : at + m]
            kinds[j][:m] = sub_kinds[at : at + m]
            at += m
    del grid
    for r, c, text in errors:
        i, j = r - r0, c - c0
        if 0 <= i < height and 0 <= j < width:
            values[j][i] = text
            kinds[j][i] = CellKind.ERROR
    return values, kinds, notes


def read_book_table(
    path: str,
    facts: SourceFacts,
    *,
    sheet: str | None,
    header_row: int | None,
    progress: Progress | None,
) -> RawTable:
    """Read one sheet of an XLSX/XLSM/ODS workbook (default: the first visible worksheet)."""
    name = Path(path).name
    is_ods = facts.format == "ods"
    try:
        z = zipfile.ZipFile(path)
    except (zipfile.BadZipFile, OSError, ValueError):
        raise ReadError(
            f"{name} is damaged or not a workbook (it is not a valid zip archive).", path
        ) from None
    with z:
        members = set(z.namelist())
        if is_ods and "content.xml" not in members:
            raise ReadError(f"{name} is a zip archive but not an ODS spreadsheet.", path)
        if not is_ods and "xl/workbook.xml" not in members:
            raise ReadError(f"{name} is a zip archive but not an XLSX workbook.", path)
        if "EncryptionInfo" in members:
            raise ReadError(f"{name} is encrypted; save an unprotected copy and open that.", path)
        book = _open_calamine(path, name)
        try:
            infos = _sheet_infos(book)
            names = [i.name for i in infos]
            if sheet is None:
                chosen = next(
                    (i for i in infos if i.visible and i.kind == "worksheet"),
                    next((i for i in infos if i.kind == "worksheet"), None),
                )
                if chosen is None:
                    raise ReadError(f"{name} has no worksheet to read.", path)
                sheet_name = chosen.name
            elif sheet in names:
                sheet_name = sheet
            else:
                shown = ", ".join(f'"{n}"' for n in names[:10])
                raise ReadError(f'{name} has no sheet "{sheet}" (its sheets: {shown}).', path)
            where = f'{name}, sheet "{sheet_name}"'
            notes: list[str] = []
            hidden = [i.name for i in infos if not i.visible]
            if hidden:
                notes.append(f"Hidden sheet(s) in the workbook: {short_list(hidden)}.")
            if sheet is None and not next(i for i in infos if i.name == sheet_name).visible:
                notes.append(f'No sheet is visible; the first sheet "{sheet_name}" was read.')
            if progress is not None:
                progress.report(1, 4, f"Reading {where}")
            extras: Future | None = None
            try:
                if is_ods:
                    content = z.read("content.xml")
                    date_system, errors, extra = ods_facts(content, names.index(sheet_name))
                    del content
                else:
                    date_system = xlsx_date_system(z)
                    part = xlsx_sheet_part(z, sheet_name)
                    errors, extra = ([], [])
                    if part is not None and part in members:
                        xml = z.read(part)
                        refuse_sparse_giant(xml, where, path)
                        # calamine parses the sheet without holding Python's lock, so the
                        # byte searches for what it does not tell run meanwhile on a thread.
                        pool = ThreadPoolExecutor(1, thread_name_prefix="datemend-sheet-xml")
                        extras = pool.submit(xlsx_sheet_extras, xml)
                        pool.shutdown(wait=False)  # the search runs on; the pool takes no more
                        del xml
            except (KeyError, zipfile.BadZipFile, OSError, ValueError, SyntaxError) as err:
                raise ReadError(f"{where} is damaged ({_short(err)}).", path) from None
            try:
                cs = book.get_sheet_by_name(sheet_name)
            except (KeyboardInterrupt, SystemExit):
                raise
            except BaseException as err:  # calamine errors, or a panic
                raise ReadError(f"{where} could not be read ({_short(err)}).", path) from None
            finally:
                if extras is not None:
                    try:
                        errors, extra = extras.result()
                    except (ValueError, SyntaxError) as err:
                        raise ReadError(f"{where} is damaged ({_short(err)}).", path) from None
            try:
                rows = cs.to_python(skip_empty_area=True)
                start = cs.start or (0, 0)
                merged_ranges = cs.merged_cell_ranges
            except (KeyboardInterrupt, SystemExit):
                raise
            except BaseException as err:  # calamine errors, or a panic
                raise ReadError(f"{where} could not be read ({_short(err)}).", path) from None
        finally:
            book.close()
        if progress is not None:
            progress.report(2, 4, f"Read {len(rows):,} rows of {where}")
    notes.extend(extra)
    if merged_ranges:
        notes.append(
            merged_note(
                [
                    f"{column_letter(c0)}{r0 + 1}:{column_letter(c1)}{r1 + 1}"
                    for (r0, c0), (r1, c1) in merged_ranges
                ]
            )
        )
    facts = SourceFacts(
        path=facts.path,
        format=facts.format,
        sheet=sheet_name,
        sheets=tuple(names),
        date_system=date_system,
        sha256=facts.sha256,
    )
    if not rows:
        if header_row is not None:
            raise ReadError(f"{where} is empty, so header row {header_row} does not exist.", path)
        raise ReadError(f"{where} is empty: it has no cells to read.", path)
    values, kinds, grid_notes = _grid_columns(rows, errors, start)
    notes.extend(grid_notes)
    r0, c0 = start
    height, width = len(rows), len(kinds)
    row_numbers = np.arange(r0 + 1, r0 + 1 + height, dtype=np.int64)
    labels = [column_letter(c0 + j) for j in range(width)]
    return build_table(
        values,
        kinds,
        row_numbers,
        facts,
        header_row=header_row,
        col_labels=labels,
        col_numbers=[c0 + 1 + j for j in range(width)],
        notes=notes,
    )
