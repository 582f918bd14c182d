"""XLSX writer that keeps the source workbook and changes only the fixed cells.

openpyxl turns any string that begins with "=" into a formula when it is assigned; every string
written here is therefore marked as text afterwards (``data_type = "s"``). Cells that were
formulas in the source are never touched, so they stay formulas.
"""

from __future__ import annotations

import datetime as _dt
import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
import openpyxl
from openpyxl.cell.cell import MergedCell
from openpyxl.comments import Comment
from openpyxl.utils import get_column_letter
from openpyxl.utils.datetime import CALENDAR_MAC_1904

from .clean import CellState, CleanTable
from .export import DateOut, ExportError, ExportOptions, prepare_dates, unique_name, zone_note
from .export_flat import python_values
from .progress import Progress
from .table import CellKind, RawTable, _as_text

__all__ = ["write_workbook"]

Counts = tuple[int, int, int, int, list[str]]
_AUTHOR = "datemend"
_REASON = {
    CellState.FAILED: "No pattern reads this value.",
    CellState.AMBIGUOUS: "This value can be read in more than one way.",
    CellState.PARSED: "No date was produced.",
    CellState.MANUAL: "No date was set.",
    CellState.BLANK: "Placeholder kept as written.",
}


# Characters XML 1.0 cannot hold (§2.2 Char): C0 controls but tab/LF/CR (openpyxl refuses those),
# lone surrogates, and U+FFFE/U+FFFF.
_BAD_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")


class _Text:
    """Counts strings that had characters an XLSX file cannot hold (replaced by U+FFFD)."""

    def __init__(self) -> None:
        self.replaced = 0

    def clean(self, s: str) -> str:
        if _BAD_XML.search(s):
            self.replaced += 1
            return _BAD_XML.sub("\ufffd", s)
        return s

    def note(self) -> list[str]:
        if not self.replaced:
            return []
        return [
            f"{self.replaced} text cells held control characters an XLSX file cannot store; "
            "they were replaced by \ufffd."
        ]


def _put_text(cell: Any, text: str, fix: _Text) -> None:
    cell.value = fix.clean(text)
    cell.data_type = "s"  # never a formula or an error, whatever the text begins with


def _put_raw(cell: Any, value: object, kind: int, fix: _Text) -> None:
    """Write a raw value keeping its kind (text stays text, an error stays an error)."""
    if kind == CellKind.EMPTY or value is None:
        cell.value = None
    elif kind == CellKind.ERROR:
        cell.value = fix.clean(str(value))
        cell.data_type = "e"
    elif isinstance(value, str):
        _put_text(cell, value, fix)
    else:
        cell.value = value


def _min_date(epoch: _dt.datetime) -> np.datetime64:
    """Earliest day the workbook's date system can hold (ISO/IEC 29500-1 §18.17.4)."""
    return np.datetime64("1904-01-01" if epoch == CALENDAR_MAC_1904 else "1900-01-01", "us")


def _date_objects(d: DateOut, local: np.ndarray) -> np.ndarray:
    """Python date (date-only columns) or datetime objects of ``d``'s ``local`` values; None
    where there is no value."""
    if d.date_only:
        return local.astype("datetime64[D]").astype(object)
    return local.astype(object)


def _iso(value: object) -> str:
    return value.isoformat() if isinstance(value, _dt.date) else str(value)


# --------------------------------------------------------------------------- keep the workbook


