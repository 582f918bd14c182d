"""What calamine does not tell about a workbook, read from the file's own XML.

Byte searches over the sheet XML (decompressed once) rather than a second cell-by-cell parse:
the date system, error cells (calamine returns them as empty text or 0.0), hidden rows and
columns, formulas without a saved result, merged ranges in ODS, and a guard against sheets whose
used area would be billions of empty cells.
"""

from __future__ import annotations

import io
import re
import zipfile
from xml.etree.ElementTree import iterparse

from .readers_common import column_letter
from .table import ReadError

__all__ = [
    "MAX_SPARSE_CELLS",
    "merged_note",
    "ods_facts",
    "refuse_sparse_giant",
    "short_list",
    "xlsx_date_system",
    "xlsx_sheet_extras",
    "xlsx_sheet_part",
]

_ERR = "calcext:value-type"


def xlsx_date_system(z: zipfile.ZipFile) -> int:
    wb = z.read("xl/workbook.xml")
    m = re.search(rb"<(?:\w+:)?workbookPr\b[^>]*?\bdate1904\s*=\s*[\"'](1|true)[\"']", wb)
    return 1904 if m else 1900


def xlsx_sheet_part(z: zipfile.ZipFile, sheet: str) -> str | None:
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


def xlsx_sheet_extras(xml: bytes) -> tuple[list[tuple[int, int, str]], list[str]]:
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
            f"(rows {short_list(rows)})."
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
            f"(columns {short_list(letters)})."
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


def refuse_sparse_giant(xml: bytes, where: str, path: str) -> None:
    """Estimate the sheet's used area from its XML (cheap byte searches) before loading it."""
    first = re.search(rb'<(?:\w+:)?row\b[^>]*?\br\s*=\s*"(\d+)"', xml)
    last_at = xml.rfind(b"<row ")
    last_at = max(last_at, xml.rfind(b":row ", max(last_at, 0)))  # a prefixed one after it
    last = re.search(rb'row\b[^>]*?\br\s*=\s*"(\d+)"', xml[last_at:]) if last_at >= 0 else None
    if not first or not last:
        return
    height = int(last.group(1)) - int(first.group(1)) + 1
    if height * 16384 <= MAX_SPARSE_CELLS:  # even the widest sheet (XFD) passes
        return
    # Patterns start with a literal (' r="') so the regex engine can skip ahead fast. A
    # three-letter reference starts with two letters, so a sheet with none of those (most)
    # is searched once.
    if not re.search(rb' r="[A-Z]{2}', xml):
        width = 26
    elif re.search(rb' r="[A-Z]{3}', xml):
        width = 16384
    else:
        width = 702
    if height * width <= MAX_SPARSE_CELLS:
        return
    letters = set(re.findall(rb' r="([A-Z]{1,3})\d', xml))
    width = max((_col_index(b) + 1 for b in letters), default=1)
    cells = xml.count(b"<c ") + xml.count(b":c ")
    if height * width > MAX_SPARSE_CELLS and height * width > 10 * max(cells, 1):
        raise ReadError(
            f"{where} spans {height:,} rows × {width:,} columns but holds only {cells:,} cells; "
            "delete the stray cells far from the data (or copy the data to a new sheet) and "
            "open that.",
            path,
        )


def short_list(items: list) -> str:
    shown = ", ".join(str(i) for i in items[:10])
    return shown + ("…" if len(items) > 10 else "")


def ods_facts(xml: bytes, sheet_index: int) -> tuple[int, list[tuple[int, int, str]], list[str]]:
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
        notes.append(merged_note(merged))
    if hidden_rows:
        notes.append(
            f"{len(hidden_rows)} row(s) are hidden in the sheet and were read like the others "
            f"(rows {short_list(hidden_rows)})."
        )
    if hidden_cols:
        letters = [column_letter(c) for c in hidden_cols]
        notes.append(
            f"{len(letters)} column(s) are hidden in the sheet and were read like the others "
            f"(columns {short_list(letters)})."
        )
    return date_system, errors, notes


def merged_note(ranges: list[str]) -> str:
    return (
        f"{len(ranges)} merged cell range(s) ({short_list(ranges)}): only the first cell of "
        "each holds the value; the others read as empty."
    )
