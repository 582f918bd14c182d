"""CSV, TSV and TXT files → RawTable, every value kept as the exact text written.

Encoding: a byte-order mark decides first (a standard, not a guess); then a strict UTF-8 decode;
then charset-normalizer, limited to the encodings such exports use. Delimiter: each candidate
(`,` `;` tab `|`) is tried on a sample with a quote-aware parser and the one giving the most
consistent field count wins. The whole file is then parsed by pyarrow's CSV reader with every
column typed as string, so nothing is coerced (``0012``, ``1e5``, ``NA`` stay as written) and no
Python runs per cell. Ragged files fall back to the standard library's csv module.
"""

from __future__ import annotations

import codecs
import csv
import io
import re
import sys
from collections import Counter
from dataclasses import dataclass

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pacsv

from .progress import Progress
from .readers_common import build_table
from .table import CellKind, RawTable, ReadError, SourceFacts

__all__ = ["DELIMITERS", "TextFormat", "decode_text", "detect_text_format", "read_text_table"]

DELIMITERS = (",", ";", "\t", "|")
_DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "vertical bar"}
#: Encodings charset-normalizer may choose between when there is no BOM and UTF-8 fails.
_CANDIDATES = ["utf_8", "cp1252", "latin_1", "utf_16_le", "utf_16_be"]
_NAMES = {
    "utf_8": "utf-8",
    "cp1252": "windows-1252",
    "latin_1": "iso-8859-1",
    "utf_16_le": "utf-16-le",
    "utf_16_be": "utf-16-be",
}
_BOMS = (
    (codecs.BOM_UTF8, "utf-8-sig"),
    (codecs.BOM_UTF16_LE, "utf-16"),  # the utf-16 codec reads and drops the BOM
    (codecs.BOM_UTF16_BE, "utf-16"),
)
_SAMPLE_CHARS = 256 * 1024
_BLANK_BYTES = re.compile(rb"\s*")  # what bytes.strip() removes: ASCII whitespace
_BLANK_TEXT = re.compile(rb"(?:[\r\n\t ]|\xef\xbb\xbf)*")  # blank lines and BOMs (UTF-8)
_PIECE = 1 << 22


def _utf8_start(data: bytes) -> int | None:
    """Where the text starts (0, or 3 after a UTF-8 byte-order mark) if ``data`` is valid
    UTF-8 with no other byte-order mark; else None. Checked a piece at a time."""
    start = len(codecs.BOM_UTF8) if data.startswith(codecs.BOM_UTF8) else 0
    if not start and any(data.startswith(bom) for bom, _ in _BOMS):
        return None
    check = codecs.getincrementaldecoder("utf-8")()
    view = memoryview(data)
    try:
        for i in range(start, len(data), _PIECE):
            check.decode(view[i : i + _PIECE])
        check.decode(b"", final=True)
    except UnicodeDecodeError:  # decode_text then tells the encoding, or what is wrong
        return None
    return start


@dataclass(frozen=True)
class TextFormat:
    """How a text table is written: encoding (IANA-style name), delimiter, and whether a BOM."""

    encoding: str
    delimiter: str
    bom: bool = False
    note: str | None = None


def decode_text(data: bytes, name: str) -> tuple[str, str, bool, str | None]:
    """Decode file bytes: (text, encoding name, had a BOM, note or None)."""
    for bom, codec in _BOMS:
        if data.startswith(bom):
            label = (
                "utf-8-sig"
                if codec == "utf-8-sig"
                else ("utf-16-le" if bom == codecs.BOM_UTF16_LE else "utf-16-be")
            )
            try:
                return data.decode(codec), label, True, None
            except UnicodeDecodeError:
                raise ReadError(
                    f"{name} starts with a {label} byte-order mark but its text is not valid "
                    f"{label}.",
                    name,
                ) from None
    try:
        return data.decode("utf-8"), "utf-8", False, None
    except UnicodeDecodeError:
        pass
    from charset_normalizer import from_bytes

    best = from_bytes(data, cp_isolation=_CANDIDATES).best()
    tried = [best.encoding] if best is not None else []
    for enc in [*tried, "cp1252"]:
        try:
            return data.decode(enc), _NAMES.get(enc, enc), False, None
        except (UnicodeDecodeError, LookupError):
            continue
    note = (
        f"The text encoding of {name} could not be told for sure; it was read as ISO-8859-1 "
        "(Latin-1), so some accented letters may look wrong."
    )
    return data.decode("latin-1"), "iso-8859-1", False, note


