"""Generate a set of malformed, odd and hostile input files (at test time, never committed).

``make_all(folder)`` writes them and returns one ``Case`` per file: the path, what a reader must
do with it ("ok": open it; "error": refuse with one sentence; "either"), and for files that must
open, the shape expected (worked out by hand from how the file is built). Deterministic: the
random damage comes from ``random.Random`` with fixed seeds.
"""

from __future__ import annotations

import codecs
import datetime as dt
import io
import random
import re
import zipfile
from dataclasses import dataclass
from pathlib import Path

import openpyxl


@dataclass(frozen=True)
class Case:
    path: Path
    expect: str  # "ok", "error" or "either"
    why: str
    n_cols: int | None = None  # expected shape when expect == "ok"
    n_rows: int | None = None


def _xlsx_bytes(rows, setup=None) -> bytes:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Members"
    for r in rows:
        ws.append(r)
    if setup:
        setup(wb, ws)
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _ods_bytes(rows) -> bytes:
    import pandas as pd

    df = pd.DataFrame(rows[1:], columns=rows[0], dtype=object)
    buf = io.BytesIO()
    with pd.ExcelWriter(buf, engine="odf") as w:
        df.to_excel(w, sheet_name="Members", index=False)
    return buf.getvalue()


def _parquet_bytes() -> bytes:
    import pyarrow as pa
    import pyarrow.parquet as pq

    buf = io.BytesIO()
    pq.write_table(pa.table({"a": [1, 2, 3], "b": ["x", "y", "z"]}), buf)
    return buf.getvalue()


def _rezip(data: bytes, change) -> bytes:
    """Rewrite a zip's members through ``change(name, bytes) -> bytes | None`` (None drops)."""
    src = zipfile.ZipFile(io.BytesIO(data))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as z:
        for info in src.infolist():
            new = change(info.filename, src.read(info.filename))
            if new is not None:
                z.writestr(info.filename, new)
    return out.getvalue()


def _sheet_patch(old: bytes, new: bytes):
    def change(name, b):
        return b.replace(old, new) if name == "xl/worksheets/sheet1.xml" else b

    return change


ROWS = [
    ["Member no", "Name", "Joined"],
    ["0001", "Ka Lodrin", dt.date(2019, 3, 14)],
    ["0002", "Mir Tevsa", "14/03/2019"],
    ["0003", "Zoë Quillan", 43538],
]


