"""Replay a fix log over many files, or a Parquet dataset, partition by partition on Dask.

Reach for it when one month is many files, or a file too big for one machine: every step is
row-local, so each partition is replayed on its own with the very same core calls as a
single-machine replay (``RawTable.from_dataframe`` → ``fixlog.replay`` → ``export_table``) and
gives the same values. Each partition writes its own output file; the per-partition drift
reports are merged into one.

Dask is an optional extra (``pip install 'datemend[dask]'``); nothing here is imported by
``import datemend``. With ``scheduler`` an address (``tcp://host:8786``), an existing cluster is
used through ``dask.distributed`` (the Dask extra installs it; the workers need datemend
installed and ``out_dir`` on storage they share).
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import glob
import json
import shutil
import time
import uuid
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from .core.export import ExportOptions
from .core.progress import Progress
from .core.steps import ApplyContext
from .core.table import DatemendError, RawColumn, RawTable, SourceFacts

__all__ = ["LOCAL_SCHEDULERS", "DaskReplayResult", "replay_dask"]

#: Names of Dask's local schedulers accepted by ``scheduler=``; anything else is an address.
LOCAL_SCHEDULERS = ("synchronous", "single-threaded", "sync", "threads", "threading", "processes")

#: Seconds to wait for a scheduler address to answer before giving up with one sentence.
CONNECT_TIMEOUT_S = 10

_OUT_FORMATS = {"csv": ".csv", "parquet": ".parquet", "xlsx": ".xlsx"}
_META = pd.DataFrame(
    {
        "partition": pd.Series([], dtype="int64"),
        "source": pd.Series([], dtype=object),
        "output": pd.Series([], dtype=object),
        "rows": pd.Series([], dtype="int64"),
        "report": pd.Series([], dtype=object),
    }
)


@dataclass(frozen=True)
class DaskReplayResult:
    """What a distributed replay did.

    ``report`` is the drift report merged over every partition; ``outputs`` the files written
    into ``out_dir`` (empty when ``strict`` found drift and nothing was written);
    ``partitions`` one ``(source, output file name, rows)`` per partition, in order.
    """

    report: Any
    outputs: tuple[Path, ...]
    partitions: tuple[tuple[str, str, int], ...]
    rows: int
    written: bool


# ------------------------------------------------------------------------------ entry point


def replay_dask(
    log: Any,
    paths: str | Path | Sequence[str | Path],
    *,
    out_dir: str | Path,
    out_format: str | None = None,
    sep: str | None = None,
    encoding: str | None = None,
    today: _dt.date | None = None,
    key_column: str | None = None,
    options: ExportOptions | None = None,
    overwrite: bool = False,
    strict: bool = False,
    scheduler: str | None = None,
    progress: Progress | None = None,
) -> DaskReplayResult:
    """Replay ``log`` (a FixLog or a path to one) on CSV files or a Parquet dataset.

    ``paths``: a glob (``"data/*.csv"``), a list of files, or a Parquet dataset folder. CSV
    files are read with every value as text, each file one partition (so row numbers and
    hand-set cells keyed by row mean the same as in a single-file replay); ``sep`` and
    ``encoding`` default to what the first file shows. One output file per partition is
    written into ``out_dir`` (``out_format`` "csv", "parquet" or "xlsx"; default: the input's
    kind; ``options`` as for ``export_table``; Parquet output always keeps the raw text beside
    each fixed column, so every part has the same schema), all at the end, so a failed run
    leaves nothing half-written. With ``strict``, any drift or unresolved cell means nothing
    is written. ``scheduler``: None for Dask's local default, a local scheduler name (see
    ``LOCAL_SCHEDULERS``), or a cluster address.
    """
    dd = _dask_dataframe()
    fix_log = _load_log(log)
    kind, inputs = _resolve_inputs(paths)
    fmt = out_format or kind
    if fmt not in _OUT_FORMATS:
        raise DatemendError(f'output format must be one of {sorted(_OUT_FORMATS)}, not "{fmt}".')
    if fmt == "parquet" and not (options and options.keep_raw):
        # Parquet keeps the raw text of a column with unresolved cells; keeping it for every
        # fixed column gives every part of the output dataset the same schema.
        options = dataclasses.replace(options or ExportOptions(), keep_raw=True)
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)

    if kind == "csv":
        sep_, enc = _csv_dialect(inputs[0], sep, encoding)
        ddf = dd.read_csv(
            [str(p) for p in inputs],
            dtype=str,
            keep_default_na=False,
            na_filter=False,
            sep=sep_,
            encoding=enc,
            blocksize=None,
        )
        names = _output_names(inputs, _OUT_FORMATS[fmt])
        sources = [str(p) for p in inputs]
        offsets = [0] * len(inputs)  # each file is its own table: rows count from its header
    else:
        target = [str(p) for p in inputs] if len(inputs) > 1 else str(inputs[0])
        ddf = dd.read_parquet(target, dtype_backend="pyarrow")
        names = [f"part-{i:05d}{_OUT_FORMATS[fmt]}" for i in range(ddf.npartitions)]
        sources = [str(inputs[0])] * ddf.npartitions
        offsets = _parquet_offsets(ddf, inputs, scheduler)
    _refuse_existing([out / n for n in names], overwrite)

    staging = out / f".datemend-partial-{uuid.uuid4().hex[:12]}"
    staging.mkdir()
    try:
        job = ddf.map_partitions(
            _replay_partition,
            fix_log.to_dict(),
            str(staging),
            fmt,
            kind,
            names,
            sources,
            offsets,
            None if today is None else today.isoformat(),
            key_column,
            options,
            meta=_META,
            align_dataframes=False,
        )
        summary = _compute(job, scheduler, progress).sort_values("partition")
        reports = [_report_from_json(s) for s in summary["report"]]
        report = _merge_reports(fix_log, reports, _describe_inputs(paths, inputs, kind))
        parts = tuple(
            (str(s), str(o), int(r))
            for s, o, r in zip(summary["source"], summary["output"], summary["rows"])
        )
        targets = [out / o for _, o, _ in parts]
        if strict and _has_problems(report):
            return DaskReplayResult(report, (), parts, sum(p[2] for p in parts), False)
        _refuse_existing(targets, overwrite)
        for target in targets:
            (staging / target.name).replace(target)
        return DaskReplayResult(report, tuple(targets), parts, sum(p[2] for p in parts), True)
    finally:
        shutil.rmtree(staging, ignore_errors=True)


# ------------------------------------------------------------------------------ per partition


def _replay_partition(
    part: pd.DataFrame,
    log_dict: dict[str, Any],
    staging: str,
    fmt: str,
    kind: str,
    names: list[str],
    sources: list[str],
    offsets: list[int],
    today: str | None,
    key_column: str | None,
    options: Any,
    partition_info: dict[str, Any] | None = None,
) -> pd.DataFrame:
    """Replay one partition with the single-machine core calls; write its output file and
    return one summary row (its drift report as JSON)."""
    from .core import fixlog

    number = int(partition_info["number"]) if partition_info else 0
    raw = _raw_partition(part, kind, sources[number], offsets[number])
    ctx = ApplyContext(key_column=key_column)
    if today is not None:
        ctx = ApplyContext(today=_dt.date.fromisoformat(today), key_column=key_column)
    log = fixlog.FixLog.from_dict(log_dict)
    report, clean = _replay_one(fixlog, log, raw, ctx)
    _write(clean, Path(staging) / names[number], options)
    return pd.DataFrame(
        {
            "partition": [number],
            "source": [sources[number]],
            "output": [names[number]],
            "rows": [raw.n_rows],
            "report": [json.dumps(_report_to_dict(report))],
        }
    ).astype({"source": object, "output": object, "report": object})


def _raw_partition(part: pd.DataFrame, kind: str, source: str, offset: int) -> RawTable:
    """One partition as the RawTable the single-machine reader would give for those rows."""
    part = part.reset_index(drop=True)
    if kind == "csv":
        facts = SourceFacts(path=source, format="csv")
        return RawTable.from_dataframe(part, facts, text_only=True)
    import pyarrow as pa

    from .core.readers_parquet import _column  # the readers' own type -> kind mapping

    arrow = pa.Table.from_pandas(part, preserve_index=False)
    cols = []
    for name, arr in zip(part.columns, arrow.columns):
        values, kinds = _column(arr)
        cols.append(RawColumn(str(name), values, kinds))
    facts = SourceFacts(path=source, format="parquet", header_row=0)
    rows = np.arange(offset + 1, offset + 1 + len(part), dtype=np.int64)
    return RawTable(tuple(cols), facts, rows)


def _parquet_offsets(ddf: Any, inputs: list[Path], scheduler: str | None) -> list[int]:
    """Row number before each partition, so rows are numbered across the whole dataset as a
    single-machine read numbers them (hand-set cells keyed by row number rely on it)."""
    lengths = ddf.map_partitions(len, meta=("rows", "int64"))
    kwargs = (
        {} if scheduler is None or scheduler not in LOCAL_SCHEDULERS else {"scheduler": scheduler}
    )
    counts = [int(n) for n in lengths.compute(**kwargs)]
    return [int(x) for x in np.concatenate([[0], np.cumsum(counts)[:-1]])] if counts else []


# ------------------------------------------------------------------------------ core adapters


def _load_log(log: Any) -> Any:
    from .core import fixlog

    if isinstance(log, fixlog.FixLog):
        return log
    return fixlog.FixLog.load(log)


def _replay_one(fixlog: Any, log: Any, raw: RawTable, ctx: ApplyContext) -> tuple[Any, Any]:
    """(drift report, clean table) of one partition: the single-machine ``replay`` call."""
    report = fixlog.replay(log, raw, ctx)
    return report, report.table


def _write(clean: Any, path: Path, options: Any) -> None:
    from .core.export import export_table

    export_table(clean, path, options=options)


def _report_to_dict(report: Any) -> dict[str, Any]:
    return report.to_dict()


def _report_from_json(text: str) -> Any:
    from .core.replay import ReplayReport

    return ReplayReport.from_dict(json.loads(text))


def _merge_reports(log: Any, reports: list[Any], described: str) -> Any:
    """One drift report for the whole dataset (counts add up; a hand-set cell is lost only if
    no partition placed it), named after what was replayed."""
    from .core.replay import ReplayReport

    merged = ReplayReport.merge(reports)
    return dataclasses.replace(merged, file=described, log=log)


def _has_problems(report: Any) -> bool:
    return bool(report.has_drift or report.unresolved)


def _describe_inputs(paths: Any, inputs: list[Path], kind: str) -> str:
    if kind == "parquet" and len(inputs) == 1 and inputs[0].is_dir():
        return f"Parquet dataset {inputs[0].name}"
    if len(inputs) == 1:
        return inputs[0].name
    given = paths if isinstance(paths, str | Path) else None
    tail = f" ({Path(given).name})" if given is not None else ""
    return f"{len(inputs)} files{tail}"


# ------------------------------------------------------------------------------ inputs


def _dask_dataframe() -> Any:
    try:
        import dask.dataframe as dd
    except ImportError as err:
        raise DatemendError(
            "replay on Dask needs the optional Dask extra: pip install 'datemend[dask]'."
        ) from err
    return dd


def _resolve_inputs(paths: str | Path | Sequence[str | Path]) -> tuple[str, list[Path]]:
    """("csv" | "parquet", files or one dataset folder) from a glob, a list or a folder."""
    given = [paths] if isinstance(paths, str | Path) else list(paths)
    if not given:
        raise DatemendError("no input files were given.")
    files: list[Path] = []
    for item in given:
        p = Path(item)
        if p.is_dir():
            files.append(p)
            continue
        hits = sorted(glob.glob(str(item))) if glob.has_magic(str(item)) else [str(item)]
        if not hits:
            raise DatemendError(f'no file matches "{item}".')
        for h in hits:
            if not Path(h).is_file() and not Path(h).is_dir():
                raise DatemendError(f'input "{h}" does not exist.')
            files.append(Path(h))
    kinds = {_kind_of(p) for p in files}
    if len(kinds) > 1:
        raise DatemendError(
            "the inputs mix CSV and Parquet; replay one kind at a time "
            f'(first inputs: "{files[0]}", "{files[-1]}").'
        )
    kind = kinds.pop()
    if kind == "csv" and any(p.is_dir() for p in files):
        raise DatemendError(
            f'"{next(p for p in files if p.is_dir())}" is a folder of CSV files; '
            "give a glob such as 'data/*.csv'."
        )
    return kind, files


def _kind_of(p: Path) -> str:
    if p.is_dir():
        inside = {q.suffix.lower() for q in p.rglob("*") if q.is_file()}
        if ".parquet" in inside or ".parq" in inside:
            return "parquet"
        if ".csv" in inside or ".tsv" in inside or ".txt" in inside:
            return "csv"
        raise DatemendError(f'folder "{p}" holds no Parquet or CSV files.')
    suffix = p.suffix.lower()
    if suffix in (".parquet", ".parq"):
        return "parquet"
    if suffix in (".csv", ".tsv", ".txt"):
        return "csv"
    raise DatemendError(
        f'"{p.name}" is neither CSV nor Parquet; replay on Dask reads CSV files or a Parquet '
        "dataset (use `datemend replay` without --engine dask for workbooks)."
    )


def _csv_dialect(first: Path, sep: str | None, encoding: str | None) -> tuple[str, str]:
    """Delimiter and encoding: as given, else as the readers detect them in the first file."""
    if sep is not None and encoding is not None:
        return sep, encoding
    from .core.readers_text import detect_text_format

    fmt = detect_text_format(str(first))
    enc = encoding or fmt.encoding or "utf-8"
    if enc.replace("_", "-").lower() in ("utf-8", "utf8"):
        enc = "utf-8-sig"  # drops a byte-order mark if there is one, as the readers do
    elif fmt.bom and enc.lower().startswith("utf-16"):
        enc = "utf-16"  # the utf-16 codec reads the byte-order mark and drops it
    return sep or fmt.delimiter or ",", enc


def _output_names(files: list[Path], ext: str) -> list[str]:
    """Output file name for each input file (one partition each, in order): its stem, numbered
    only if stems collide."""
    stems = [p.stem for p in files]
    unique = len(set(stems)) == len(stems)
    return [f"{p.stem}{ext}" if unique else f"{i:05d}-{p.stem}{ext}" for i, p in enumerate(files)]


def _refuse_existing(targets: list[Path], overwrite: bool) -> None:
    if overwrite:
        return
    for t in targets:
        if t.exists():
            raise DatemendError(
                f'"{t}" already exists; pass overwrite (--overwrite) to replace it.'
            )


# ------------------------------------------------------------------------------ scheduling


def _compute(job: Any, scheduler: str | None, progress: Progress | None) -> pd.DataFrame:
    if scheduler is None or scheduler in LOCAL_SCHEDULERS:
        return _compute_local(job, scheduler, progress)
    return _compute_cluster(job, scheduler, progress)


def _compute_local(job: Any, scheduler: str | None, progress: Progress | None) -> pd.DataFrame:
    from dask.callbacks import Callback

    kwargs = {} if scheduler is None else {"scheduler": scheduler}
    if progress is None:
        return job.compute(**kwargs)

    class _Report(Callback):
        def _start_state(self, dsk: Any, state: Any) -> None:
            self.total = max(1, len(dsk))
            self.done = 0
            progress.report(0, self.total, "replaying partitions")

        def _posttask(self, key: Any, result: Any, dsk: Any, state: Any, worker: Any) -> None:
            self.done += 1
            progress.report(min(self.done, self.total), self.total, "replaying partitions")

    with _Report():
        return job.compute(**kwargs)


def _compute_cluster(job: Any, address: str, progress: Progress | None) -> pd.DataFrame:
    try:
        from distributed import Client
    except ImportError as err:
        raise DatemendError(
            f'a scheduler address ("{address}") needs dask.distributed: '
            "pip install 'datemend[dask]' (or use the local scheduler)."
        ) from err
    try:
        client = Client(address, timeout=CONNECT_TIMEOUT_S)
    except OSError as err:  # refused, unknown host, or no answer in time
        raise DatemendError(
            f'could not reach the Dask scheduler at "{address}" within {CONNECT_TIMEOUT_S} s; '
            "check the address and that the scheduler is running."
        ) from err
    except (ValueError, TypeError) as err:  # "bogus", "tcp://host:port-not-a-number"
        raise DatemendError(
            f'"{address}" is neither a local scheduler ({", ".join(LOCAL_SCHEDULERS)}) '
            "nor a scheduler address like tcp://host:8786."
        ) from err
    try:
        future = client.compute(job)
        while not future.done():
            if progress is not None:
                try:
                    progress.report(0, 1, "replaying partitions on the cluster")
                except BaseException:
                    future.cancel()
                    raise
            time.sleep(0.2)
        result = future.result()
        if progress is not None:
            progress.report(1, 1, "replayed")
        return result
    finally:
        client.close()
