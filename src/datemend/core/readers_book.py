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
import re
import zipfile
from dataclasses import dataclass
from pathlib import Path
from xml.etree.ElementTree import iterparse

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .progress import Progress
from .readers_common import build_table, column_letter
from .table import CellKind, RawTable, ReadError, SourceFacts

__all__ = ["SheetInfo", "cell_kinds", "list_book_sheets", "read_book_table"]

_ERR = "calcext:value-type"


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


# --- facts from the file itself --------------------------------------------------------------


def _xlsx_date_system(z: zipfile.ZipFile) -> int:
    wb = z.read("xl/workbook.xml")
    m = re.search(rb"<(?:\w+:)?workbookPr\b[^>]*?\bdate1904\s*=\s*[\"'](1|true)[\"']", wb)
    return 1904 if m else 1900


def _xlsx_sheet_part(z: zipfile.ZipFile, sheet: str) -> str | None:
    """The zip member holding a sheet's XML, from workbook.xml and its relationships."""
    from xml.sax.saxutils import unescape

    wb = z.read("xl/workbook.xml")
    rid = None
    for m in re.finditer(rb"<(?:\w+:)?sheet\b([^>]*)/?>", wb):
        attrs = m.group(1)
        nm = re.search(rb'\bname\s*=\s*"([^"]*)"', attrs)
        if nm and unescape(nm.group(1).decode("utf-8"), {"&quot;": '"', "&apos;": "'"}) == sheet:
            r = re.search(rb'\br:id\s*=\s*"([^"]*)"', attrs) or re.search(
                rb'\b\w+:id\s*=\s*"([^"]*)"', attrs
            )
            rid = r.group(1) if r else None
            break
    if rid is None:
        return None
    try:
        rels = z.read("xl/_rels/workbook.xml.rels")
    except KeyError:
        return None
    for m in re.finditer(rb"<(?:\w+:)?Relationship\b([^>]*)/?>", rels):
        attrs = m.group(1)
        if re.search(rb'\bId\s*=\s*"' + re.escape(rid) + rb'"', attrs):
            t = re.search(rb'\bTarget\s*=\s*"([^"]*)"', attrs)
            if not t:
                return None
            target = t.group(1).decode("utf-8")
            return target.lstrip("/") if target.startswith("/") else "xl/" + target
    return None


_CELL_REF = re.compile(rb'\br\s*=\s*"([A-Z]{1,3})(\d+)"')


def _col_index(letters: bytes) -> int:
    n = 0
    for ch in letters:
        n = n * 26 + (ch - 64)
    return n - 1


