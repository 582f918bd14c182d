"""Streaming XLSX writer: a new workbook whose sheet XML is built column by column with numpy
vector operations and written in chunks, so a million rows need neither the whole workbook in
memory nor per-cell Python objects.

It writes the parts of an Office Open XML spreadsheet (ISO/IEC 29500-1) a reader needs: content
types, relationships, the workbook, one style sheet (date and date-time number formats) and the
worksheets, with strings stored inline (``t="inlineStr"``), so text is always text: a value that
begins with "=" is never a formula. Dates are stored as serial numbers of the 1900 date system
(§18.17.4); a day before 1900-01-01 has no serial and is written as ISO 8601 text instead.
"""

from __future__ import annotations

import datetime as _dt
import re
import zipfile
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import escape, quoteattr

import numpy as np
import pandas as pd

from .clean import CellState, CleanTable
from .export import DateOut, ExportOptions, zone_note
from .export_flat import FlatColumn, blank_text, flat_layout
from .progress import Progress
from .table import CellKind, object_cells

__all__ = ["write_stream"]

Counts = tuple[int, int, int, int, list[str]]
_ROWS = 50_000  # rows per chunk of sheet XML
# Characters XML 1.0 cannot hold (§2.2 Char): C0 controls but tab/LF/CR, lone surrogates, and
# U+FFFE/U+FFFF.
_ILLEGAL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")
_ILLEGAL_NO_SURROGATES = "[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]"  # for pyarrow strings
# cellXfs indexes in styles.xml
_S_DATE, _S_DATETIME, _S_RAW_DATE, _S_RAW_DATETIME, _S_TIME = 1, 2, 3, 4, 5
_FIRST_DAY = np.datetime64("1900-01-01", "D")
_BASE = np.datetime64("1899-12-30", "D")
_LEAP_BUG_END = np.datetime64("1900-03-01", "D")
_REASON = {
    CellState.FAILED: "No pattern reads this value.",
    CellState.AMBIGUOUS: "This value can be read in more than one way.",
}


#: Most characters spreadsheet programs keep in one cell (value from memory of their published
#: limits; ISO/IEC 29500 sets none). Longer text is written whole, with a note.
MAX_CELL_TEXT = 32_767


@dataclass
class _Tally:
    replaced: int = 0  # text cells with characters XML cannot hold
    early: int = 0  # dates before 1900-01-01 written as text
    long: int = 0  # text cells longer than spreadsheet programs show in one cell


def serials(values: np.ndarray) -> np.ndarray:
    """1900-system serial numbers (ISO/IEC 29500-1 §18.17.4) of datetime64 values on or after
    1900-01-01: serial 1 is 1900-01-01, 59 is 1900-02-28, 61 is 1900-03-01 (60 is the day the
    system invents)."""
    v = values.astype("datetime64[us]")
    days = v.astype("datetime64[D]")
    whole = (days - _BASE).astype(np.int64)
    whole = np.where(days < _LEAP_BUG_END, whole - 1, whole)
    micros = (v - days.astype("datetime64[us]")).astype(np.int64)
    return whole + micros / 86_400_000_000


# --------------------------------------------------------------------------- cells as XML text


def _refs(letter: str, rows: np.ndarray) -> np.ndarray:
    return (f'<c r="{letter}' + rows.astype(str).astype(object)).astype(object)


def _text_cells(refs: np.ndarray, text: np.ndarray, tally: _Tally) -> np.ndarray:
    try:  # vectorised (pyarrow strings); lone surrogates cannot enter them
        s = pd.Series(text, dtype=object).astype(str)
    except UnicodeEncodeError:
        body = np.array([_escape_one(str(t), tally) for t in text], dtype=object)
    else:
        bad = s.str.contains(_ILLEGAL_NO_SURROGATES, regex=True).to_numpy(dtype=bool)
        if bad.any():
            tally.replaced += int(bad.sum())
            s[bad] = s[bad].str.replace(_ILLEGAL_NO_SURROGATES, "\ufffd", regex=True)
        tally.long += int((s.str.len() > MAX_CELL_TEXT).sum())
        s = s.str.replace("&", "&amp;").str.replace("<", "&lt;").str.replace(">", "&gt;")
        body = s.to_numpy(dtype=object)
    return refs + '" t="inlineStr"><is><t xml:space="preserve">' + body + "</t></is></c>"


def _escape_one(t: str, tally: _Tally) -> str:
    tally.long += len(t) > MAX_CELL_TEXT
    if _ILLEGAL.search(t):
        tally.replaced += 1
        t = _ILLEGAL.sub("\ufffd", t)
    return escape(t)