def write_workbook(
    clean: CleanTable,
    tmp: Path,
    options: ExportOptions,
    log_lines: Sequence[str],
    progress: Progress,
    *,
    keep_vba: bool,
) -> Counts:
    """Open the source workbook, replace the fixed cells, add the optional columns and sheets."""
    raw = clean.raw
    facts = raw.facts
    assert facts.path is not None
    name = Path(facts.path).name
    progress.report(0, 1, f"Opening {name} to keep its workbook")
    try:
        wb = openpyxl.load_workbook(facts.path, keep_vba=keep_vba, data_only=False, rich_text=True)
    except Exception as err:  # openpyxl raises many kinds for a damaged file
        raise ExportError(f"Could not open {name} again to keep its workbook ({err}).") from err
    if facts.sheet is not None and facts.sheet not in wb.sheetnames:
        raise ExportError(f'{name} has no sheet "{facts.sheet}" any more.')
    ws = wb[facts.sheet] if facts.sheet is not None else wb.active
    fix = _Text()
    notes: list[str] = []
    earliest = _min_date(wb.epoch)
    rows = np.asarray(raw.source_rows, dtype=np.int64)
    hrow = facts.header_row
    where = f'{name}, sheet "{ws.title}"'
    cols_of = _locate_columns(ws, raw, [s for s in clean.parsed if s in raw], hrow, where)
    next_col = ws.max_column + 1
    taken = {str(c.value) for c in ws[hrow] if c.value is not None} if hrow >= 1 else set()
    dates = unresolved = formulas = early = 0
    unresolved_rows: list[tuple[str, int, str]] = []
    total = max(len(clean.parsed) + len(clean.derived), 1)
    step = 0
    for source, pc in clean.parsed.items():
        if source not in raw:
            continue
        rc = raw.column(source)
        d = prepare_dates(pc, rc.kinds, options, rc.values)
        c = cols_of[source]
        header = ws.cell(hrow, c)
        if options.keep_raw:
            _copy_raw_column(ws, rc.values, rc.kinds, rows, c, next_col, fix)
            _put_text(ws.cell(hrow, next_col), unique_name(f"{source} (raw)", taken), fix)
            ws.column_dimensions[get_column_letter(next_col)].width = _width(ws, c, 14)
            next_col += 1
        _check_rows(ws, rc.values, rc.kinds, rows, c, d.ok | d.blank, where, source)
        local = d.local
        values = _date_objects(d, local)
        fmt = options.date_format if d.date_only else options.datetime_format
        too_early = d.ok & (local < earliest)
        for i in np.flatnonzero(d.ok | d.blank):
            cell = ws.cell(int(rows[i]), c)
            if isinstance(cell, MergedCell):
                continue
            if cell.data_type == "f":
                formulas += 1
                continue
            if d.blank[i]:
                if cell.value is not None:
                    cell.value = None
            elif too_early[i]:
                _put_text(cell, _iso(values[i]), fix)
                early += 1
            else:
                cell.value = values[i]
                cell.number_format = fmt
                dates += 1
        unresolved += d.unresolved
        unresolved_rows += [(source, int(i), pc.output_name) for i in np.flatnonzero(d.keep)]
        suffix = f" ({options.zone})" if d.aware and options.zone_in_header else ""
        if pc.name is None and isinstance(header.value, str):
            # not renamed by a step: the sheet's own header text, never the reader's unique
            # name (a second "Joined" is read as "Joined (2)"); written only to add the zone
            label, changed = header.value + suffix, bool(suffix)
        else:
            label = pc.output_name + suffix
            changed = label != source
        if changed:
            _put_text(header, label, fix)
        if d.aware and not options.zone_in_header:
            _add_comment(header, zone_note(options))
        if d.aware:
            notes.append(zone_note(options, pc.output_name))
        if d.mixed:
            notes.append(
                f'Column "{pc.output_name}" mixes times with and without a UTC offset; '
                "only those with one were moved to the chosen zone."
            )
        step += 1
        progress.report(step, total, f'Wrote column "{pc.output_name}"')
    for dname, dc in clean.derived.items():
        _write_derived(ws, hrow, next_col, rows, dc.values, options, fix, earliest)
        _put_text(ws.cell(hrow, next_col), unique_name(dname, taken), fix)
        if dc.note:
            _add_comment(ws.cell(hrow, next_col), dc.note)
        ws.column_dimensions[get_column_letter(next_col)].width = max(12, len(dname) + 2)
        next_col += 1
        step += 1
        progress.report(step, total, f'Wrote derived column "{dname}"')
    if options.unresolved_sheet:
        _unresolved_sheet(wb, clean, unresolved_rows, ws.title, fix)
    if options.log_sheet:
        _log_sheet(wb, log_lines, fix)
    wb.calculation.fullCalcOnLoad = True
    progress.report(total, total, "Saving the workbook")
    wb.save(tmp)
    notes += _parts_left_out(Path(facts.path), tmp)
    if formulas:
        notes.append(f"{formulas} formula cells in fixed columns were left as formulas.")
    if early:
        notes.append(
            f"{early} dates fall before the workbook's date system begins and were written as "
            "ISO 8601 text."
        )
    if any(c.data_type == "f" for sheet in wb.worksheets for row in sheet.iter_rows() for c in row):
        notes.append(
            "Formulas are kept but not their saved results (they could be stale once dates "
            "change): spreadsheet programs recalculate them on opening; readers that do not "
            "calculate see them empty."
        )
    notes += fix.note()
    n_cols = len(raw.columns) + len(clean.derived) + (len(clean.parsed) if options.keep_raw else 0)
    return raw.n_rows, n_cols, dates, unresolved, notes