def _xlsx_sheet_extras(xml: bytes) -> tuple[list[tuple[int, int, str]], list[str]]:
    """Error cells (0-based row, col, text) and notes on hidden rows/columns and formulas."""
    errors: list[tuple[int, int, str]] = []
    notes: list[str] = []
    if b't="e"' in xml:
        pat = re.compile(
            rb"<(?:\w+:)?c\b([^>]*?\bt\s*=\s*[\"']e[\"'][^>]*)>(.*?)</(?:\w+:)?c>", re.S
        )
        for m in pat.finditer(xml):
            ref = _CELL_REF.search(m.group(1))
            v = re.search(rb"<(?:\w+:)?v>([^<]*)</(?:\w+:)?v>", m.group(2))
            if ref and v:
                errors.append(
                    (int(ref.group(2)) - 1, _col_index(ref.group(1)), v.group(1).decode("utf-8"))
                )
    has_hidden = b"hidden=" in xml
    hidden_rows = (
        [
            int(r)
            for r in re.findall(
                rb'<(?:\w+:)?row\b[^>]*?\bhidden\s*=\s*"(?:1|true)"[^>]*?\br\s*=\s*"(\d+)"', xml
            )
            + re.findall(
                rb'<(?:\w+:)?row\b[^>]*?\br\s*=\s*"(\d+)"[^>]*?\bhidden\s*=\s*"(?:1|true)"', xml
            )
        ]
        if has_hidden
        else []
    )
    if hidden_rows:
        rows = sorted(set(hidden_rows))
        notes.append(
            f"{len(rows)} row(s) are hidden in the sheet and were read like the others "
            f"(rows {_list(rows)})."
        )
    hidden_cols: list[int] = []
    cols_end = xml.find(b"sheetData")
    for m in re.finditer(
        rb"<(?:\w+:)?col\b([^>]*)/?>", xml[: max(cols_end, 0)] if has_hidden else b""
    ):
        attrs = m.group(1)
        if re.search(rb'\bhidden\s*=\s*"(?:1|true)"', attrs):
            lo = re.search(rb'\bmin\s*=\s*"(\d+)"', attrs)
            hi = re.search(rb'\bmax\s*=\s*"(\d+)"', attrs)
            if lo and hi:
                hidden_cols.extend(range(int(lo.group(1)) - 1, min(int(hi.group(1)), 16384)))
    if hidden_cols:
        letters = [column_letter(c) for c in sorted(set(hidden_cols))]
        notes.append(
            f"{len(letters)} column(s) are hidden in the sheet and were read like the others "
            f"(columns {_list(letters)})."
        )
    prefixed = re.match(rb"\s*(?:<\?[^>]*\?>\s*)?<\w+:worksheet\b", xml[:400]) is not None
    has_f = b"<f" in xml or (prefixed and b":f" in xml)
    n_formulas = len(re.findall(rb"<(?:\w+:)?f[\s>/]", xml)) if has_f else 0
    if n_formulas:
        no_value = len(
            re.findall(
                rb"</(?:\w+:)?f>\s*(?:<(?:\w+:)?v\s*/>|<(?:\w+:)?v>\s*</(?:\w+:)?v>)?\s*</(?:\w+:)?c>",
                xml,
            )
        ) + len(re.findall(rb"<(?:\w+:)?f\b[^>]*/>\s*</(?:\w+:)?c>", xml))
        msg = f"{n_formulas} cell(s) hold formulas; the results saved in the file were read"
        if no_value:
            msg += f" ({no_value} had no saved result and read as empty)"
        notes.append(msg + ".")
    return errors, notes


#: Refuse a sheet whose used area would exceed this many cells while holding far fewer: a few
#: stray cells far from the data (or a hostile file) would make the reader build a grid of
#: billions of empty cells. A real 1M-row × 40-column sheet still passes.
MAX_SPARSE_CELLS = 40_000_000


def _refuse_sparse_giant(xml: bytes, where: str, path: str) -> None:
    """Estimate the sheet's used area from its XML (cheap byte searches) before loading it."""
    first = re.search(rb'<(?:\w+:)?row\b[^>]*?\br\s*=\s*"(\d+)"', xml)
    last_at = max(xml.rfind(b"<row "), xml.rfind(b":row "))
    last = (
        re.match(rb'<?(?:\w+:)?row\b[^>]*?\br\s*=\s*"(\d+)"', xml[last_at:])
        if last_at >= 0
        else None
    )
    if not first or not last:
        return
    height = int(last.group(1)) - int(first.group(1)) + 1
    if re.search(rb'\br="[A-Z]{3}', xml):
        width = 16384
    elif re.search(rb'\br="[A-Z]{2}', xml):
        width = 702
    else:
        width = 26
    if height * width <= MAX_SPARSE_CELLS:
        return
    letters = set(re.findall(rb'\br="([A-Z]{1,3})\d', xml))
    width = max((_col_index(b) + 1 for b in letters), default=1)
    cells = xml.count(b"<c ") + xml.count(b":c ")
    if height * width > MAX_SPARSE_CELLS and height * width > 10 * max(cells, 1):
        raise ReadError(
            f"{where} spans {height:,} rows × {width:,} columns but holds only {cells:,} cells; "
            "delete the stray cells far from the data (or copy the data to a new sheet) and "
            "open that.",
            path,
        )


def _list(items: list) -> str:
    shown = ", ".join(str(i) for i in items[:10])
    return shown + ("…" if len(items) > 10 else "")