def _number_cells(refs: np.ndarray, text: np.ndarray, style: int = 0) -> np.ndarray:
    s = f'" s="{style}"><v>' if style else '"><v>'
    return refs + s + text + "</v></c>"


def _serial_cells(
    refs: np.ndarray, values: np.ndarray, style: int, whole_days: bool, tally: _Tally
) -> np.ndarray:
    v = values.astype("datetime64[us]")
    early = v < _FIRST_DAY
    out = np.empty(len(v), dtype=object)
    if early.any():
        tally.early += int(early.sum())
        unit = "D" if whole_days else "s"
        iso = np.datetime_as_string(v[early], unit=unit).astype(object)
        out[early] = _text_cells(refs[early], iso, tally)
    ok = ~early
    if ok.any():
        num = serials(v[ok])
        text = num.astype(np.int64).astype(str) if whole_days else num.astype(str)
        out[ok] = _number_cells(refs[ok], text.astype(object), style)
    return out


def raw_cells(values: np.ndarray, kinds: np.ndarray, refs: np.ndarray, tally: _Tally) -> np.ndarray:
    """XML of each raw cell, keeping its kind; "" for empty cells, a text cell for
    whitespace-only ones (their string is written back as it was)."""
    out = np.full(len(values), "", dtype=object)
    for kind in np.unique(kinds):
        m = kinds == kind
        v, r = values[m], refs[m]
        if kind == CellKind.EMPTY:
            kept = blank_text(v)
            if kept.any():
                out[np.flatnonzero(m)[kept]] = _text_cells(r[kept], v[kept], tally)
            continue
        if kind == CellKind.TEXT:
            out[m] = _text_cells(r, v, tally)
        elif kind == CellKind.ERROR:
            body = np.array([_escape_one(str(x), tally) for x in v], dtype=object)
            out[m] = r + '" t="e"><v>' + body + "</v></c>"
        elif kind == CellKind.INT:
            out[m] = _number_cells(r, pd.Series(v, dtype=object).astype(str).to_numpy(object))
        elif kind == CellKind.FLOAT:
            a = np.asarray(v, dtype=np.float64)
            finite = np.isfinite(a)
            cells = np.empty(len(a), dtype=object)
            cells[finite] = _number_cells(r[finite], a[finite].astype(str).astype(object))
            cells[~finite] = _text_cells(r[~finite], a[~finite].astype(str).astype(object), tally)
            out[m] = cells
        elif kind == CellKind.BOOL:
            flag = np.where(v.astype(bool), "1", "0").astype(object)
            out[m] = r + '" t="b"><v>' + flag + "</v></c>"
        elif kind in (CellKind.DATE, CellKind.DATETIME):
            out[m] = _raw_dates(v, r, kind == CellKind.DATE, tally)
        else:  # TIME: a fraction of a day
            frac = np.array([_day_fraction(t) for t in v], dtype=np.float64)
            out[m] = _number_cells(r, frac.astype(str).astype(object), _S_TIME)
    return out


def _raw_dates(v: np.ndarray, r: np.ndarray, is_date: bool, tally: _Tally) -> np.ndarray:
    try:
        if any(getattr(x, "tzinfo", None) is not None for x in v):
            raise TypeError("aware")
        arr = np.asarray(v, dtype="datetime64[us]")
    except (TypeError, ValueError):  # aware or odd values: their ISO text, exactly
        return _text_cells(r, np.array([x.isoformat() for x in v], dtype=object), tally)
    style = _S_RAW_DATE if is_date else _S_RAW_DATETIME
    return _serial_cells(r, arr, style, is_date, tally)


def _day_fraction(t: object) -> float:
    if isinstance(t, _dt.time):
        return (t.hour * 3600 + t.minute * 60 + t.second + t.microsecond / 1e6) / 86400
    return float("nan")


def date_cells(d: DateOut, values: np.ndarray, kinds: np.ndarray, refs: np.ndarray, tally: _Tally):
    """A fixed column: serial date cells where read, raw cells where unresolved, empty where
    blank."""
    out = raw_cells(values, kinds, refs, tally)
    out[d.blank] = ""
    if d.ok.any():
        style = _S_DATE if d.date_only else _S_DATETIME
        out[d.ok] = _serial_cells(refs[d.ok], d.local[d.ok], style, d.date_only, tally)
    return out


