"""Export a CleanTable: a workbook with true date cells, or CSV / Parquet, written atomically.

``export_table`` picks a writer from the target's suffix and the source:

- ``"workbook"``: XLSX/XLSM source to XLSX/XLSM target. The source workbook is opened with
  openpyxl (formulas kept, macros kept for XLSM), only the cells of the fixed columns change, and
  every other sheet, value, number format, width, merged range and formula stays as it was.
  Formulas' saved results are not written (they could be stale once dates change); the file
  asks spreadsheet programs to recalculate on opening. Parts openpyxl cannot carry (shapes,
  slicers, form controls...) are named in ``ExportResult.notes``. A cell is only changed if it
  still holds the value that was read, so a date can never land in the wrong row.
- ``"streaming"``: a new XLSX whose sheet XML is built column by column and written in chunks
  (export_stream.py), used when the workbook need not be kept (a CSV or ODS source, or
  ``ExportOptions.streaming``).
- ``"csv"`` and ``"parquet"``: flat files built with vectorised column operations.

ODS is read, not written: an ``.ods`` target raises ExportError.

Whatever the writer, the file is first written to a temporary file in the target's folder and
then moved into place with ``os.replace``, so a failure leaves the target absent or as it was.
The source path is refused as a target.
"""

from __future__ import annotations

import contextlib
import dataclasses
import errno
import hashlib
import os
import re
import tempfile
import zoneinfo
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from glob import escape as glob_escape
from pathlib import Path
from typing import TypeVar

import numpy as np
import pandas as pd
import pyarrow as pa

from .clean import NAIVE, CellState, CleanTable, ParsedColumn
from .progress import Progress
from .table import DatemendError, object_cells

__all__ = ["ExportError", "ExportOptions", "ExportResult", "export_table", "target_format"]

_T = TypeVar("_T")

_FORMATS = {".xlsx": "xlsx", ".xlsm": "xlsx", ".csv": "csv", ".tsv": "csv", ".txt": "csv"}
_FORMATS |= {".parquet": "parquet", ".pq": "parquet"}

WRITER_TEXT = {
    "workbook": "the source workbook, with every other sheet, formula and format kept",
    "streaming": "a new single-sheet workbook written row by row (other sheets are not copied)",
    "csv": "a CSV file (UTF-8, ISO 8601 dates)",
    "parquet": "a Parquet file with date and timestamp types",
}


class ExportError(DatemendError):
    """An export could not be written; the message is one sentence naming the file.

    ODS is a format datemend reads but does not write, so an ``.ods`` target is refused here.
    """

    def __init__(self, message: str, path: str | Path | None = None) -> None:
        super().__init__(message)
        self.path = None if path is None else str(path)


@dataclass(frozen=True)
class ExportOptions:
    """How to write. Defaults change nothing in the workbook beyond the fixed cells.

    - ``format``: "xlsx", "csv" or "parquet"; None takes it from the target's suffix
      (ODS is read, not written).
    - ``date_format`` / ``datetime_format``: XLSX number formats of date and date-time cells.
    - ``keep_raw``: keep each fixed column's original cells in a column "<name> (raw)"; in a kept
      workbook it is appended at the right end (so formulas' references stay valid), in a new
      file it sits just after the fixed column. Parquet always keeps it for a column with
      unresolved cells, since a typed column cannot hold their text.
    - ``unresolved_sheet`` / ``log_sheet``: add a sheet listing every unresolved cell, or the
      fix log's sentences (XLSX only).
    - ``zone``: values that carried a UTC offset are written as wall-clock time in this zone
      ("UTC" or an IANA name); XLSX cells hold no zone, so the header gets a note saying which
      (a cell comment, or a suffix with ``zone_in_header``). Values with no offset are written as
      they were read.
    - ``delimiter``, ``bom``, ``line_terminator``: CSV layout (UTF-8 always).
    - ``csv_formula_guard``: prefix text cells that begin with = + - @ TAB or CR with a single
      quote (OWASP's CSV-injection advice). Off by default because it changes values: a CSV is
      usually read by programs, and negative numbers kept as text would change too. XLSX never
      needs it: text is always stored as text there.
    - ``streaming``: None picks (stream when the workbook need not be kept); True forces a new
      workbook written row by row; False insists on keeping the workbook.
    - ``clear_blank_tokens``: in a fixed column, cells read as blank (empty, whitespace-only,
      or a placeholder such as "n/a") are written empty; set False to leave placeholders and
      whitespace-only cells exactly as they were. Cells of columns that were not fixed are
      always written as read, whitespace-only ones included.
    - ``sheet_name``: sheet name of a new workbook (default: the source sheet's, else "Data").
    """

    format: str | None = None
    date_format: str = "yyyy-mm-dd"
    datetime_format: str = "yyyy-mm-dd hh:mm:ss"
    keep_raw: bool = False
    unresolved_sheet: bool = False
    log_sheet: bool = False
    zone: str = "UTC"
    zone_in_header: bool = False
    delimiter: str = ","
    bom: bool = False
    line_terminator: str = "\r\n"
    csv_formula_guard: bool = False
    streaming: bool | None = None
    clear_blank_tokens: bool = True
    sheet_name: str | None = None


