"""Open a file as a RawTable: CSV/TSV/TXT, XLSX/XLSM, ODS, or Parquet (a file or a folder).

``read_table`` is the one entry point. It works out the format from the extension and the first
bytes, hashes the file (SHA-256, kept in the source facts so a fix log can say which file it saw),
and hands over to the reader for that format. Whatever goes wrong, the caller gets a ``ReadError``
with one sentence naming the file (and sheet): a raw library exception never escapes.
"""

from __future__ import annotations

import hashlib
from pathlib import Path

from .progress import Cancelled, Progress
from .readers_book import SheetInfo, list_book_sheets, read_book_table
from .readers_parquet import read_parquet_table
from .readers_text import TextFormat, detect_text_format, read_text_table
from .table import RawTable, ReadError, SourceFacts

__all__ = [
    "SUPPORTED",
    "SheetInfo",
    "TextFormat",
    "detect_format",
    "detect_text_format",
    "list_sheets",
    "read_table",
]

#: Extension → format name.
SUPPORTED = {
    ".csv": "csv",
    ".tsv": "csv",
    ".txt": "csv",
    ".xlsx": "xlsx",
    ".xlsm": "xlsm",
    ".ods": "ods",
    ".parquet": "parquet",
    ".pq": "parquet",
}
_OLE = bytes.fromhex("D0CF11E0A1B11AE1")
_ZIP = b"PK\x03\x04"
_MAX_TEXT_BYTES = 2 * 1024**3


def _is_parquet_dir(p: Path) -> bool:
    return p.is_dir() and any(f.suffix.lower() in (".parquet", ".pq") for f in p.rglob("*"))


def detect_format(path: str | Path) -> str:
    """The format name ("csv", "xlsx", "xlsm", "ods", "parquet") or a ReadError saying why not."""
    p = Path(path)
    name = p.name or str(p)
    if not p.exists():
        raise ReadError(f"{name} was not found (looked for {p}).", str(p))
    if p.is_dir():
        if _is_parquet_dir(p):
            return "parquet"
        raise ReadError(f"{name} is a folder with no Parquet files in it.", str(p))
    fmt = SUPPORTED.get(p.suffix.lower())
    try:
        with p.open("rb") as fh:
            head = fh.read(8)
    except OSError as err:
        raise ReadError(f"{name} could not be opened ({err.strerror or err}).", str(p)) from None
    if not head:
        raise ReadError(f"{name} is empty (0 bytes).", str(p))
    if head.startswith(_OLE):
        if p.suffix.lower() == ".xls":
            raise ReadError(
                f"{name} is an old-style XLS workbook; save it as XLSX and open that.", str(p)
            )
        raise ReadError(
            f"{name} is password-protected or encrypted (or an old-style XLS workbook); "
            "save an unprotected XLSX copy and open that.",
            str(p),
        )
    if fmt is None:
        if p.suffix.lower() == ".xls":
            raise ReadError(f"{name} is not a readable XLS workbook; save it as XLSX.", str(p))
        known = ", ".join(sorted({e.upper().lstrip(".") for e in SUPPORTED}))
        raise ReadError(
            f"{name} has an extension datemend does not read (it reads {known}).", str(p)
        )
    if fmt in ("xlsx", "xlsm", "ods") and not head.startswith(_ZIP):
        raise ReadError(
            f"{name} is not a {fmt.upper()} workbook (the file is not a zip archive).", str(p)
        )
    if fmt == "parquet" and head[:4] != b"PAR1":
        raise ReadError(f"{name} is not a Parquet file.", str(p))
    return fmt


def _sha256(p: Path) -> tuple[str, bytes | None]:
    """The file's SHA-256; also its bytes when small enough to keep (text files reuse them)."""
    h = hashlib.sha256()
    size = p.stat().st_size
    if size <= _MAX_TEXT_BYTES:
        data = p.read_bytes()
        h.update(data)
        return h.hexdigest(), data
    with p.open("rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 22), b""):
            h.update(chunk)
    return h.hexdigest(), None


def _dir_sha256(p: Path) -> str:
    h = hashlib.sha256()
    for f in sorted(p.rglob("*")):
        if f.is_file() and f.suffix.lower() in (".parquet", ".pq"):
            h.update(str(f.relative_to(p)).encode("utf-8") + b"\0")
            h.update(hashlib.sha256(f.read_bytes()).digest())
    return h.hexdigest()


def read_table(
    path: str | Path,
    *,
    sheet: str | None = None,
    header_row: int | None = None,
    progress: Progress | None = None,
) -> RawTable:
    """Read one table (one sheet of a workbook) with every cell's original value and kind.

    ``sheet`` picks a workbook sheet (default: the first visible worksheet); ``header_row`` is
    the 1-based row holding the column names (default: the first row filled like the table, so
    a title line above it is skipped). Raises ``ReadError`` (one sentence naming the file) for
    anything that cannot be read.
    """
    p = Path(path)
    name = p.name or str(p)
    where = f'{name}, sheet "{sheet}"' if sheet else name
    try:
        fmt = detect_format(p)
        if fmt == "parquet":
            sha = _dir_sha256(p) if p.is_dir() else _sha256(p)[0]
            facts = SourceFacts(path=str(p), format="parquet", sha256=sha)
            if sheet is not None:
                raise ReadError(f"{name} is a Parquet table; it has no sheets.", str(p))
            return read_parquet_table(str(p), facts, progress=progress)
        sha, data = _sha256(p)
        facts = SourceFacts(path=str(p), format=fmt, sha256=sha)
        if fmt == "csv":
            if sheet is not None:
                raise ReadError(f'{name} is a text file; it has no sheet "{sheet}".', str(p))
            if data is None:
                raise ReadError(f"{name} is too large to read as a text table.", str(p))
            return read_text_table(str(p), data, facts, header_row=header_row, progress=progress)
        del data
        return read_book_table(str(p), facts, sheet=sheet, header_row=header_row, progress=progress)
    except (ReadError, Cancelled, KeyboardInterrupt, SystemExit, GeneratorExit):
        raise
    except MemoryError:
        raise ReadError(f"{where} is too large to read into memory.", str(p)) from None
    except BaseException as err:  # a library failed in a way we did not foresee
        # (BaseException too: a panic inside a Rust extension arrives as one)
        raise ReadError(f"{where} could not be read ({_brief(err)}).", str(p)) from err


def list_sheets(path: str | Path) -> list[SheetInfo]:
    """Every sheet of a workbook, in order, with visibility; [] for CSV and Parquet tables."""
    p = Path(path)
    try:
        fmt = detect_format(p)
        if fmt in ("csv", "parquet"):
            return []
        return list_book_sheets(str(p))
    except (ReadError, KeyboardInterrupt, SystemExit, GeneratorExit):
        raise
    except BaseException as err:  # see read_table
        raise ReadError(f"{p.name} could not be read ({_brief(err)}).", str(p)) from err


def _brief(err: BaseException) -> str:
    """A library's message squeezed into a clause: one line, no trailing full stop."""
    text = " ".join(str(err).split())[:120].rstrip(".") or type(err).__name__
    return text
