"""Text and HTML rendering of column reports and replay reports (core/render.py).

Expected strings are worked out by hand from the hand-built reports below.
"""

from __future__ import annotations

import html
from dataclasses import dataclass, field
from html.parser import HTMLParser

import pytest

from datemend.core.render import (
    ReplayView,
    ReportsView,
    column_text,
    replay_html,
    replay_text,
    reports_frame,
    reports_html,
    reports_text,
    text_table,
)
from datemend.core.report import CellNote, ColumnReport, Suggestion
from datemend.core.spec import ParseSpec


def _report(
    name: str, *, is_date: bool = True, failures: tuple[CellNote, ...] = ()
) -> ColumnReport:
    sug = Suggestion(
        spec=ParseSpec(patterns=("iso-date",)),
        label="ISO 8601 100%",
        score=0.9,
        parsed=9,
        total=10,
        examples=(("2026-10-03", "2026-10-03"),),
        evidence=("9 of 10 cells read as ISO 8601 dates",),
        failures=failures,
        failed=len(failures),
        decisions={"day_order": "evidence"},
    )
    return ColumnReport(
        column=name,
        n_rows=12,
        likeness=0.9 if is_date else 0.0,
        is_date=is_date,
        blank=2,
        placeholders=(("n/a", 1),),
        suggestions=(sug,) if is_date else (),
    )


class _TagCollector(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)

    def handle_data(self, data):
        self.text.append(data)


def test_text_table_pads_columns_to_widest_cell():
    # worked by hand: widths 3 ("abc") and 2 ("yy"), two spaces between columns
    assert text_table(["a", "bb"], [["abc", "y"], ["d", "yy"]]) == (
        "a    bb\n---  --\nabc  y\nd    yy"
    )


def test_reports_text_has_one_line_per_column_with_counts():
    text = reports_text([_report("Joined"), _report("Name", is_date=False)])
    lines = text.splitlines()
    assert len(lines) == 4  # header, rule, two columns
    assert lines[2].split()[:3] == ["Joined", "yes", "0.90"]
    assert "9/10 (90%)" in lines[2]  # 9 of 10 non-blank cells parsed, by hand
    assert lines[3].split()[:3] == ["Name", "no", "0.00"]


def test_column_text_lists_failures_with_source_rows():
    notes = (
        CellNote(row=4, source_row=6, raw="31/02/2026", text="day 31 does not exist in February"),
    )
    text = column_text(_report("Joined", failures=notes))
    assert "31/02/2026" in text
    assert "day 31 does not exist in February" in text
    assert " 6 " in f" {text} ".replace("\n", " ")  # the 1-based source row is shown
    assert "n/a" in text  # placeholder token listed


def test_html_escapes_every_value_from_the_file():
    evil = "<script>alert(1)</script>"
    notes = (CellNote(row=0, source_row=2, raw=evil, text="no pattern reads this value"),)
    out = reports_html([_report(evil, failures=notes)])
    assert "<script>" not in out
    assert html.escape(evil) in out
    parser = _TagCollector()
    parser.feed(out)
    assert "script" not in parser.tags
    assert "table" in parser.tags and "details" in parser.tags


def test_reports_view_indexes_by_position_and_name():
    view = ReportsView([_report("Joined"), _report("Name", is_date=False)])
    assert view[0].column == "Joined"
    assert view["Name"].is_date is False
    assert view.columns == ["Joined", "Name"]
    assert [r.column for r in view.dates()] == ["Joined"]
    assert isinstance(view[0:1], ReportsView) and len(view[0:1]) == 1
    with pytest.raises(KeyError, match="Missing"):
        view["Missing"]
    assert str(view) == repr(view) == reports_text(view.reports)
    assert view._repr_html_().startswith("<table")
    assert "Joined" in str(view.detail("Joined"))


def test_reports_frame_summary_values():
    frame = reports_frame([_report("Joined"), _report("Name", is_date=False)])
    assert frame["column"].tolist() == ["Joined", "Name"]
    assert frame["parsed"].tolist() == [9, 0]
    assert frame["total"].tolist() == [9 + 1, 0]
    assert frame["blank"].tolist() == [2, 2]


@dataclass
class _Drift:
    matched: int
    new_tokens: list[str] = field(default_factory=list)
    columns: list[dict] = field(default_factory=list)

    def lines(self) -> list[str]:
        return [f"{self.matched} cells matched the recorded patterns."]


def test_replay_text_shows_sentences_and_details():
    rep = _Drift(
        matched=41,
        new_tokens=["TBC"],
        columns=[{"column": "Joined", "unmatched": 3}, {"column": "Born", "unmatched": 0}],
    )
    text = replay_text(rep)
    assert "41 cells matched the recorded patterns." in text
    assert "TBC" in text
    # records become a table: header row, then one row per column
    assert any(line.split() == ["Joined", "3"] for line in text.splitlines())
    view = ReplayView(rep)
    assert str(view) == text


def test_replay_html_escapes_and_tabulates():
    rep = _Drift(matched=1, new_tokens=["<b>x</b>"], columns=[{"column": "<i>", "unmatched": 2}])
    out = replay_html(rep)
    assert "<b>x</b>" not in out and html.escape("<b>x</b>") in out
    parser = _TagCollector()
    parser.feed(out)
    assert "i" not in parser.tags and "b" in parser.tags  # <b> only from our own labels
    assert "table" in parser.tags


def test_empty_inputs_render():
    assert reports_text([]) == "no columns"
    assert "no columns" in reports_html([])
    assert reports_frame([]).empty


def test_drift_report_renders_counts_table_and_groups():
    from datemend.core.replay import CellGroup, ColumnDrift, MissingColumn, ReplayReport

    group = CellGroup(shape="9999-99-99", count=3, examples=("2026-02-30",), rows=(7,))
    rep = ReplayReport(
        file="roster_2026-11.csv",
        rows=40,
        columns=(
            ColumnDrift(
                "Joined",
                matched=30,
                blank=5,
                manual=1,
                unmatched=3,
                ambiguous=1,
                groups=(group,),
                new_tokens=(("TBC", 2),),
            ),
        ),
        missing=(MissingColumn("Born", likely="Date of birth"),),
        added=("Locker",),
    )
    text = replay_text(rep)
    lines = text.splitlines()
    # the counts row: column, read, read by none, ambiguous, blank, by hand, new tokens, far off
    assert ["Joined", "30", "3", "1", "5", "1", "2", "0"] in [ln.split() for ln in lines]
    assert any(ln.split()[:3] == ["9999-99-99", "3", "2026-02-30"] for ln in lines)
    assert 'Column "Born" is missing (likely now "Date of birth").' in text
    assert 'New columns: "Locker".' in text
    assert lines[0].startswith("Replay on roster_2026-11.csv")
    out = replay_html(rep)
    assert out.count("<table") == 3  # counts, unread groups, new tokens
    assert "Date of birth" in out