def _derived_cells(s: pd.Series, refs: np.ndarray, tally: _Tally) -> np.ndarray:
    out = np.full(len(s), "", dtype=object)
    ok = s.notna().to_numpy(dtype=bool)
    if not ok.any():
        return out
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        a = s.to_numpy(dtype="datetime64[us]")
        midnight = bool((a[ok] == a[ok].astype("datetime64[D]")).all())
        style = _S_DATE if midnight else _S_DATETIME
        out[ok] = _serial_cells(refs[ok], a[ok], style, midnight, tally)
    elif pd.api.types.is_bool_dtype(s.dtype):
        flag = np.where(s[ok].astype(bool).to_numpy(), "1", "0").astype(object)
        out[ok] = refs[ok] + '" t="b"><v>' + flag + "</v></c>"
    elif pd.api.types.is_numeric_dtype(s.dtype):
        text = s[ok].astype("string").to_numpy(dtype=object)
        out[ok] = _number_cells(refs[ok], text)
    else:
        values = s.astype(object).to_numpy()
        kinds = np.where(ok, CellKind.TEXT, CellKind.EMPTY).astype(np.int8)
        dates = np.array([isinstance(v, _dt.date) for v in values], dtype=bool)
        kinds[dates] = CellKind.DATE
        out = raw_cells(values, kinds, refs, tally)
    return out


# --------------------------------------------------------------------------- the sheet


def _letter(j: int) -> str:
    s = ""
    while j:
        j, rem = divmod(j - 1, 26)
        s = chr(65 + rem) + s
    return s


def _header_row(names: Sequence[str], tally: _Tally) -> str:
    refs = np.array([f'<c r="{_letter(j)}1' for j in range(1, len(names) + 1)], dtype=object)
    cells = _text_cells(refs, np.array(list(names), dtype=object), tally)
    return '<row r="1">' + "".join(cells) + "</row>"


def _cols_xml(widths: Sequence[float]) -> str:
    parts = [
        f'<col min="{j}" max="{j}" width="{w:g}" customWidth="1"/>' for j, w in enumerate(widths, 1)
    ]
    return "<cols>" + "".join(parts) + "</cols>" if parts else ""


def _write_sheet(
    zf: zipfile.ZipFile,
    part: str,
    names: Sequence[str],
    widths: Sequence[float],
    n_rows: int,
    build,
    tally: _Tally,
    progress: Progress | None = None,
) -> None:
    """Write one worksheet part; ``build(start, stop, rows)`` gives per-column XML arrays."""
    with zf.open(part, "w", force_zip64=True) as raw:
        fh = _Buffered(raw)
        fh.write(
            '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
            '<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
        )
        fh.write(_cols_xml(widths) + "<sheetData>" + _header_row(names, tally))
        for start in range(0, n_rows, _ROWS):
            stop = min(start + _ROWS, n_rows)
            rows = np.arange(start + 2, stop + 2)
            line = ('<row r="' + rows.astype(str).astype(object) + '">').astype(object)
            for cells in build(start, stop, rows):
                line = line + cells
            fh.write("".join(line + "</row>"))
            if progress is not None:
                progress.report(stop, n_rows, "Writing rows")
        fh.write("</sheetData></worksheet>")
        fh.flush()


class _Buffered:
    """UTF-8 text into a zip member, in large blocks."""

    def __init__(self, raw) -> None:
        self.raw = raw

    def write(self, text: str) -> None:
        self.raw.write(text.encode("utf-8"))

    def flush(self) -> None:
        self.raw.flush()