def _sniff_delimiter(sample: str, prefer: str | None) -> str:
    """The candidate delimiter giving the most rows with one consistent field count (> 1)."""
    best_score: tuple[float, int, int] = (0.0, 0, 0)
    best = prefer or ","
    for order, delim in enumerate(DELIMITERS):
        try:
            counts = [
                len(row)
                for row in csv.reader(io.StringIO(sample, newline=""), delimiter=delim)
                if row
            ]
        except csv.Error:
            continue
        if not counts:
            continue
        width, freq = Counter(counts).most_common(1)[0]
        if width < 2:
            continue
        score = (freq / len(counts), width, 1 if delim == prefer else -order)
        if score > best_score:
            best_score, best = score, delim
    if best_score == (0.0, 0, 0):
        # No candidate splits the rows consistently: one column. Use a delimiter that does not
        # occur at all, so no value is cut in two.
        absent = [d for d in DELIMITERS if d not in sample]
        return absent[0] if absent else best
    return best


def _sample(text: str) -> str:
    if len(text) <= _SAMPLE_CHARS:
        return text
    cut = text.rfind("\n", 0, _SAMPLE_CHARS)
    return text[: cut if cut > 0 else _SAMPLE_CHARS]


def detect_text_format(path: str, data: bytes | None = None) -> TextFormat:
    """Encoding and delimiter of a CSV/TSV/TXT file, without reading it as a table."""
    from pathlib import Path

    p = Path(path)
    if data is None:
        data = p.read_bytes()
    text, enc, bom, note = decode_text(data, p.name)
    prefer = "\t" if p.suffix.lower() == ".tsv" else None
    return TextFormat(enc, _sniff_delimiter(_sample(text), prefer), bom, note)


def _fast_parse(
    data: pa.Buffer, delim: str, width: int, *, multiline: bool
) -> tuple[list[pa.Array], list[np.ndarray], np.ndarray]:
    """pyarrow parse of UTF-8 ``data``, all columns as strings, kept as Arrow string arrays
    (empty fields as nulls). ``multiline`` says the text may hold line breaks inside quoted
    fields or lone CRs, so line numbers must be counted. Raises pa.ArrowInvalid on ragged rows."""
    names = [f"f{i}" for i in range(width)]
    table = pacsv.read_csv(
        pa.BufferReader(data),
        read_options=pacsv.ReadOptions(
            column_names=names, block_size=max(1 << 22, min(data.size + 1, 1 << 26))
        ),
        parse_options=pacsv.ParseOptions(
            delimiter=delim,
            quote_char='"',
            double_quote=True,
            newlines_in_values=True,
            ignore_empty_lines=False,
        ),
        convert_options=pacsv.ConvertOptions(
            column_types={n: pa.string() for n in names},
            strings_can_be_null=False,
            quoted_strings_can_be_null=False,
            null_values=[],
        ),
    )
    n_rows = table.num_rows
    values: list[pa.Array] = []
    kinds: list[np.ndarray] = []
    breaks = np.zeros(n_rows, dtype=np.int64)
    null = pa.scalar(None, pa.string())
    parsed = list(table.columns)
    del table  # each column's pieces are let go as soon as that column is done
    for j in range(len(parsed)):
        col = parsed[j]
        parsed[j] = None
        col = col.combine_chunks() if col.num_chunks != 1 else col.chunk(0)
        # An empty field has no value (a null); a whitespace-only one keeps its text (kind
        # EMPTY, so the engine treats it as blank) so an export can write it back as it was.
        empty = pc.equal(pc.utf8_length(col), 0)
        blank = pc.or_(empty, pc.utf8_is_space(col)).to_numpy(zero_copy_only=False)
        values.append(pc.if_else(empty, null, col) if pc.any(empty).as_py() else col)
        kinds.append(np.where(blank, CellKind.EMPTY, CellKind.TEXT).astype(np.int8))
        if multiline and n_rows:
            lf = pc.count_substring(col, "\n").to_numpy(zero_copy_only=False)
            cr = pc.count_substring(col, "\r").to_numpy(zero_copy_only=False)
            crlf = pc.count_substring(col, "\r\n").to_numpy(zero_copy_only=False)
            breaks += lf + cr - crlf
    lines = np.arange(1, n_rows + 1, dtype=np.int64)
    if breaks.any():
        lines[1:] += np.cumsum(breaks)[:-1]
    return values, kinds, lines


