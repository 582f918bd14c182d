"""Make the bundled sample files: an invented rowing club's monthly membership export.

Run ``python sample_files/make_samples.py`` to regenerate (optionally ``--out DIR``). Output is
deterministic: every random choice comes from ``random.Random`` seeded with fixed strings, the
export dates are fixed, nothing depends on today. It writes, for October and November 2026:

- ``rowing_club_2026-10.xlsx`` / ``rowing_club_2026-11.xlsx`` (real date cells, serial numbers,
  text dates in several formats, blanks, placeholder words, impossible dates);
- ``rowing_club_2026-10.csv`` (the October export as semicolon-delimited Windows-1252 text);
- ``rowing_club_2026-10.ods`` (the October export as an OpenDocument spreadsheet);
- ``truth.json``: for every row and date column the intended date (or null) and why, plus the
  drift planted in November. It is ground truth by construction, known before datemend runs.

The club, its members, names and notes are invented; names are made of invented syllables.
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
import io
import json
import random
from pathlib import Path

HERE = Path(__file__).resolve().parent
SEED = "kestrel-reach-rowing-2026"
EXPORTS = {"2026-10": dt.date(2026, 10, 31), "2026-11": dt.date(2026, 11, 30)}
OCT_COLUMNS = [
    "Member no",
    "Name",
    "Born",
    "Joined",
    "Last outing",
    "Renewal due",
    "Safety course",
    "Notes",
]
# November's export moved "Safety course" to sit after "Name".
NOV_COLUMNS = ["Member no", "Name", "Safety course"] + [
    c for c in OCT_COLUMNS[2:] if c != "Safety course"
]
EXCEL_EPOCH = dt.date(1899, 12, 30)  # 1900 system from 1900-03-01 on (ISO/IEC 29500-1 §18.17.4)

SYLLABLES_FIRST = ["Ka", "Lo", "Mir", "Tev", "Quo", "Zu", "Bra", "Nel", "Fis", "Dro", "Vin", "Ael"]
SYLLABLES_FIRST += ["Zoë", "Ysa", "Orl", "Pim", "Sef", "Jub"]
SYLLABLES_MID = ["ra", "lin", "dok", "ve", "sa", "mo", "ti", "nu", "qua", "ré", "bel", "zo"]
SYLLABLES_LAST = ["wick", "dran", "mölt", "sker", "vash", "plen", "trox", "gule", "brisk", "nöd"]
NOTES = [
    "",
    "",
    "",
    "",
    "Prefers bow seat",
    "Coxing buddy of Zoë Quillanby",
    "Grip is Müller-ish, needs coaching",
    "On café duty rota",
    "Paid by transfer; receipt pending",
    "Moved to Thursday crew",
    "Junior – parent consent on file",
    "Back from injury, light outings only",
    "Sculls; no sweep yet",
    "Keys to boathouse (set 3)",
    "Brællik family membership",
]
PLACEHOLDERS_OCT = ["unknown", "n/a", "-"]
NEW_PLACEHOLDER = "tbc"  # first seen in November, in "Safety course"
NEW_FORMAT = "%b %-d, %Y"  # first seen in November, in "Renewal due" (e.g. "Nov 3, 2027")


def _rng(*parts: object) -> random.Random:
    return random.Random("|".join([SEED, *map(str, parts)]))


def _fmt(d: dt.date, pattern: str) -> str:
    """strftime with the non-padded day/month (%-d, %-m) spelled out portably."""
    return (
        pattern.replace("%-d", str(d.day))
        .replace("%-m", str(d.month))
        .replace("%d", f"{d.day:02d}")
        .replace("%m", f"{d.month:02d}")
        .replace("%Y", f"{d.year:04d}")
        .replace("%y", f"{d.year % 100:02d}")
        .replace("%b", d.strftime("%b"))
    )


def _swappable(d: dt.date) -> bool:
    """Written day-first, would the day/month swap give another real date? (day ≤ 12, ≠ month)"""
    return d.day <= 12 and d.day != d.month


def _rand_date(r: random.Random, lo: dt.date, hi: dt.date) -> dt.date:
    return lo + dt.timedelta(days=r.randint(0, (hi - lo).days))


# --- members -------------------------------------------------------------------------------


def _member(no: int, joined_after: dt.date | None = None) -> dict:
    r = _rng("member", no)
    first = r.choice(SYLLABLES_FIRST) + (r.choice(SYLLABLES_MID) if r.random() < 0.6 else "")
    last = r.choice(SYLLABLES_FIRST) + r.choice(SYLLABLES_MID) + r.choice(SYLLABLES_LAST)
    junior = r.random() < 0.2
    born = (
        _rand_date(r, dt.date(2008, 1, 1), dt.date(2013, 12, 31))
        if junior
        else _rand_date(r, dt.date(1950, 1, 1), dt.date(2002, 12, 31))
    )
    earliest = max(dt.date(1994, 1, 1), born.replace(year=born.year + 8, day=1))
    joined = (
        _rand_date(r, joined_after, joined_after + dt.timedelta(days=25))
        if joined_after
        else _rand_date(r, earliest, dt.date(2026, 9, 30))
    )
    has_course = r.random() < (0.3 if joined_after else 0.8)
    course_hi = min(joined + dt.timedelta(days=10), dt.date(2026, 11, 28)) if joined_after else None
    course = _rand_date(r, max(joined, dt.date(2015, 1, 1)), course_hi or dt.date(2026, 9, 30))
    return {
        "no": no,
        "name": f"{first} {last}",
        "born": born,
        "joined": joined,
        "course": course if has_course and course >= joined else None,
        "notes": r.choice(NOTES),
        "junior": junior,
    }


def _roster() -> dict[str, list[dict]]:
    r = _rng("roster")
    october = [_member(n) for n in sorted(r.sample(range(101, 1400), 300))]
    leaving = set(r.sample([m["no"] for m in october], 8))
    joiners = [_member(n, dt.date(2026, 11, 1)) for n in range(1401, 1411)]
    november = [m for m in october if m["no"] not in leaving] + joiners
    return {"2026-10": october, "2026-11": november}


# --- one cell at a time: (workbook value, text as exported, truth entry) -------------------


def _cell(kind: str, d: dt.date | None, text: str, category: str, fmt: str, swap=False):
    """kind: 'date' (a real date cell), 'int' (a number cell) or 'text'."""
    value: object = text
    if kind == "date":
        value = d
    elif kind == "int":
        value = int(text)
    truth = [None if d is None else d.isoformat(), category, text, fmt]
    if swap:
        truth.append("ambiguous")
    return value, text, truth


def _blank():
    return _cell("text", None, "", "blank", "")


def _placeholder(word: str):
    return _cell("text", None, word, "placeholder", "")


def _text(d: dt.date, fmt: str, category: str = "text"):
    day_first = "%d" in fmt and "%m" in fmt and fmt.index("%d") < fmt.index("%m")
    swap = day_first and _swappable(d)
    return _cell("text", d, _fmt(d, fmt), category, fmt, swap)


def _date_cell(d: dt.date):
    # exported to CSV as day-first text, as a European spreadsheet would write it
    return _cell("date", d, _fmt(d, "%d/%m/%Y"), "date_cell", "cell", _swappable(d))


def _serial(d: dt.date, as_text: bool):
    n = str((d - EXCEL_EPOCH).days)
    return _cell(
        "text" if as_text else "int", d, n, "serial_text" if as_text else "serial", "serial1900"
    )


def born_cell(m: dict, month: str):
    r = _rng("born", m["no"])
    x = r.random()
    d = m["born"]
    if x < 0.45:
        return _text(d, "%d/%m/%y", "two_digit_year")
    if x < 0.70:
        return _text(d, "%d/%m/%Y")
    if x < 0.90:
        return _date_cell(d)
    if x < 0.95:
        return _blank()
    return _placeholder("unknown")


def joined_cell(m: dict, month: str):
    r = _rng("joined", m["no"])
    x = r.random()
    d = m["joined"]
    if x < 0.40:
        return _text(d, "%Y-%m-%d")
    if x < 0.65:
        return _text(d, "%-d %b %Y")
    if x < 0.85:
        return _serial(d, as_text=False)
    if x < 0.95:
        return _serial(d, as_text=True)
    return _blank()


def outing_cell(m: dict, month: str):
    """Every written value has day ≤ 10 (October) or ≤ 11 (November), so both readings of
    dd/mm are real dates and the month-first reading is never after the export date either:
    the column cannot be decided by its own evidence."""
    r = _rng("outing", m["no"], month)
    x = r.random()
    export = EXPORTS[month]
    if x < 0.08:
        return _blank()
    if x < 0.12:
        return _placeholder("n/a")
    top = export.month  # 10 in October, 11 in November
    choices = [
        dt.date(2026, mon, day)
        for mon in (top - 1, top)
        for day in range(1, top + 1)
        if m["joined"] <= dt.date(2026, mon, day) <= export
    ]
    if not choices:
        return _blank()
    return _text(r.choice(choices), "%d/%m/%Y", "ambiguous_by_design")


def renewal_cell(m: dict, month: str):
    r = _rng("renewal", m["no"])
    export = EXPORTS[month]
    base = dt.date(2026, 11, 1) + dt.timedelta(days=r.randint(0, 363))
    # members whose renewal fell in November renewed for a year by the November export
    d = base if base > export else base.replace(year=base.year + 1)
    if m["no"] in _IMPOSSIBLE_RENEWAL:
        return _cell("text", None, "31/04/2026", "impossible", "%d/%m/%Y")
    x = r.random()
    if month == "2026-11" and _rng("renewal-new", m["no"]).random() < 0.12:
        return _text(d, NEW_FORMAT, "text_new_format")
    if x < 0.50:
        return _date_cell(d)
    if x < 0.85:
        return _text(d, "%Y-%m-%d")
    if x < 0.91:
        return _text(d, "%d.%m.%Y")
    if x < 0.96:
        return _placeholder("-")
    return _blank()


def course_cell(m: dict, month: str):
    r = _rng("course", m["no"])
    if m["no"] in _IMPOSSIBLE_COURSE:
        return _cell("text", None, "29/02/2025", "impossible", "%d/%m/%Y")
    d = m["course"]
    if d is None:
        if month == "2026-11" and m["joined"] >= dt.date(2026, 11, 1):
            return _placeholder(NEW_PLACEHOLDER)
        return _placeholder("n/a") if r.random() < 0.3 else _blank()
    if r.random() < 0.55:
        return _text(d, "%d-%b-%Y")
    return _text(d, "%d/%m/%Y")


_IMPOSSIBLE_RENEWAL: set[int] = set()
_IMPOSSIBLE_COURSE: set[int] = set()


def _plant_impossible(october: list[dict]) -> None:
    r = _rng("impossible")
    picks = r.sample([m["no"] for m in october], 5)
    _IMPOSSIBLE_RENEWAL.update(picks[:2])
    _IMPOSSIBLE_COURSE.update(picks[2:])


DATE_COLUMNS = ["Born", "Joined", "Last outing", "Renewal due", "Safety course"]
CELLS = {
    "Born": born_cell,
    "Joined": joined_cell,
    "Last outing": outing_cell,
    "Renewal due": renewal_cell,
    "Safety course": course_cell,
}


def build_month(members: list[dict], month: str) -> tuple[list[str], list[list], list[list], dict]:
    """(columns, workbook rows, text rows, truth) for one month."""
    columns = OCT_COLUMNS if month == "2026-10" else NOV_COLUMNS
    book_rows, text_rows, truth_rows = [], [], []
    for i, m in enumerate(members):
        values = {"Member no": f"{m['no']:04d}", "Name": m["name"], "Notes": m["notes"]}
        texts = dict(values)
        cells = {}
        for col, fn in CELLS.items():
            values[col], texts[col], cells[col] = fn(m, month)
        book_rows.append([values[c] if values[c] != "" else None for c in columns])
        text_rows.append([texts[c] for c in columns])
        truth_rows.append(
            {"member_no": values["Member no"], "row": i + 2, "cells": [cells[c] for c in CELLS]}
        )
    return columns, book_rows, text_rows, {"columns": columns, "rows": truth_rows}


# --- writers ---------------------------------------------------------------------------------


def write_xlsx(path: Path, columns: list[str], rows: list[list]) -> None:
    import openpyxl

    wb = openpyxl.Workbook()
    fixed = dt.datetime(2026, 12, 1, 0, 0, 0)
    wb.properties.creator = "Kestrel Reach Rowing Club membership desk"
    wb.properties.created = fixed
    wb.properties.modified = fixed
    ws = wb.active
    ws.title = "Members"
    ws.append(columns)
    for row in rows:
        ws.append(row)
    for row in ws.iter_rows(min_row=2):
        for cell in row:
            if isinstance(cell.value, dt.date):
                cell.number_format = "dd/mm/yyyy"
    for letter, width in zip("ABCDEFGH", (10, 24, 11, 13, 12, 12, 13, 36)):
        ws.column_dimensions[letter].width = width
    wb.save(path)


def write_csv(path: Path, columns: list[str], rows: list[list]) -> None:
    buf = io.StringIO(newline="")
    w = csv.writer(buf, delimiter=";", lineterminator="\r\n")
    w.writerow(columns)
    w.writerows(rows)
    path.write_bytes(buf.getvalue().encode("cp1252"))


def write_ods(path: Path, columns: list[str], rows: list[list]) -> None:
    import pandas as pd

    df = pd.DataFrame(rows, columns=columns, dtype=object)
    with pd.ExcelWriter(path, engine="odf") as w:
        df.to_excel(w, sheet_name="Members", index=False)


def drift_list(roster: dict[str, list[dict]]) -> list[dict]:
    octo = {m["no"] for m in roster["2026-10"]}
    nov = {m["no"] for m in roster["2026-11"]}
    return [
        {
            "kind": "column_moved",
            "column": "Safety course",
            "from_position": OCT_COLUMNS.index("Safety course") + 1,
            "to_position": NOV_COLUMNS.index("Safety course") + 1,
        },
        {
            "kind": "new_format",
            "column": "Renewal due",
            "format": NEW_FORMAT,
            "example": _fmt(dt.date(2027, 11, 3), NEW_FORMAT),
        },
        {"kind": "new_placeholder", "column": "Safety course", "value": NEW_PLACEHOLDER},
        {"kind": "members_left", "member_nos": [f"{n:04d}" for n in sorted(octo - nov)]},
        {"kind": "members_joined", "member_nos": [f"{n:04d}" for n in sorted(nov - octo)]},
    ]


def make_all(out: Path) -> dict[str, Path]:
    """Write every sample into ``out``; returns the paths by short name."""
    _IMPOSSIBLE_RENEWAL.clear()
    _IMPOSSIBLE_COURSE.clear()
    roster = _roster()
    _plant_impossible(roster["2026-10"])
    out.mkdir(parents=True, exist_ok=True)
    truth: dict = {
        "about": (
            "Ground truth by construction for the invented rowing-club samples. Each row's "
            "'cells' follow 'date_columns' (by name, whatever the file's column order); each "
            "cell is [intended ISO date or null, category, text as exported (the CSV text), "
            "format used ('cell' = a real date cell in the workbooks, 'serial1900' = a 1900-"
            "system serial number), and 'ambiguous' when reading day and month the other way "
            "round gives another real date]. 'row' is the 1-based sheet row (header is row 1)."
        ),
        "export_dates": {k: v.isoformat() for k, v in EXPORTS.items()},
        "date_columns": DATE_COLUMNS,
        "months": {},
    }
    paths = {}
    for month, members in roster.items():
        columns, book_rows, text_rows, month_truth = build_month(members, month)
        truth["months"][month] = month_truth
        p = out / f"rowing_club_{month}.xlsx"
        write_xlsx(p, columns, book_rows)
        paths[f"{month}.xlsx"] = p
        if month == "2026-10":
            p = out / f"rowing_club_{month}.csv"
            write_csv(p, columns, text_rows)
            paths[f"{month}.csv"] = p
            p = out / f"rowing_club_{month}.ods"
            write_ods(p, columns, book_rows)
            paths[f"{month}.ods"] = p
    truth["november_drift"] = drift_list(roster)
    p = out / "truth.json"
    months = truth.pop("months")
    drift = truth.pop("november_drift")
    # one row per line: small, and a diff shows which row changed
    parts = [json.dumps(truth, ensure_ascii=False, indent=1)[:-2] + ',\n "months": {']
    for k, (month, mt) in enumerate(months.items()):
        rows = ",\n".join(
            "   " + json.dumps(r, ensure_ascii=False, separators=(",", ":")) for r in mt["rows"]
        )
        sep = "," if k < len(months) - 1 else ""
        head = f'\n  "{month}": {{"columns": {json.dumps(mt["columns"])}, "rows": [\n'
        parts.append(f"{head}{rows}\n  ]}}{sep}")
    parts.append('\n },\n "november_drift": ' + json.dumps(drift, ensure_ascii=False) + "\n}\n")
    p.write_text("".join(parts), encoding="utf-8")
    paths["truth"] = p
    return paths


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", type=Path, default=HERE, help="folder to write into")
    args = ap.parse_args()
    for name, p in make_all(args.out).items():
        print(f"{name:14} {p.stat().st_size:>8,} bytes  {p}")


if __name__ == "__main__":
    main()