def write_stream(
    clean: CleanTable,
    tmp: Path,
    options: ExportOptions,
    log_lines: Sequence[str],
    progress: Progress,
) -> Counts:
    """A new workbook: the table on one sheet (fixed columns as date cells, each raw copy just
    after its column), then the optional unresolved-cells and fix-log sheets."""
    tally = _Tally()
    layout = flat_layout(clean, options, beside=True)
    notes: list[str] = []
    names: list[str] = []
    widths: list[float] = []
    for col in layout:
        head = col.name
        d = col.dates
        if d is not None and d.aware:
            notes.append(zone_note(options, col.name))
            if options.zone_in_header:
                head = f"{head} ({options.zone})"
        names.append(head)
        wide = d is not None and not d.date_only
        widths.append(max(len(head) + 2, 20 if wide else 12))

    def build(start: int, stop: int, rows: np.ndarray):
        for j, col in enumerate(layout, 1):
            refs = _refs(_letter(j), rows)
            yield _column_cells(col, slice(start, stop), refs, tally)

    title = _sheet_title(options.sheet_name or clean.raw.facts.sheet or "Data")
    titles = [title]
    n = clean.raw.n_rows
    with zipfile.ZipFile(tmp, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as zf:
        _write_sheet(zf, "xl/worksheets/sheet1.xml", names, widths, n, build, tally, progress)
        if options.unresolved_sheet:
            titles.append(_unique_title("Unresolved cells", titles))
            _unresolved(zf, f"xl/worksheets/sheet{len(titles)}.xml", clean, layout, title, tally)
        if options.log_sheet:
            titles.append(_unique_title("Fix log", titles))
            _log(zf, f"xl/worksheets/sheet{len(titles)}.xml", log_lines, tally)
        _write_package(zf, titles, options)
    dates = sum(int(c.dates.ok.sum()) for c in layout if c.dates is not None)
    unresolved = sum(c.dates.unresolved for c in layout if c.dates is not None)
    if tally.early:
        notes.append(
            f"{tally.early} dates fall before 1900-01-01, where XLSX dates begin, and were "
            "written as ISO 8601 text."
        )
    if tally.replaced:
        notes.append(
            f"{tally.replaced} text cells held control characters an XLSX file cannot store; "
            "they were replaced by \ufffd."
        )
    if tally.long:
        notes.append(
            f"{tally.long} text cell(s) are longer than the {MAX_CELL_TEXT:,} characters "
            "spreadsheet programs show in a cell; they are written whole, but a spreadsheet "
            "program may cut them when it opens the file (CSV or Parquet keep them)."
        )
    return n, len(layout), dates, unresolved, notes


def _column_cells(col: FlatColumn, rows: slice, refs: np.ndarray, tally: _Tally) -> np.ndarray:
    part = col.take(rows)
    if part.series is not None:
        return _derived_cells(part.series, refs, tally)
    assert part.values is not None and part.kinds is not None
    values = object_cells(part.values)  # this run of rows only, for an Arrow-held column
    if part.dates is None:
        return raw_cells(values, part.kinds, refs, tally)
    return date_cells(part.dates, values, part.kinds, refs, tally)


def _unresolved(
    zf: zipfile.ZipFile,
    part: str,
    clean: CleanTable,
    layout: list[FlatColumn],
    sheet: str,
    tally: _Tally,
) -> None:
    """Sheet, row key, source row, column, raw value (its own kind), reason."""
    raw = clean.raw
    keys = raw.column(clean.key_column).text() if clean.key_column in raw else None
    src_rows = np.asarray(raw.source_rows)
    picks: list[tuple[np.ndarray, FlatColumn]] = []
    for col in layout:
        if col.dates is not None and col.dates.unresolved:
            picks.append((np.flatnonzero(col.dates.keep), col))
    idx = np.concatenate([p for p, _ in picks]) if picks else np.array([], dtype=np.int64)
    n = len(idx)
    empty = np.array([], dtype=object)
    values = np.concatenate([object_cells(c.values, p) for p, c in picks]) if picks else empty
    kinds = np.concatenate([c.kinds[p] for p, c in picks]) if picks else np.array([], np.int8)
    column = (
        np.concatenate([np.full(len(p), c.name, dtype=object) for p, c in picks])
        if picks
        else empty
    )
    reasons = []
    for p, c in picks:
        pc = c.dates.col  # type: ignore[union-attr]
        for i in p:
            reasons.append(pc.reason[i] or _REASON.get(CellState(int(pc.state[i])), "Unresolved."))
    key = np.full(n, None, dtype=object) if keys is None else keys.to_numpy(dtype=object)[idx]
    text = np.full(n, CellKind.TEXT, dtype=np.int8)
    key_kind = np.where(pd.isna(key), CellKind.EMPTY, CellKind.TEXT).astype(np.int8)
    cols = [
        (np.full(n, sheet, dtype=object), text),
        (key, key_kind),
        (src_rows[idx].astype(object), np.full(n, CellKind.INT, dtype=np.int8)),
        (column, text),
        (values, kinds),
        (np.array(reasons, dtype=object), text),
    ]

    def build(start: int, stop: int, rows: np.ndarray):
        for j, (v, k) in enumerate(cols, 1):
            yield raw_cells(v[start:stop], k[start:stop], _refs(_letter(j), rows), tally)

    heads = ("Sheet", "Row key", "Source row", "Column", "Raw value", "Reason")
    _write_sheet(zf, part, heads, (16, 16, 11, 20, 24, 60), n, build, tally)


def _log(zf: zipfile.ZipFile, part: str, lines: Sequence[str], tally: _Tally) -> None:
    n = len(lines)
    steps = np.arange(1, n + 1).astype(object)
    text = np.array([str(x) for x in lines], dtype=object)

    def build(start: int, stop: int, rows: np.ndarray):
        yield raw_cells(steps[start:stop], np.full(stop - start, CellKind.INT, np.int8),
                        _refs("A", rows), tally)  # fmt: skip
        yield raw_cells(text[start:stop], np.full(stop - start, CellKind.TEXT, np.int8),
                        _refs("B", rows), tally)  # fmt: skip

    _write_sheet(zf, part, ("Step", "What it does"), (8, 100), n, build, tally)


def _sheet_title(name: str) -> str:
    """A legal sheet name: no []:*?/\\ characters, 1 to 31 characters."""
    clean = re.sub(r"[\[\]:*?/\\]", "_", name).strip("'") or "Data"
    return clean[:31]


def _unique_title(name: str, taken: list[str]) -> str:
    out, n = name, 2
    while out.lower() in {t.lower() for t in taken}:
        out, n = f"{name} ({n})", n + 1
    return out[:31]


_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
_PKG = "http://schemas.openxmlformats.org/package/2006"
_XML = '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'


def _write_package(zf: zipfile.ZipFile, titles: list[str], options: ExportOptions) -> None:
    sheet_ct = "application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"
    overrides = "".join(
        f'<Override PartName="/xl/worksheets/sheet{i}.xml" ContentType="{sheet_ct}"/>'
        for i in range(1, len(titles) + 1)
    )
    zf.writestr(
        "[Content_Types].xml",
        f'{_XML}<Types xmlns="{_PKG}/content-types">'
        '<Default Extension="rels" '
        'ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
        '<Default Extension="xml" ContentType="application/xml"/>'
        '<Override PartName="/xl/workbook.xml" ContentType="application/'
        'vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
        '<Override PartName="/xl/styles.xml" ContentType="application/'
        'vnd.openxmlformats-officedocument.spreadsheetml.styles+xml"/>'
        f"{overrides}</Types>",
    )
    zf.writestr(
        "_rels/.rels",
        f'{_XML}<Relationships xmlns="{_PKG}/relationships">'
        f'<Relationship Id="rId1" Type="{_REL}/officeDocument" Target="xl/workbook.xml"/>'
        "</Relationships>",
    )
    sheets = "".join(
        f'<sheet name={quoteattr(t)} sheetId="{i}" r:id="rId{i}"/>' for i, t in enumerate(titles, 1)
    )
    zf.writestr(
        "xl/workbook.xml",
        f'{_XML}<workbook xmlns="{_NS}" xmlns:r="{_REL}"><workbookPr/>'
        f"<sheets>{sheets}</sheets></workbook>",
    )
    rels = "".join(
        f'<Relationship Id="rId{i}" Type="{_REL}/worksheet" Target="worksheets/sheet{i}.xml"/>'
        for i in range(1, len(titles) + 1)
    )
    k = len(titles) + 1
    rels += f'<Relationship Id="rId{k}" Type="{_REL}/styles" Target="styles.xml"/>'
    zf.writestr(
        "xl/_rels/workbook.xml.rels",
        f'{_XML}<Relationships xmlns="{_PKG}/relationships">{rels}</Relationships>',
    )
    zf.writestr("xl/styles.xml", _styles(options))


def _styles(options: ExportOptions) -> str:
    fmts = [
        (164, options.date_format),
        (165, options.datetime_format),
        (166, "yyyy-mm-dd"),
        (167, "yyyy-mm-dd hh:mm:ss"),
    ]
    num = "".join(
        f"<numFmt numFmtId={quoteattr(str(i))} formatCode={quoteattr(f)}/>" for i, f in fmts
    )
    xf = '<xf numFmtId="{}" fontId="0" fillId="0" borderId="0" xfId="0"{}/>'
    apply = ' applyNumberFormat="1"'
    xfs = [xf.format(0, "")] + [xf.format(i, apply) for i in (164, 165, 166, 167, 21)]
    return (
        f'{_XML}<styleSheet xmlns="{_NS}">'
        f'<numFmts count="{len(fmts)}">{num}</numFmts>'
        '<fonts count="1"><font><sz val="11"/><name val="Calibri"/><family val="2"/></font>'
        "</fonts>"
        '<fills count="2"><fill><patternFill patternType="none"/></fill>'
        '<fill><patternFill patternType="gray125"/></fill></fills>'
        '<borders count="1"><border><left/><right/><top/><bottom/><diagonal/></border></borders>'
        '<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/>'
        "</cellStyleXfs>"
        f'<cellXfs count="{len(xfs)}">{"".join(xfs)}</cellXfs>'
        '<cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0"/></cellStyles>'
        "</styleSheet>"
    )