def _slow_parse(text: str, delim: str) -> tuple[list[np.ndarray], list[np.ndarray], np.ndarray]:
    """The standard library's csv reader: copes with ragged rows and blank lines."""
    if csv.field_size_limit() < sys.maxsize // 2:
        csv.field_size_limit(min(sys.maxsize, 2**31 - 1))
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delim)
    rows: list[list[str]] = []
    starts: list[int] = []
    prev = 0
    for row in reader:
        rows.append(row)  # a blank line is an empty row, as the fast path reads it
        starts.append(prev + 1)
        prev = reader.line_num
    width = max((len(r) for r in rows), default=0)
    for r in rows:
        if len(r) < width:
            r.extend([""] * (width - len(r)))
    values, kinds = [], []
    for j in range(width):
        col = np.array([r[j] for r in rows], dtype=object)
        blank = pd.Series(col, dtype=object).str.strip().eq("").to_numpy(dtype=bool)
        col[col == ""] = None  # whitespace-only fields keep their text (kind EMPTY)
        values.append(col)
        kinds.append(np.where(blank, CellKind.EMPTY, CellKind.TEXT).astype(np.int8))
    return values, kinds, np.asarray(starts, dtype=np.int64)


def read_text_table(
    path: str,
    data: bytes,
    facts: SourceFacts,
    *,
    header_row: int | None,
    progress: Progress | None,
) -> RawTable:
    """Read a delimited text file whose bytes are ``data``."""
    from pathlib import Path

    name = Path(path).name
    if _BLANK_BYTES.fullmatch(data):
        raise ReadError(f"{name} is empty: it has no text to read.", path)
    no_text = f"{name} has no text to read (only blank lines or a byte-order mark)."
    start = _utf8_start(data)
    if start is None:  # another encoding: decode it whole (such files are seldom large)
        text, enc, _bom, note = decode_text(data, name)
        if not text.strip("\r\n\t \ufeff"):
            raise ReadError(no_text, path)
        sample = _sample(text)
        has_nul = "\x00" in text
        multiline = "\r" in text or ("\n" in text and '"' in text)
        body = pa.py_buffer(text.encode("utf-8"))
    else:
        # UTF-8: checked a piece at a time and parsed from the file's own bytes, so a large
        # file is never held twice over as bytes and as text
        text, note = None, None
        enc = "utf-8-sig" if start else "utf-8"
        if _BLANK_TEXT.fullmatch(data, start):
            raise ReadError(no_text, path)
        head = data[start : start + 4 * _SAMPLE_CHARS + 4].decode("utf-8", "ignore")
        sample = _sample(head)
        has_nul = data.find(b"\x00", start) >= 0
        multiline = data.find(b"\r", start) >= 0 or (
            data.find(b"\n", start) >= 0 and data.find(b'"', start) >= 0
        )
        body = pa.py_buffer(data).slice(start)
    if progress is not None:
        progress.report(1, 4, f"Reading {name} ({enc})")
    prefer = "\t" if Path(path).suffix.lower() == ".tsv" else None
    delim = _sniff_delimiter(sample, prefer)
    notes = [note] if note else []
    if has_nul:
        notes.append(f"{name} contains NUL characters; they were kept in the values.")
    try:
        widths = [len(r) for r in csv.reader(io.StringIO(sample, newline=""), delimiter=delim)]
    except csv.Error:
        widths = []
    width = max(widths, default=1) or 1
    try:
        values, kinds, lines = _fast_parse(body, delim, width, multiline=multiline)
    except (pa.ArrowInvalid, pa.ArrowException, ValueError):
        if text is None:
            text = decode_text(data, name)[0]
        values, kinds, lines = _slow_parse(text, delim)
    del body, text
    pa.default_memory_pool().release_unused()  # hand the parse's scratch memory back
    if progress is not None:
        progress.report(3, 4, f"Read {len(lines):,} lines of {name}")
    facts = SourceFacts(
        path=facts.path,
        format=facts.format,
        sheet=None,
        sheets=(),
        encoding=enc,
        delimiter=delim,
        date_system=1900,
        sha256=facts.sha256,
        notes=tuple(notes),
    )
    if len(values) == 0 or len(lines) == 0:
        raise ReadError(f"{name} has no rows to read.", path)
    return build_table(values, kinds, lines, facts, header_row=header_row)


def delimiter_name(delim: str) -> str:
    """'semicolon' for ';' — for messages."""
    return _DELIMITER_NAMES.get(delim, repr(delim))