def _ods_facts(xml: bytes, sheet_index: int) -> tuple[int, list[tuple[int, int, str]], list[str]]:
    """ODS date system, error cells and notes (hidden rows/columns, merged cells) of one sheet."""
    notes: list[str] = []
    date_system = 1900
    m = re.search(rb"<table:null-date\b[^>]*\btable:date-value\s*=\s*\"([^\"]+)\"", xml)
    if m:
        null = m.group(1).decode("ascii", "replace")[:10]
        if null == "1904-01-01":
            date_system = 1904
        elif null != "1899-12-30":
            notes.append(f"The workbook counts serial dates from {null} (not 1899-12-30).")
    wanted = (_ERR.encode() in xml, b"number-columns-spanned" in xml, b'"collapse"' in xml)
    errors: list[tuple[int, int, str]] = []
    if not any(wanted):
        return date_system, errors, notes
    import io

    ns_t = "{urn:oasis:names:tc:opendocument:xmlns:table:1.0}"
    ns_text = "{urn:oasis:names:tc:opendocument:xmlns:text:1.0}"
    calc = "{urn:org:documentfoundation:names:experimental:calc:xmlns:calcext:1.0}value-type"
    table_no = -1
    row = col = 0
    in_table = False
    merged: list[str] = []
    hidden_rows: list[int] = []
    hidden_cols: list[int] = []
    col_pos = 0
    for event, el in iterparse(io.BytesIO(xml), events=("start", "end")):
        tag = el.tag
        if event == "start":
            if tag == ns_t + "table":
                table_no += 1
                in_table = table_no == sheet_index
                row, col_pos = 0, 0
            continue
        if not in_table:
            if tag == ns_t + "table" or tag.endswith("}table-cell"):
                el.clear()
            continue
        if tag == ns_t + "table-column":
            n = int(el.get(ns_t + "number-columns-repeated", "1"))
            if el.get(ns_t + "visibility") == "collapse" and col_pos < 16384:
                hidden_cols.extend(range(col_pos, min(col_pos + n, 16384)))
            col_pos += n
        elif tag in (ns_t + "table-cell", ns_t + "covered-table-cell"):
            n = int(el.get(ns_t + "number-columns-repeated", "1"))
            if tag == ns_t + "table-cell":
                if el.get(calc) == "error":
                    text = "".join(el.itertext()).strip() or "#ERROR"
                    errors.extend((row, c, text) for c in range(col, col + min(n, 16384)))
                span_c = int(el.get(ns_t + "number-columns-spanned", "1"))
                span_r = int(el.get(ns_t + "number-rows-spanned", "1"))
                if span_c > 1 or span_r > 1:
                    merged.append(
                        f"{column_letter(col)}{row + 1}:"
                        f"{column_letter(col + span_c - 1)}{row + span_r}"
                    )
            col += n
            el.clear()
        elif tag == ns_t + "table-row":
            n = int(el.get(ns_t + "number-rows-repeated", "1"))
            if el.get(ns_t + "visibility") == "collapse" and len(hidden_rows) < 100000:
                hidden_rows.extend(range(row + 1, row + 1 + min(n, 100000)))
            row += n
            col = 0
            el.clear()
        elif tag == ns_t + "table":
            break
        elif tag == ns_text + "p":
            pass
    if merged:
        notes.append(_merged_note(merged))
    if hidden_rows:
        notes.append(
            f"{len(hidden_rows)} row(s) are hidden in the sheet and were read like the others "
            f"(rows {_list(hidden_rows)})."
        )
    if hidden_cols:
        letters = [column_letter(c) for c in hidden_cols]
        notes.append(
            f"{len(letters)} column(s) are hidden in the sheet and were read like the others "
            f"(columns {_list(letters)})."
        )
    return date_system, errors, notes


def _merged_note(ranges: list[str]) -> str:
    return (
        f"{len(ranges)} merged cell range(s) ({_list(ranges)}): only the first cell of each holds "
        "the value; the others read as empty."
    )


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