@dataclass(frozen=True)
class ExportResult:
    """What was written, by which writer, and anything the user should know about it."""

    path: Path
    format: str  # "xlsx", "csv" or "parquet"
    writer: str  # "workbook", "streaming", "csv" or "parquet"
    rows: int
    columns: int
    dates_written: int
    unresolved: int
    notes: tuple[str, ...] = ()

    @property
    def writer_text(self) -> str:
        """One phrase for the UI: which writer was used and what it keeps."""
        return WRITER_TEXT[self.writer]


# --------------------------------------------------------------------------- column preparation


@dataclass(frozen=True, eq=False)
class DateOut:
    """The cells of one fixed column, ready for any writer (all arrays row-aligned).

    ``local`` and ``offset`` are worked out from the parsed column when asked for, for this
    DateOut's rows only: a writer going a run of rows at a time never holds them for a whole
    column (they are two-thirds of what a fixed column costs to write)."""

    col: ParsedColumn
    ok: np.ndarray  # bool: write a date here
    blank: np.ndarray  # bool: write an empty cell here
    keep: np.ndarray  # bool: keep the raw cell (unresolved)
    zone: str  # the zone offset-carrying values are written in
    date_only: bool
    aware: bool  # some written value carried an offset (moved to the chosen zone)
    mixed: bool  # both offset-carrying and naive values are written
    rows: slice | None = None  # which rows of ``col`` these are (None: all)

    @property
    def unresolved(self) -> int:
        return int(self.keep.sum())

    @property
    def local(self) -> np.ndarray:
        """datetime64[us]: the value to write where ``ok`` (NaT elsewhere)."""
        return self.written()[0]

    @property
    def offset(self) -> np.ndarray:
        """int32 minutes east of UTC of ``local``, NAIVE where no offset was read."""
        return self.written()[1]

    def written(self) -> tuple[np.ndarray, np.ndarray]:
        """(``local``, ``offset``) worked out together: a writer needing both asks once."""
        ok = self.ok
        rows = self.rows if self.rows is not None else slice(None)
        value = self.col.value[rows]
        offset_min = self.col.offset_min[rows]
        local = np.where(ok, value, np.datetime64("NaT", "us")).astype("datetime64[us]")
        offset = np.full(len(ok), NAIVE, dtype=np.int32)
        # A calendar date is not an instant: moving it to another zone could change the day, so
        # date-only columns keep the day as written, offset or not.
        aware = ok & (offset_min != NAIVE) & (not self.date_only)
        if aware.any():
            utc = value[aware] - offset_min[aware].astype("timedelta64[m]")
            wall, off = to_zone(utc, self.zone)
            local[aware] = wall
            offset[aware] = off
        if self.date_only:
            local = local.astype("datetime64[D]").astype("datetime64[us]")
        return local, offset

    def take(self, rows: slice) -> DateOut:
        """The same column cut to a run of rows (writers work in chunks)."""
        start, stop, step = rows.indices(len(self.ok))
        base = self.rows.start or 0 if self.rows is not None else 0
        assert step == 1
        return DateOut(
            self.col,
            self.ok[rows],
            self.blank[rows],
            self.keep[rows],
            self.zone,
            self.date_only,
            self.aware,
            self.mixed,
            slice(base + start, base + stop),
        )