# Package folders a spreadsheet may hold that the openpyxl writer might not carry over.
_PART_WORDS = {
    "xl/charts": "charts",
    "xl/chartsheets": "chart sheets",
    "xl/media": "images",
    "xl/drawings": "drawings or shapes",
    "xl/pivotTables": "pivot tables",
    "xl/pivotCache": "pivot caches",
    "xl/slicers": "slicers",
    "xl/slicerCaches": "slicer caches",
    "xl/timelines": "timelines",
    "xl/threadedComments": "threaded comments",
    "xl/persons": "comment authors",
    "xl/ctrlProps": "form controls",
    "xl/activeX": "ActiveX controls",
    "xl/embeddings": "embedded objects",
    "xl/externalLinks": "links to other workbooks",
    "xl/queryTables": "data queries",
    "xl/connections.xml": "data connections",
    "customXml": "custom XML data",
}


def _parts_left_out(source: Path, written: Path) -> list[str]:
    """Say which kinds of package parts the source had and the output lacks: openpyxl keeps
    cells, formats, widths, merges, comments, tables and validations, but not everything."""
    import zipfile

    try:
        with zipfile.ZipFile(source) as z:
            before = z.namelist()
        with zipfile.ZipFile(written) as z:
            after = z.namelist()
    except (OSError, zipfile.BadZipFile):
        return []

    def holds(names: list[str], prefix: str) -> bool:
        if prefix == "xl/drawings":  # comment boxes (.vml) are rewritten; shapes are .xml
            return any(re.fullmatch(r"xl/drawings/drawing\d+\.xml", n) for n in names)
        return any(n == prefix or n.startswith(prefix + "/") for n in names)

    lost = [w for p, w in _PART_WORDS.items() if holds(before, p) and not holds(after, p)]
    if not lost:
        return []
    return [f"These parts of the source could not be carried over: {', '.join(lost)}."]


def _locate_columns(
    ws: Any, raw: RawTable, wanted: list[str], hrow: int, where: str
) -> dict[str, int]:
    """Sheet column of each wanted raw column: where the reader found it (``column_at``),
    else by a unique header match, else by position.

    Positions are trusted only when every header that does match sits where position says.
    Whichever way, the cells are checked against what was read before anything is written.
    """
    known = dict(raw.facts.column_at)
    if all(name in known for name in wanted):
        return {name: known[name] for name in wanted}
    headers: dict[str, list[int]] = {}
    if hrow >= 1:
        for cell in ws[hrow]:
            if cell.value is not None:
                headers.setdefault(str(cell.value).strip(), []).append(cell.column)
    first = ws.min_column
    matched = {}
    for i, rc in enumerate(raw.columns):
        hits = headers.get(rc.name.strip(), [])
        if len(hits) == 1:
            matched[rc.name] = (i, hits[0])
    positional = all(col == first + i for i, col in matched.values())
    out = {}
    for name in wanted:
        if name in matched:
            out[name] = matched[name][1]
        elif positional:
            out[name] = first + raw.names.index(name)
        else:
            raise ExportError(f'{where}: cannot find the column "{name}" to write its dates.')
    return out


def _same(sheet_value: object, raw_value: object, kind: int) -> bool:
    """Does the cell still hold what was read? Tolerant of reader differences (int vs float,
    date vs midnight datetime), strict about content."""
    if kind == CellKind.EMPTY:
        return sheet_value is None or (isinstance(sheet_value, str) and not sheet_value.strip())
    if sheet_value is None:
        return False
    if isinstance(sheet_value, _dt.date) and isinstance(raw_value, _dt.date):
        a = sheet_value if isinstance(sheet_value, _dt.datetime) else _as_midnight(sheet_value)
        b = raw_value if isinstance(raw_value, _dt.datetime) else _as_midnight(raw_value)
        return abs((a - b).total_seconds()) < 0.002
    numeric = (int, float)
    if (
        isinstance(sheet_value, numeric)
        and isinstance(raw_value, numeric)
        and not isinstance(sheet_value, bool)
        and not isinstance(raw_value, bool)
    ):
        return abs(float(sheet_value) - float(raw_value)) <= 1e-9 * max(1.0, abs(float(raw_value)))
    return str(sheet_value).strip() == _as_text(raw_value).strip()


def _as_midnight(d: _dt.date) -> _dt.datetime:
    return _dt.datetime(d.year, d.month, d.day)


def _check_rows(
    ws: Any,
    values: np.ndarray,
    kinds: np.ndarray,
    rows: np.ndarray,
    c: int,
    mask: np.ndarray,
    where: str,
    name: str,
) -> None:
    """Refuse to write if a cell about to change no longer holds the value that was read: a date
    in the wrong row is the worst outcome."""
    for i in np.flatnonzero(mask):
        cell = ws.cell(int(rows[i]), c)
        if isinstance(cell, MergedCell) or cell.data_type == "f":
            continue
        value = cell.value
        if value is not None and not isinstance(value, str | int | float | _dt.date | bool):
            value = str(value)  # rich text, times, durations: compare as text
        if not _same(value, values[i], int(kinds[i])):
            raise ExportError(
                f'{where}: row {int(rows[i])} of column "{name}" no longer matches what was read; '
                "open the file again to export."
            )


