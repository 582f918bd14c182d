"""What a dialog needs to build any step generically: each kind's parameter list (from its
dataclass fields and their metadata) and a preview of the first rows of what it adds."""

from __future__ import annotations

import dataclasses
import typing
from typing import Any, Literal

import numpy as np
import pandas as pd

from .clean import CleanTable
from .spans import DeriveError, date_series
from .steps import ApplyContext, Step

__all__ = ["parameters", "preview"]


def parameters(cls: type[Step]) -> list[dict[str, Any]]:
    """The parameters of a step kind for a generic dialog: name, label, type, default, required,
    choices (for a fixed set) with a label for each in ``choice_labels`` where one is set, and
    help. Types: "column", "column-or-none", "output", "as-of" (YYYY-MM-DD or "replay-day"),
    "date-or-none", "text", "int", "bool", "choice", "locale", "country", "subdivision",
    "zone", "zone-or-none", "dates" (a list of YYYY-MM-DD)."""
    hints = typing.get_type_hints(cls)
    out = []
    for f in dataclasses.fields(cls):  # type: ignore[arg-type]
        meta = f.metadata or {}
        hint = hints[f.name]
        choices: tuple[Any, ...] = ()
        if typing.get_origin(hint) is Literal:
            choices = typing.get_args(hint)
        kind = meta.get("param") or (
            "choice" if choices else {bool: "bool", int: "int"}.get(hint, "text")
        )
        required = f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING
        out.append(
            {
                "name": f.name,
                "label": meta.get("label", f.name.replace("_", " ")),
                "type": kind,
                "default": None if required else f.default,
                "required": required,
                "choices": list(choices),
                "choice_labels": dict(meta.get("choices") or {}),
                "help": meta.get("help", ""),
                "schema": meta.get("schema", {}),
            }
        )
    return out


def _head(table: CleanTable, n: int) -> CleanTable:
    rows = np.arange(min(n, table.raw.n_rows))
    parsed = {
        k: pc.evolve(
            **{
                a: getattr(pc, a)[rows]
                for a in ("value", "offset_min", "has_time", "state", "pattern", "reason")
            }
        )
        for k, pc in table.parsed.items()
    }
    derived = {
        k: dataclasses.replace(dc, values=dc.values.iloc[rows].reset_index(drop=True))
        for k, dc in table.derived.items()
    }
    hits = {k: v[rows] for k, v in table.rule_hits.items()}
    return table.evolve(raw=table.raw.take(rows), parsed=parsed, derived=derived, rule_hits=hits)


def preview(
    step: Step, clean: CleanTable, n: int = 10, ctx: ApplyContext | None = None
) -> pd.DataFrame:
    """The first ``n`` rows of the columns ``step`` reads and of what it adds (a derived column,
    or a rule's True/False column), for a dialog; warnings go in ``DataFrame.attrs["warnings"]``."""
    small = _head(clean, n)
    after = step.apply(small, ctx or ApplyContext())
    cols: dict[str, pd.Series] = {}
    for name in step.columns_read():
        try:
            cols[name] = date_series(small, name)
        except DeriveError:
            continue
    for key, pc in after.parsed.items():
        if small.parsed.get(key) is not pc and pc.output_name in cols:
            cols[f"{pc.output_name} (after)"] = date_series(after, pc.output_name)
    for name, dc in after.derived.items():
        if small.derived.get(name) is not dc:
            cols[name] = dc.values
    for label, mask in after.rule_hits.items():
        if small.rule_hits.get(label) is not mask:
            cols[label] = pd.Series(mask, dtype="boolean")
    out = pd.DataFrame(cols)
    out.attrs["warnings"] = [w for w in after.warnings if w not in small.warnings]
    return out
