"""The command line end to end on the sample files, checked against their ground truth.

sample_files/truth.json is written by the sample generator from the dates it meant to write,
before any datemend code runs: it is ground truth by construction, not output of the engine.
"""

import csv
import json
import pathlib
import re

import pytest

from datemend.cli import EXIT_OK, EXIT_STRICT, EXIT_UNRESOLVED, main

ROOT = pathlib.Path(__file__).resolve().parents[2]
SAMPLES = ROOT / "sample_files"
TRUTH = json.loads((SAMPLES / "truth.json").read_text(encoding="utf-8"))
ISO_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


def _read_csv(path):
    with open(path, encoding="utf-8-sig", newline="") as fh:
        return list(csv.DictReader(fh))


def _check_against_truth(rows, month, *, day_first):
    """Every date written equals the intended date; every decidable cell was written."""
    truth_rows = TRUTH["months"][month]["rows"]
    by_key = {r["member_no"]: r for r in truth_rows}
    columns = TRUTH["date_columns"]
    wrong, missed, checked = [], [], 0
    for out in rows:
        t = by_key[out["Member no"]]
        for col, cell in zip(columns, t["cells"]):
            intended, category = cell[0], cell[1]
            got = out[col]
            if ISO_DATE.match(got):
                checked += 1
                if got != intended:
                    wrong.append((out["Member no"], col, cell[2], got, intended))
            elif intended is not None and category not in ("impossible",):
                undecided = category == "ambiguous_by_design" and not day_first
                if not undecided:
                    missed.append((out["Member no"], col, cell[2], got, intended))
    return wrong, missed, checked


@pytest.mark.parametrize("source", ["rowing_club_2026-10.xlsx", "rowing_club_2026-10.csv"])
def test_auto_never_writes_a_wrong_date(tmp_path, source, capsys):
    out = tmp_path / "oct.csv"
    code = main(["auto", str(SAMPLES / source), "-o", str(out)])
    assert code == EXIT_UNRESOLVED  # the "Last outing" column cannot be decided without a choice
    assert "could not be decided" in capsys.readouterr().out
    rows = _read_csv(out)
    assert len(rows) == len(TRUTH["months"]["2026-10"]["rows"])
    wrong, missed, checked = _check_against_truth(rows, "2026-10", day_first=False)
    assert wrong == []
    assert missed == []
    assert checked > 900


def test_auto_with_a_stated_preference_reads_the_undecidable_column(tmp_path):
    out = tmp_path / "oct.csv"
    log = tmp_path / "oct.json"
    code = main(
        ["auto", str(SAMPLES / "rowing_club_2026-10.xlsx"), "-o", str(out), "--day-first"]
        + ["--log-out", str(log)]
    )
    assert code == EXIT_UNRESOLVED  # the planted impossible dates stay unresolved
    wrong, missed, checked = _check_against_truth(_read_csv(out), "2026-10", day_first=True)
    assert wrong == [] and missed == []
    assert checked > 1100
    saved = json.loads(log.read_text(encoding="utf-8"))
    assert saved["format"] == "datemend-fixlog"


def test_replay_on_the_next_month_reports_drift_and_strict_writes_nothing(tmp_path, capsys):
    log = tmp_path / "oct.json"
    main(
        ["auto", str(SAMPLES / "rowing_club_2026-10.xlsx"), "-o", str(tmp_path / "o.csv")]
        + ["--day-first", "--log-out", str(log)]
    )
    capsys.readouterr()
    out = tmp_path / "nov.csv"
    code = main(["replay", str(log), str(SAMPLES / "rowing_club_2026-11.xlsx"), "-o", str(out)])
    text = capsys.readouterr().out
    assert code in (EXIT_OK, EXIT_UNRESOLVED)
    assert "tbc" in text  # the new placeholder word planted in November
    assert "Safety course" in text  # the column that moved / gained a format
    wrong, _, checked = _check_against_truth(_read_csv(out), "2026-11", day_first=True)
    assert wrong == [] and checked > 900

    strict_out = tmp_path / "strict.csv"
    code = main(
        ["replay", str(log), str(SAMPLES / "rowing_club_2026-11.xlsx")]
        + ["-o", str(strict_out), "--strict"]
    )
    assert code == EXIT_STRICT
    assert not strict_out.exists()


def test_replay_with_a_broken_log_names_the_file(tmp_path, capsys):
    bad = tmp_path / "bad.json"
    bad.write_text('{"format": "datemend-fixlog", "version": 1, "steps": [', encoding="utf-8")
    code = main(["replay", str(bad), str(SAMPLES / "rowing_club_2026-11.xlsx"), "-o", "x.csv"])
    err = capsys.readouterr().err
    assert code == 3
    assert "bad.json" in err and "Traceback" not in err