def make_all(out: Path) -> list[Case]:
    out.mkdir(parents=True, exist_ok=True)
    cases: list[Case] = []

    def put(name: str, data: bytes | str, expect: str, why: str, **shape) -> None:
        p = out / name
        p.write_bytes(data.encode("utf-8") if isinstance(data, str) else data)
        cases.append(Case(p, expect, why, **shape))

    good = _xlsx_bytes(ROWS)
    good_ods = _ods_bytes([["Member no", "Joined"], ["0001", dt.date(2019, 3, 14)]])
    good_pq = _parquet_bytes()
    rng = random.Random(20261201)

    # --- truncated and corrupted workbooks -------------------------------------------------
    for k, frac in enumerate([0.0001, 0.05, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.95]):
        cut = max(1, int(len(good) * frac))
        put(f"truncated_{k:02d}.xlsx", good[:cut], "error", f"XLSX cut to {cut} bytes")
        cut = max(1, int(len(good_ods) * frac))
        put(f"truncated_{k:02d}.ods", good_ods[:cut], "error", f"ODS cut to {cut} bytes")
    put("truncated_last_byte.xlsx", good[:-1], "either", "XLSX missing its last byte")
    for k in range(24):
        data = bytearray(good)
        for _ in range(rng.choice([1, 4, 32, 256])):
            pos = rng.randrange(30, len(data))
            data[pos] = rng.randrange(256)
        put(f"corrupt_{k:02d}.xlsx", bytes(data), "either", "random bytes overwritten")
    for k in range(8):
        data = bytearray(good_ods)
        for _ in range(rng.choice([1, 16, 128])):
            data[rng.randrange(60, len(data))] = rng.randrange(256)
        put(f"corrupt_{k:02d}.ods", bytes(data), "either", "random bytes overwritten")
    for k, frac in enumerate([0.1, 0.5, 0.9]):
        put(f"truncated_{k}.parquet", good_pq[: int(len(good_pq) * frac)], "error", "cut Parquet")
    put(
        "corrupt.parquet",
        b"PAR1" + bytes(rng.randrange(256) for _ in range(300)) + b"PAR1",
        "error",
        "Parquet magic around noise",
    )

    # --- zips that are not workbooks ---------------------------------------------------------
    def zip_of(members: dict[str, bytes]) -> bytes:
        buf = io.BytesIO()
        with zipfile.ZipFile(buf, "w") as z:
            for n, b in members.items():
                z.writestr(n, b)
        return buf.getvalue()

    put("empty_zip.xlsx", zip_of({}), "error", "a zip with no members")
    put("photos_zip.xlsx", zip_of({"a.jpg": b"\xff\xd8\xff"}), "error", "a zip of other files")
    put("docx_like.xlsx", zip_of({"word/document.xml": b"<w/>"}), "error", "a word-processor zip")
    put("wb_garbage.xlsx", zip_of({"xl/workbook.xml": b"not xml"}), "error", "garbage workbook")
    put("zip_as.ods", zip_of({"a.txt": b"x"}), "error", "a zip that is not an ODS")
    ods_mime = b"application/vnd.oasis.opendocument.spreadsheet"
    broken = zip_of({"mimetype": ods_mime, "content.xml": b"<office:document-content"})
    put("ods_bad_content.ods", broken, "error", "broken ODS XML")
    put(
        "no_sheet_part.xlsx",
        _rezip(good, lambda n, b: None if "worksheets" in n else b),
        "either",
        "workbook lists a sheet whose XML is missing",
    )
    put(
        "sheet_not_xml.xlsx",
        _rezip(good, lambda n, b: b"<<<" if "worksheets/" in n else b),
        "either",
        "sheet XML is not XML",
    )

    # --- encrypted / OLE ---------------------------------------------------------------------
    ole = bytes.fromhex("D0CF11E0A1B11AE1") + bytes(504)
    for ext in ("xlsx", "xlsm", "xls", "csv", "ods"):
        put(f"encrypted_ole.{ext}", ole + b"EncryptionInfo" + bytes(512), "error", "OLE file")

    # --- empty, blank, header-only, one column -----------------------------------------------
    for ext in ("csv", "tsv", "txt", "xlsx", "xlsm", "ods", "parquet"):
        put(f"empty.{ext}", b"", "error", "zero bytes")
    for k, text in enumerate(["\n", "\r\n\r\n", "   \n\t\n", ";;;\n;;;\n", ",,,", "\x00"]):
        put(f"blank_{k}.csv", text, "either", "no values at all")
    put("empty_sheet.xlsx", _xlsx_bytes([]), "error", "a workbook with an empty sheet")
    for k, (text, cols) in enumerate(
        [("a,b,c\n", 3), ("a;b;c", 3), ("Member no\n", 1), ('"a","b"\r\n', 2), ("x|y|z\n", 3)]
    ):
        put(f"header_only_{k}.csv", text, "ok", "header and nothing else", n_cols=cols, n_rows=0)
    put("header_only.xlsx", _xlsx_bytes([["a", "b"]]), "ok", "header only", n_cols=2, n_rows=0)
    put(
        "one_column.csv",
        "Joined\n2019-03-14\n14/03/2019\n\n43538\n",
        "ok",
        "one column",
        n_cols=1,
        n_rows=4,
    )
    put(
        "one_column.xlsx",
        _xlsx_bytes([["Joined"], [dt.date(2019, 3, 14)], [43538]]),
        "ok",
        "one column",
        n_cols=1,
        n_rows=2,
    )
    put("one_cell.csv", "x", "ok", "a single cell", n_cols=1, n_rows=0)

    # --- wide and long -----------------------------------------------------------------------
    wide = 2000
    header = ",".join(f"c{i}" for i in range(wide))
    body = ",".join("14/03/2019" if i % 7 == 0 else str(i) for i in range(wide))
    put(
        "wide_2000.csv", f"{header}\n{body}\n{body}\n", "ok", "2,000 columns", n_cols=wide, n_rows=2
    )
    put(
        "wide_2000.xlsx",
        _xlsx_bytes([[f"c{i}" for i in range(wide)], list(range(wide))]),
        "ok",
        "2,000 columns",
        n_cols=wide,
        n_rows=1,
    )
    long_cell = "x" * (1 << 20)
    put(
        "long_cell.csv",
        f"a,b\n1,{long_cell}\n2,14/03/2019\n",
        "ok",
        "a 1 MB cell",
        n_cols=2,
        n_rows=2,
    )
    put(
        "long_quoted_cell.csv",
        f'a,b\n1,"{long_cell[:500_000]}\n{long_cell[:500_000]}"\n',
        "ok",
        "a 1 MB quoted cell with a newline",
        n_cols=2,
        n_rows=1,
    )
    put(
        "long_cell.xlsx",
        _xlsx_bytes([["a"], ["y" * 32767]]),
        "ok",
        "longest XLSX text",
        n_cols=1,
        n_rows=1,
    )
    put(
        "long_line_no_newline.csv",
        "a," * 5000 + "a",
        "ok",
        "5,001 header cells, no newline",
        n_cols=5001,
        n_rows=0,
    )

    # --- NUL bytes, line endings, quotes -----------------------------------------------------
    for k, text in enumerate(
        [
            "a,b\n1,\x002\n",
            "a\x00b,c\n1,2\n",
            "a,b\n\x00\x00\x00,1\n",
            "a,b\n1,2\x00\n3,4\n",
            "\x00a,b\n1,2\n",
        ]
    ):
        put(f"nul_{k}.csv", text, "ok", "NUL characters", n_cols=2)
    put("all_nul.csv", bytes(4096), "either", "only NUL bytes")
    for k, text in enumerate(
        [
            "a,b\r\n1,2\n3,4\r5,6\r\n",
            "a,b\r1,2\r3,4\r",
            "a,b\n1,2\r\n\r\n3,4\n",
            "a,b\r\r\n1,2\n",
        ]
    ):
        put(f"line_endings_{k}.csv", text, "ok", "mixed line endings", n_cols=2)
    for k, text in enumerate(
        [
            'a,b\n1,"unclosed\n2,3\n',
            'a,b\n"x""y",2\n',
            'a,b\n1,ab"c\n',
            '"a,b\n1,2\n',
            'a,b\n1,"x"y\n',
            'a,b\n,"",\n',
        ]
    ):
        put(f"quotes_{k}.csv", text, "either", "odd quoting")
    for k, text in enumerate(["a,b,c\n1\n2,3,4,5,6\n", "a\n1,2,3\n", "a;b\n1;2;3;4\n5\n"]):
        put(f"ragged_{k}.csv", text, "ok", "rows of different lengths")

    # --- encodings and BOMs ------------------------------------------------------------------
    text = "Member no;Name;Joined\n0001;Zoë Quillan;14/03/2019\n0002;Müller-ish;2019-03-14\n"
    for enc in ("utf-8", "cp1252", "latin-1", "utf-16-le", "utf-16-be", "utf-16", "utf-32"):
        put(f"enc_{enc}.csv", text.encode(enc), "either", f"{enc} text")
    put("enc_utf8_bom.csv", codecs.BOM_UTF8 + text.encode("utf-8"), "ok", "BOM", n_cols=3, n_rows=2)
    put(
        "enc_utf16_bom_le.csv",
        codecs.BOM_UTF16_LE + text.encode("utf-16-le"),
        "ok",
        "BOM",
        n_cols=3,
        n_rows=2,
    )
    put(
        "enc_utf16_bom_be.csv",
        codecs.BOM_UTF16_BE + text.encode("utf-16-be"),
        "ok",
        "BOM",
        n_cols=3,
        n_rows=2,
    )
    put("enc_bom_only_utf8.csv", codecs.BOM_UTF8, "error", "BOM and nothing else")
    put("enc_bom_only_utf16.csv", codecs.BOM_UTF16_LE, "error", "BOM and nothing else")
    put("enc_bom_wrong.csv", codecs.BOM_UTF8 + text.encode("cp1252"), "either", "BOM lies")
    put("enc_utf16_bom_odd.csv", codecs.BOM_UTF16_LE + b"a\x00,\x00b", "either", "odd length")
    put("enc_double_bom.csv", codecs.BOM_UTF8 * 2 + b"a,b\n1,2\n", "ok", "two BOMs", n_cols=2)
    put(
        "enc_mixed.csv",
        text.encode("utf-8") + "0003;Zoë;x\n".encode("cp1252"),
        "either",
        "UTF-8 and Windows-1252 in one file",
    )
    for k in range(10):
        noise = bytes(rng.randrange(256) for _ in range(rng.choice([16, 300, 5000])))
        put(f"noise_{k}.csv", noise, "either", "random bytes")
        put(f"noise_{k}.txt", b"a,b\n" + noise, "either", "header then random bytes")
    for ext in ("docx", "json", "xml", "pdf", ""):
        put(f"unknown_ext.{ext}" if ext else "no_extension", b"a,b\n1,2\n", "error", "extension")

    # --- headers: duplicate, blank, merged ---------------------------------------------------
    put(
        "dup_headers.csv",
        "Date,Date,,Date\n1,2,3,4\n",
        "ok",
        "repeated and blank names",
        n_cols=4,
        n_rows=1,
    )
    put("all_blank_headers.csv", ",,\n1,2,3\n", "ok", "blank first line", n_cols=3, n_rows=0)
    put(
        "blank_rows_first.csv",
        "\n\n\na,b\n1,2\n",
        "ok",
        "header after blank lines",
        n_cols=2,
        n_rows=1,
    )

    def merged_header(wb, ws):
        ws.merge_cells("A1:B1")

    put(
        "merged_header.xlsx",
        _xlsx_bytes([["Dates", None, "x"], [1, 2, 3]], merged_header),
        "ok",
        "merged header cells",
        n_cols=3,
        n_rows=1,
    )
    put(
        "dup_headers.xlsx",
        _xlsx_bytes([["d", "d", None, "d"], [1, 2, 3, 4]]),
        "ok",
        "repeated and blank names",
        n_cols=4,
        n_rows=1,
    )

    def title_rows(wb, ws):
        ws.insert_rows(1, 3)
        ws["A1"] = "Club export"

    put("title_above.xlsx", _xlsx_bytes(ROWS, title_rows), "ok", "title row above the header")

    # --- formulas, errors, odd cells ---------------------------------------------------------
    def formulas(wb, ws):
        ws["D1"] = "f"
        ws["D2"] = "=1/0"
        ws["D3"] = "=TODAY()"
        ws["D4"] = "=A2&B2"

    fx = _xlsx_bytes(ROWS, formulas)
    put("formulas_no_cache.xlsx", fx, "ok", "formulas without saved results", n_cols=4, n_rows=3)

    def cache_results(name: str, b: bytes) -> bytes:
        if name != "xl/worksheets/sheet1.xml":
            return b
        b = b.replace(b"<f>1/0</f><v />", b"<f>1/0</f><v>#DIV/0!</v>")
        b = b.replace(b"<f>TODAY()</f><v />", b"<f>TODAY()</f><v>46326</v>")
        return b.replace(b'<c r="D2"', b'<c t="e" r="D2"')

    cached = _rezip(fx, cache_results)
    put("formulas_cached.xlsx", cached, "ok", "formulas with saved results", n_cols=4, n_rows=3)

    def errors(wb, ws):
        for k, e in enumerate(["#N/A", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#NULL!"]):
            c = ws.cell(row=k + 2, column=4, value=e)
            c.data_type = "e"
        ws["D1"] = "errs"

    put("error_cells.xlsx", _xlsx_bytes(ROWS, errors), "ok", "error cells", n_cols=4, n_rows=7)

    def odd_cells(wb, ws):
        ws["D1"] = "odd"
        ws["D2"] = dt.timedelta(hours=30)
        ws["D2"].number_format = "[h]:mm"
        ws["D3"] = dt.time(23, 59)
        ws["D4"] = 1e308
        ws["E1"] = "bools"
        ws["E2"] = True

    put("odd_cells.xlsx", _xlsx_bytes(ROWS, odd_cells), "ok", "duration/time/huge", n_cols=5)

    def hide_all(n: str, b: bytes) -> bytes:
        if n != "xl/workbook.xml":
            return b
        return re.sub(rb'state="visible"', b'state="hidden"', b)

    put("all_sheets_hidden.xlsx", _rezip(good, hide_all), "ok", "no visible sheet", n_cols=3)

    def weird_flag(n: str, b: bytes) -> bytes:
        if n != "xl/workbook.xml":
            return b
        return b.replace(b"<workbookPr", b'<workbookPr date1904="maybe"')

    put("date1904_weird.xlsx", _rezip(good, weird_flag), "either", "bad date1904 value")
    put(
        "no_cell_refs.xlsx",
        _rezip(
            good,
            lambda n, b: (
                re.sub(rb' r="[A-Z]+\d+"', b"", b) if n == "xl/worksheets/sheet1.xml" else b
            ),
        ),
        "either",
        "cells without r= references",
    )
    put(
        "shared_string_oob.xlsx",
        _rezip(
            good,
            lambda n, b: (
                b.replace(b't="inlineStr"><is><t>Ka Lodrin</t></is>', b't="s"><v>9999</v>')
                if "sheet1.xml" in n
                else b
            ),
        ),
        "either",
        "shared string index out of range",
    )
    put(
        "huge_dimension.xlsx",
        _rezip(good, _sheet_patch(b'<dimension ref="A1:C4"', b'<dimension ref="A1:XFD1048576"')),
        "ok",
        "dimension claims the whole sheet",
        n_cols=3,
        n_rows=3,
    )

    # --- size bombs and parser traps -------------------------------------------------------
    def far_cell(ref: bytes):
        def change(n: str, b: bytes) -> bytes:
            if n != "xl/worksheets/sheet1.xml":
                return b
            row = re.match(rb"[A-Z]+(\d+)", ref).group(1)
            cell = b'<row r="' + row + b'"><c r="' + ref + b'" t="n"><v>1</v></c></row>'
            return b.replace(b"</sheetData>", cell + b"</sheetData>")

        return change

    put(
        "far_cell_XFD1048576.xlsx",
        _rezip(good, far_cell(b"XFD1048576")),
        "error",
        "one stray cell in the last row and column: a 17-billion-cell grid",
    )
    put(
        "far_cell_ZZ200000.xlsx",
        _rezip(good, far_cell(b"ZZ200000")),
        "error",
        "one stray cell 200,000 rows down",
    )
    z = zipfile.ZipFile(io.BytesIO(good_ods))
    ods_parts = {n: z.read(n) for n in z.namelist()}

    def ods_with(content: bytes) -> bytes:
        buf = io.BytesIO()
        with zipfile.ZipFile(buf, "w") as o:
            o.writestr("mimetype", ods_parts["mimetype"])
            for n, b in ods_parts.items():
                if n != "mimetype":
                    o.writestr(n, content if n == "content.xml" else b, zipfile.ZIP_DEFLATED)
        return buf.getvalue()

    content = ods_parts["content.xml"]
    put(
        "ods_mismatched_tag.ods",
        ods_with(content.replace(b"</table:table>", b"</table:Aable>")),
        "error",
        "closing tag misspelt (an XML parser loop trap)",
    )
    repeat = (
        b'<table:table-row table:number-rows-repeated="1000000"><table:table-cell '
        b'table:number-columns-repeated="1000"/></table:table-row><table:table-row>'
        b'<table:table-cell table:number-columns-repeated="1000"/><table:table-cell '
        b'office:value-type="float" office:value="5"><text:p>5</text:p></table:table-cell>'
        b"</table:table-row></table:table>"
    )
    put(
        "ods_far_cell.ods",
        ods_with(content.replace(b"</table:table>", repeat)),
        "either",
        "a cell after a million repeated rows",
    )

    # --- many variations of ordinary files, so readers see volume ---------------------------
    formats = ["%d/%m/%Y", "%Y-%m-%d", "%m/%d/%y", "%d.%m.%Y", "%b %d %Y"]
    for k in range(40):
        delim = ",;\t|"[k % 4]
        r = random.Random(k)
        rows = [delim.join(["Member no", "Joined", "Notes"])]
        n = r.randint(0, 30)
        for i in range(n):
            d = dt.date(2000, 1, 1) + dt.timedelta(days=r.randint(0, 9000))
            val = r.choice([d.strftime(r.choice(formats)), "", "n/a", str(r.randint(0, 60000))])
            rows.append(delim.join([f"{i:04d}", val, r.choice(["", "ok", "x"])]))
        eol = ["\n", "\r\n"][k % 2]
        put(f"ordinary_{k:02d}.csv", eol.join(rows) + eol, "ok", "ordinary", n_cols=3, n_rows=n)
    return cases


if __name__ == "__main__":
    import sys
    import tempfile

    folder = Path(sys.argv[1]) if len(sys.argv) > 1 else Path(tempfile.mkdtemp())
    made = make_all(folder)
    print(f"{len(made)} files in {folder}")