def prepare_dates(
    col: ParsedColumn,
    raw_kinds: np.ndarray,
    options: ExportOptions,
    raw_values: np.ndarray | pa.Array | None = None,
) -> DateOut:
    """Masks and wall-clock values of one fixed column, vectorised.

    With ``clear_blank_tokens`` off, only cells with no value at all are blank; placeholders
    and whitespace-only cells (given ``raw_values``) are kept as written.
    """
    state = col.state
    has_value = ~np.isnat(col.value)
    ok = ((state == CellState.PARSED) | (state == CellState.MANUAL)) & has_value
    blank = state == CellState.BLANK
    if not options.clear_blank_tokens:
        blank &= raw_kinds == 0  # CellKind.EMPTY: placeholders stay as written
        if raw_values is not None and blank.any():
            idx = np.flatnonzero(blank)
            spaces = np.fromiter(
                (isinstance(v, str) and v != "" for v in object_cells(raw_values, idx)),
                bool,
                len(idx),
            )
            blank[idx[spaces]] = False  # whitespace-only text stays as written too
    keep = ~ok & ~blank
    date_only = bool(col.date_only or not col.has_time[ok].any())
    aware_mask = ok & (col.offset_min != NAIVE) & (not date_only)  # see DateOut._values
    aware = bool(aware_mask.any())
    mixed = aware and bool((ok & ~aware_mask).any())
    return DateOut(col, ok, blank, keep, options.zone, date_only, aware, mixed)