def test_replay_prints_rule_counts_and_writes_ages(tmp_path, capsys):
    """A log with an age column and a rule, replayed from the command line on November.

    Expected values are worked out here from truth.json's intended dates with plain Python:
    age in completed years = year difference minus one if the birthday has not come yet
    (common practice, no source; nobody in the sample is born on 29 February)."""
    import datetime as dt

    from datemend.core import checks, derive
    from datemend.core.fixlog import auto_fix
    from datemend.core.readers import read_table

    raw = read_table(SAMPLES / "rowing_club_2026-10.xlsx")
    log, _ = auto_fix(raw, prefer_day_order="dmy")
    log = log.add(derive.Age(birth="Born", as_of="2026-11-30", output="Age"))
    log = log.add(checks.WithinRange(column="Born", earliest="1960-01-01", label="born 1960 on"))
    path = tmp_path / "oct.json"
    log.save(path)

    out = tmp_path / "nov.csv"
    main(["replay", str(path), str(SAMPLES / "rowing_club_2026-11.xlsx"), "-o", str(out)])
    text = capsys.readouterr().out

    truth = TRUTH["months"]["2026-11"]["rows"]
    born_at = TRUTH["date_columns"].index("Born")
    born = {r["member_no"]: r["cells"][born_at][0] for r in truth}
    before_1960 = sum(1 for b in born.values() if b is not None and b < "1960-01-01")
    assert f"rule born 1960 on: {before_1960} rows break it" in text

    ref = dt.date(2026, 11, 30)
    for row in _read_csv(out):
        b = born[row["Member no"]]
        if b is None:
            assert row["Age"] == ""
            continue
        d = dt.date.fromisoformat(b)
        want = ref.year - d.year - ((ref.month, ref.day) < (d.month, d.day))
        assert row["Age"] == str(want), row["Member no"]


def test_replay_never_replaces_an_existing_output_without_overwrite(tmp_path, capsys):
    log = tmp_path / "oct.json"
    main(
        ["auto", str(SAMPLES / "rowing_club_2026-10.xlsx"), "-o", str(tmp_path / "o.csv")]
        + ["--day-first", "--log-out", str(log)]
    )
    out = tmp_path / "nov.csv"
    out.write_text("keep me", encoding="utf-8")
    capsys.readouterr()
    code = main(["replay", str(log), str(SAMPLES / "rowing_club_2026-11.xlsx"), "-o", str(out)])
    assert code == 3
    assert "--overwrite" in capsys.readouterr().err
    assert out.read_text(encoding="utf-8") == "keep me"


def test_scan_says_how_a_reading_with_the_same_label_differs(capsys):
    """Born's second reading has the same patterns as the best one and another century rule
    for two-digit years: the line of other readings says which rule."""
    assert main(["scan", str(SAMPLES / "rowing_club_2026-10.xlsx")]) == 0
    out = capsys.readouterr().out
    born = out[out.index("Born  —") : out.index("Joined  —")]
    best = re.search(r"best reading : (.+)", born).group(1)
    others = re.search(r"other readings: (.+)", born).group(1)
    assert others.startswith(best + " (two-digit years by the POSIX rule")


def test_new_workbook_writes_the_table_on_a_new_sheet(tmp_path, capsys):
    """--new-workbook: the fast writer for big workbooks; the dates are the same true date
    cells (checked against the samples' ground truth), the source's other parts are not kept."""
    import openpyxl

    out = tmp_path / "oct.xlsx"
    code = main(["auto", str(SAMPLES / "rowing_club_2026-10.xlsx"), "-o", str(out),
                 "--new-workbook"])  # fmt: skip
    assert code in (EXIT_OK, EXIT_UNRESOLVED)
    said = capsys.readouterr().out
    assert "a new single-sheet workbook" in said
    wb = openpyxl.load_workbook(out)
    ws = wb.worksheets[0]
    head = [c.value for c in ws[1]]
    j = head.index("Joined")
    truth = {r["member_no"]: r["cells"][TRUTH["date_columns"].index("Joined")][0]
             for r in TRUTH["months"]["2026-10"]["rows"]}  # fmt: skip
    k = head.index("Member no")
    checked = 0
    for row in ws.iter_rows(min_row=2, values_only=True):
        want = truth[row[k]]
        if want is not None and hasattr(row[j], "date"):
            assert row[j].date().isoformat() == want
            checked += 1
    assert checked > 250