def cell_kinds(flat: np.ndarray) -> tuple[np.ndarray, list[str]]:
    """Kinds of calamine's Python values, like ``table.kinds_of`` but one pass over the types.

    Works per distinct Python type (a handful) instead of per cell; blank text is found with
    pyarrow. Changes ``flat`` in place: durations become float days, integral floats become int,
    blanks become None. tests/core/test_readers_book.py checks it agrees with ``kinds_of``.
    """
    notes: list[str] = []
    n = len(flat)
    if n == 0:
        return np.zeros(0, dtype=np.int8), notes
    codes, uniques = pd.factorize(pd.Series(flat, dtype=object).map(type), sort=False)
    lut = np.array([_KIND_OF_TYPE.get(t, CellKind.TEXT) for t in uniques], dtype=np.int8)
    kinds = lut[codes]
    for code, typ in enumerate(uniques):
        if typ is str:
            idx = np.flatnonzero(codes == code)
            arr = pa.array(flat[idx], type=pa.string())
            blank = pc.equal(pc.utf8_trim_whitespace(arr), "").to_numpy(zero_copy_only=False)
            kinds[idx[blank]] = CellKind.EMPTY
        elif typ is _dt.timedelta:
            idx = np.flatnonzero(codes == code)
            flat[idx] = [v / _dt.timedelta(days=1) for v in flat[idx]]
            notes.append(f"{len(idx)} cell(s) hold durations; they were read as numbers of days.")
        elif typ not in _KIND_OF_TYPE:
            idx = np.flatnonzero(codes == code)
            flat[idx] = [str(v) for v in flat[idx]]
    floats = np.flatnonzero(kinds == CellKind.FLOAT)
    if len(floats):
        f = flat[floats].astype(np.float64)
        nan = np.isnan(f)
        kinds[floats[nan]] = CellKind.EMPTY
        whole = np.isfinite(f) & (np.abs(f) < 2.0**53)
        whole[whole] = f[whole] == np.floor(f[whole])
        idx = floats[whole]
        if len(idx):
            flat[idx] = f[whole].astype(np.int64).astype(object)
            kinds[idx] = CellKind.INT
    flat[kinds == CellKind.EMPTY] = None
    return kinds, notes


def _grid_kinds(rows: list[list[object]]) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Rows of Python values → (values, kinds) 2-D arrays indexed [column, row]; plus notes."""
    height = len(rows)
    width = max((len(r) for r in rows), default=0)
    grid = np.empty((height, width), dtype=object)
    try:
        grid[:, :] = rows
    except ValueError:  # ragged rows (not seen from calamine, but cheap to survive)
        grid[:, :] = ""
        for i, r in enumerate(rows):
            grid[i, : len(r)] = r
    flat = grid.T.ravel()
    kinds, notes = cell_kinds(flat)
    return flat.reshape(width, height), kinds.reshape(width, height), notes


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
                notes.append(f"Hidden sheet(s) in the workbook: {_list(hidden)}.")
            if sheet is None and not next(i for i in infos if i.name == sheet_name).visible:
                notes.append(f'No sheet is visible; the first sheet "{sheet_name}" was read.')
            if progress is not None:
                progress.report(1, 4, f"Reading {where}")
            try:
                if is_ods:
                    content = z.read("content.xml")
                    date_system, errors, extra = _ods_facts(content, names.index(sheet_name))
                    del content
                else:
                    date_system = _xlsx_date_system(z)
                    part = _xlsx_sheet_part(z, sheet_name)
                    errors, extra = ([], [])
                    if part is not None and part in members:
                        xml = z.read(part)
                        _refuse_sparse_giant(xml, where, path)
                        errors, extra = _xlsx_sheet_extras(xml)
                        del xml
            except (KeyError, zipfile.BadZipFile, OSError, ValueError, SyntaxError) as err:
                raise ReadError(f"{where} is damaged ({_short(err)}).", path) from None
            try:
                cs = book.get_sheet_by_name(sheet_name)
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
            _merged_note(
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
    values, kinds, grid_notes = _grid_kinds(rows)
    notes.extend(grid_notes)
    r0, c0 = start
    height, width = values.shape[1], values.shape[0]
    for r, c, text in errors:
        i, j = r - r0, c - c0
        if 0 <= i < height and 0 <= j < width:
            values[j, i] = text
            kinds[j, i] = CellKind.ERROR
    row_numbers = np.arange(r0 + 1, r0 + 1 + height, dtype=np.int64)
    labels = [column_letter(c0 + j) for j in range(width)]
    return build_table(
        list(values),
        list(kinds),
        row_numbers,
        facts,
        header_row=header_row,
        col_labels=labels,
        notes=notes,
    )