def _copy_raw_column(
    ws: Any,
    values: np.ndarray,
    kinds: np.ndarray,
    rows: np.ndarray,
    src: int,
    dst: int,
    fix: _Text,
) -> None:
    """Copy the source cells of a fixed column (value, kind, number format) to column ``dst``;
    formula cells are copied as the value that was read, since moved references would break."""
    for i, r in enumerate(rows):
        s = ws.cell(int(r), src)
        if isinstance(s, MergedCell):
            continue
        t = ws.cell(int(r), dst)
        if s.data_type == "f":
            _put_raw(t, values[i], int(kinds[i]), fix)
            continue
        if s.value is None:
            continue
        if isinstance(s.value, str):
            _put_text(t, s.value, fix)
            t.data_type = s.data_type  # "s", or "e" for an error value
        else:
            t.value = s.value
        t.number_format = s.number_format


def _write_derived(
    ws: Any,
    hrow: int,
    c: int,
    rows: np.ndarray,
    series: Any,
    options: ExportOptions,
    fix: _Text,
    earliest: np.datetime64,
) -> None:
    values, fmt = python_values(series, options)
    for i, v in enumerate(values):
        if v is None:
            continue
        cell = ws.cell(int(rows[i]), c)
        if isinstance(v, str):
            _put_text(cell, v, fix)
        elif isinstance(v, _dt.date) and np.datetime64(v, "us") < earliest:
            _put_text(cell, v.isoformat(), fix)
        else:
            cell.value = v
            if fmt:
                cell.number_format = fmt


def _add_comment(cell: Any, text: str) -> None:
    old = cell.comment
    body = f"{old.text}\n{text}" if old is not None else text
    cell.comment = Comment(body, _AUTHOR, width=260, height=80)


def _width(ws: Any, c: int, default: float) -> float:
    dim = ws.column_dimensions.get(get_column_letter(c))
    return dim.width if dim is not None and dim.width else default


def _new_sheet(wb: Any, title: str) -> Any:
    taken = set(wb.sheetnames)
    name = unique_name(title, taken)[:31]
    return wb.create_sheet(name)


def _unresolved_sheet(
    wb: Any, clean: CleanTable, cells: list[tuple[str, int, str]], sheet: str, fix: _Text
) -> None:
    """One row per unresolved cell: sheet, row key, source row, column, raw value, reason."""
    ws = _new_sheet(wb, "Unresolved cells")
    heads = ("Sheet", "Row key", "Source row", "Column", "Raw value", "Reason")
    for j, h in enumerate(heads, 1):
        _put_text(ws.cell(1, j), h, fix)
    raw = clean.raw
    keys = raw.column(clean.key_column).text() if clean.key_column in raw else None
    rows = np.asarray(raw.source_rows)
    for r, (source, i, out_name) in enumerate(cells, 2):
        pc = clean.parsed[source]
        rc = raw.column(source)
        _put_text(ws.cell(r, 1), sheet, fix)
        if keys is not None and keys.iloc[i] is not None:
            _put_text(ws.cell(r, 2), str(keys.iloc[i]), fix)
        ws.cell(r, 3).value = int(rows[i])
        _put_text(ws.cell(r, 4), out_name, fix)
        _put_raw(ws.cell(r, 5), rc.values[i], int(rc.kinds[i]), fix)
        if isinstance(rc.values[i], _dt.date):
            ws.cell(r, 5).number_format = "yyyy-mm-dd"
        reason = pc.reason[i] or _REASON.get(CellState(int(pc.state[i])), "Unresolved.")
        _put_text(ws.cell(r, 6), str(reason), fix)
    for j, w in enumerate((16, 16, 11, 20, 24, 60), 1):
        ws.column_dimensions[get_column_letter(j)].width = w


def _log_sheet(wb: Any, lines: Sequence[str], fix: _Text) -> None:
    ws = _new_sheet(wb, "Fix log")
    _put_text(ws.cell(1, 1), "Step", fix)
    _put_text(ws.cell(1, 2), "What it does", fix)
    for r, line in enumerate(lines, 2):
        ws.cell(r, 1).value = r - 1
        _put_text(ws.cell(r, 2), str(line), fix)
    ws.column_dimensions["B"].width = 100