def to_zone(utc: np.ndarray, zone: str) -> tuple[np.ndarray, np.ndarray]:
    """UTC instants as wall-clock datetime64[us] in ``zone`` and that zone's offset in minutes."""
    utc = utc.astype("datetime64[us]")
    if zone.upper() == "UTC":
        return utc, np.zeros(len(utc), dtype=np.int32)
    idx = pd.DatetimeIndex(utc).tz_localize("UTC").tz_convert(zone).tz_localize(None)
    wall = idx.as_unit("us").to_numpy()
    off = ((wall - utc) // np.timedelta64(1, "m")).astype(np.int32)
    return wall, off


def zone_note(options: ExportOptions, column: str | None = None) -> str:
    """The sentence saying which zone offset-carrying values were written in."""
    if column is None:
        return f"Times that carried a UTC offset are written in {options.zone}."
    return f'In column "{column}", times that carried a UTC offset are written in {options.zone}.'


def unique_name(name: str, taken: set[str]) -> str:
    """``name``, or ``name (2)``, ``name (3)``... whichever is not taken; the result is taken."""
    out, n = name, 2
    while out in taken:
        out, n = f"{name} ({n})", n + 1
    taken.add(out)
    return out


# --------------------------------------------------------------------------- the public call


def target_format(target: str | Path, options: ExportOptions | None = None) -> str:
    """ "xlsx", "csv" or "parquet" for a target path (ExportError for anything else)."""
    path = Path(target)
    if options is not None and options.format:
        fmt = options.format.lower()
        if fmt not in {"xlsx", "csv", "parquet"}:
            text = f'{path.name}: "{options.format}" is not a format datemend writes.'
            raise ExportError(text, path)
        return fmt
    suffix = path.suffix.lower()
    if suffix == ".ods":
        raise ExportError(f"{path.name}: ODS is read but not written; choose XLSX or CSV.", path)
    if suffix not in _FORMATS:
        raise ExportError(
            f"{path.name}: choose a name ending in .xlsx, .csv or .parquet to export.", path
        )
    return _FORMATS[suffix]


def export_table(
    clean: CleanTable,
    target: str | Path,
    *,
    options: ExportOptions | None = None,
    log_lines: Sequence[str] = (),
    overwrite: bool = False,
    progress: Progress | None = None,
) -> ExportResult:
    """Write ``clean`` to ``target`` (atomically; never the source path) and say what was done."""
    options = options or ExportOptions()
    progress = progress or Progress()
    target = Path(target)
    fmt = target_format(target, options)
    if fmt == "csv" and target.suffix.lower() == ".tsv" and options.delimiter == ",":
        options = dataclasses.replace(options, delimiter="\t")
    _check_options(options, target)
    _check_target(clean, target, overwrite)
    facts = clean.raw.facts
    source = Path(facts.path) if facts.path else None
    workbook_source = facts.format in {"xlsx", "xlsm"} and source is not None
    if fmt == "xlsx":
        if options.streaming is False and not workbook_source:
            raise ExportError(
                f"{target.name}: only an XLSX or XLSM source can be kept as a workbook.", target
            )
        writer = "streaming" if options.streaming or not workbook_source else "workbook"
        _check_sheet_size(clean, options, target)
    else:
        writer = fmt
    if writer == "workbook":
        assert source is not None
        _check_source_unchanged(source, facts.sha256)
        if target.suffix.lower() == ".xlsm" and facts.format != "xlsm":
            raise ExportError(f"{target.name}: an XLSM file can only come from an XLSM source.")

    from . import export_flat, export_stream, export_xlsx

    write: Callable[[Path], tuple[int, int, int, int, list[str]]]
    if writer == "workbook":
        keep_vba = facts.format == "xlsm" and target.suffix.lower() == ".xlsm"

        def write(tmp: Path) -> tuple[int, int, int, int, list[str]]:
            return export_xlsx.write_workbook(
                clean, tmp, options, log_lines, progress, keep_vba=keep_vba
            )
    elif writer == "streaming":

        def write(tmp: Path) -> tuple[int, int, int, int, list[str]]:
            return export_stream.write_stream(clean, tmp, options, log_lines, progress)
    elif writer == "csv":

        def write(tmp: Path) -> tuple[int, int, int, int, list[str]]:
            return export_flat.write_csv(clean, tmp, options, progress)
    else:

        def write(tmp: Path) -> tuple[int, int, int, int, list[str]]:
            return export_flat.write_parquet(clean, tmp, options, progress)

    swept = sweep_leftovers(target)
    rows, cols, dates, unresolved, notes = atomic_write(target, write)
    if swept:
        notes.append(
            f"Removed {swept} temporary file(s) left beside {target.name} by an export that "
            "was stopped before it finished."
        )
    if writer == "workbook" and facts.format == "xlsm" and not keep_vba:
        notes.append("Macros were not copied: an XLSX file cannot hold them (use .xlsm).")
    if writer != "workbook":
        notes += _rows_above_note(facts.notes)
    if writer == "streaming" and workbook_source:
        notes.append(
            "Only the table was written, on a new sheet: the source's other sheets, formulas "
            "and formats are not copied by the streaming writer."
        )
    return ExportResult(target, fmt, writer, rows, cols, dates, unresolved, tuple(notes))


def _rows_above_note(read_notes: Sequence[str]) -> list[str]:
    """A new file holds only the table: say so when the reader skipped rows above the header
    (readers_common words that note "N non-empty row(s) above the header row were skipped")."""
    for note in read_notes:
        m = re.match(r"(\d+) non-empty row\(s\) above the header row were skipped", note)
        if m:
            return [
                f"{m.group(1)} non-empty row(s) above the header row in the source are not "
                "written: a new file holds only the table."
            ]
    return []


def atomic_write(target: Path, write: Callable[[Path], _T]) -> _T:
    """Run ``write`` on a temporary file beside ``target``, then move it into place.

    On any failure (an exception, a full disk, a cancel) the temporary file is removed and the
    target is left absent or as it was.
    """
    try:
        fd, name = tempfile.mkstemp(dir=target.parent, prefix=f".{target.stem}.", suffix=".part")
    except OSError as err:
        raise ExportError(_os_sentence(err, target), target) from err
    os.close(fd)
    tmp = Path(name)
    try:
        result = write(tmp)
        os.chmod(tmp, 0o666 & ~_UMASK)
        os.replace(tmp, target)
    except OSError as err:
        _remove(tmp)
        raise ExportError(_os_sentence(err, target), target) from err
    except BaseException:
        _remove(tmp)
        raise
    return result


#: How old a temporary file of ours must be before a later export of the same target removes
#: it: an export still running elsewhere is never that old (common practice, no source).
LEFTOVER_AGE_S = 3600
_LEFTOVER = re.compile(r"\.(?P<stem>.+)\.[a-z0-9_]{8}\.part")


def sweep_leftovers(target: Path, *, now: float | None = None) -> int:
    """Remove temporary files ``atomic_write`` made for ``target`` and could not remove itself
    (the process was killed mid-export), when over an hour old; how many were removed."""
    import time

    now = time.time() if now is None else now
    gone = 0
    try:
        candidates = list(target.parent.glob(f".{glob_escape(target.stem)}.*.part"))
    except OSError:
        return 0
    for path in candidates:
        m = _LEFTOVER.fullmatch(path.name)
        if m is None or m.group("stem") != target.stem:
            continue
        try:
            if (
                path.is_file()
                and not path.is_symlink()
                and now - path.stat().st_mtime > LEFTOVER_AGE_S
            ):
                path.unlink()
                gone += 1
        except OSError:
            continue
    return gone


def _remove(tmp: Path) -> None:
    with contextlib.suppress(FileNotFoundError):
        tmp.unlink()


def _read_umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


_UMASK = _read_umask()


def _os_sentence(err: OSError, target: Path) -> str:
    if err.errno == errno.ENOSPC:
        return f"Could not write {target.name}: the disk is full."
    if isinstance(err, PermissionError):
        return f"Could not write {target.name}: permission denied in {target.parent}."
    return f"Could not write {target.name}: {err.strerror or err}."


def _check_options(options: ExportOptions, target: Path) -> None:
    if options.zone.upper() != "UTC":
        try:
            zoneinfo.ZoneInfo(options.zone)
        except (zoneinfo.ZoneInfoNotFoundError, ValueError) as err:
            raise ExportError(
                f'{target.name}: "{options.zone}" is not a known time zone.', target
            ) from err
    d = options.delimiter
    if len(d) != 1 or d in {'"', "\r", "\n"}:
        raise ExportError(f"{target.name}: {d!r} cannot be used as a CSV delimiter.", target)


def _check_target(clean: CleanTable, target: Path, overwrite: bool) -> None:
    """Refuse the source path, a folder, a missing folder, or an existing file without consent."""
    src = clean.raw.facts.path
    if src is not None:
        same = Path(src).resolve() == target.resolve()
        if not same and target.exists() and Path(src).exists():
            same = os.path.samefile(src, target)
        if same:
            raise ExportError(
                f"{target.name} is the file being read; export to a new name.", target
            )
    if target.is_dir():
        raise ExportError(f"{target.name} is a folder; choose a file name.", target)
    if not target.parent.is_dir():
        raise ExportError(f"Cannot export to {target.name}: {target.parent} is not a folder.")
    if target.exists() and not overwrite:
        raise ExportError(f"{target.name} already exists; confirm to overwrite it.", target)


#: Largest sheet spreadsheet programs open: 1,048,576 rows by 16,384 columns (value from memory
#: of their published limits; ISO/IEC 29500 itself sets none).
MAX_XLSX_ROWS = 1_048_576
MAX_XLSX_COLUMNS = 16_384


def _check_sheet_size(clean: CleanTable, options: ExportOptions, target: Path) -> None:
    raw = clean.raw
    last_row = int(raw.source_rows.max()) if raw.n_rows and raw.source_rows is not None else 0
    rows = max(raw.n_rows + 1, last_row)
    cols = len(raw.columns) + len(clean.derived) + (len(clean.parsed) if options.keep_raw else 0)
    if rows > MAX_XLSX_ROWS or cols > MAX_XLSX_COLUMNS:
        raise ExportError(
            f"{target.name}: {raw.n_rows:,} rows by {cols:,} columns do not fit on one XLSX "
            f"sheet ({MAX_XLSX_ROWS:,} rows by {MAX_XLSX_COLUMNS:,} columns); export CSV or "
            "Parquet instead.",
            target,
        )


def _check_source_unchanged(source: Path, sha256: str | None) -> None:
    if not source.is_file():
        raise ExportError(f"{source.name} is no longer there, so its workbook cannot be kept.")
    if sha256 is None:
        return
    digest = hashlib.sha256()
    with source.open("rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            digest.update(block)
    if digest.hexdigest() != sha256:
        raise ExportError(f"{source.name} changed since it was opened; open it again to export.")
