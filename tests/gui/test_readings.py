"""The Readings panel on a hand-made report: cards, one-click use, blank-token offer, choices."""

from __future__ import annotations

import dataclasses

from PySide6.QtCore import Qt

from datemend.core.report import ColumnReport, Suggestion
from datemend.core.spec import ParseSpec
from datemend.gui.readings import ReadingsPanel, suggestion_html

SPEC = ParseSpec(patterns=("d/m/yyyy",), day_order="dmy")
SUG = Suggestion(
    spec=SPEC,
    label="D/M/YYYY 100%",
    score=1.0,
    parsed=8,
    total=10,
    examples=(("03/10/2019", "2019-10-03"),),
    evidence=("day before month: 3 values have a first field above 12",),
    warnings=("<b>9999-12-31</b> looks like a 'no date' value",),
    failed=2,
)
REPORT = ColumnReport(
    column="Joined",
    n_rows=12,
    likeness=0.8,
    is_date=True,
    blank=2,
    placeholders=(("n/a", 2), ("tbc", 1)),
    suggestions=(SUG,),
)


def test_card_shows_coverage_evidence_and_escapes_values():
    text = suggestion_html(1, SUG)
    assert "reads 8 of 10 cells (80.0%)" in text  # 8 / 10, by hand
    assert "✗ 2 not read" in text
    assert "03/10/2019 → 2019-10-03" in text
    assert "&lt;b&gt;9999-12-31&lt;/b&gt;" in text and "<b>9999" not in text


def _panel(qtbot, century: str, pivot: int) -> ReadingsPanel:
    """The panel on REPORT with a two-digit-year rule and year chosen."""
    panel = ReadingsPanel()
    qtbot.addWidget(panel)
    panel.set_report(REPORT)
    panel.century.setCurrentIndex(panel.century.findData(century))
    panel.pivot.setValue(pivot)
    return panel


def test_one_click_uses_the_reading_with_the_choices_laid_over(qtbot):
    panel = _panel(qtbot, "past", 2026)
    with qtbot.waitSignal(panel.use_requested) as got:
        qtbot.mouseClick(panel.cards[0].use, Qt.MouseButton.LeftButton)
    spec, label = got.args
    assert label == "D/M/YYYY 100%"
    assert (spec.day_order, spec.century, spec.pivot_year) == ("dmy", "past", 2026)
    assert spec.patterns == SPEC.patterns


def test_two_digit_years_can_be_left_open_where_the_rules_differ(qtbot):
    from datemend.core.steps import ReadDates

    panel = _panel(qtbot, "either", 2020)
    spec = panel.spec_for(REPORT.suggestions[0])
    assert (spec.century, spec.pivot_year) == ("either", 2020)
    said = ReadDates("Joined", dataclasses.replace(spec, patterns=("num-slash",))).describe()
    assert "two-digit years left unclear where the POSIX rule and not-after-2020 differ" in said


def test_blank_offer_lists_only_tokens_not_yet_blank(qtbot):
    panel = ReadingsPanel()
    qtbot.addWidget(panel)
    panel.set_report(REPORT)
    assert not panel.blank_button.isVisibleTo(panel)  # not read yet: nothing to offer
    panel.set_blank_state(read=True, blank={"n/a"})
    assert panel.blank_button.isVisibleTo(panel)
    assert "tbc" in panel.blank_button.text() and "n/a" not in panel.blank_button.text()
    with qtbot.waitSignal(panel.blank_requested) as got:
        qtbot.mouseClick(panel.blank_button, Qt.MouseButton.LeftButton)
    assert got.args == [("tbc",)]
    panel.set_blank_state(read=True, blank={"n/a", "tbc"})
    assert not panel.blank_button.isVisibleTo(panel)
