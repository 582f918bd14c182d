"""Our look: the Okabe–Ito colour-blind-safe palette, and one glyph and one name per cell state.

Colour is never the only signal: every state also has a glyph and a word, and the chart marks
stand-out bars with a hatch and a "!" as well as a colour.
Palette source: Okabe & Ito, "Color Universal Design" (2002), eight colours.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtGui import QColor

from ..core.clean import CellState

__all__ = ["INK", "OKABE_ITO", "STATE_LOOK", "StateLook", "state_look"]

#: The eight Okabe–Ito colours by their published names.
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky blue": "#56B4E9",
    "bluish green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish purple": "#CC79A7",
}

#: Neutral ink for text and axes (a grey, not one of the signal colours).
INK = "#3A3A3A"


@dataclass(frozen=True)
class StateLook:
    """How one cell state is shown: a word, a glyph, a colour, and a tooltip sentence."""

    word: str
    glyph: str
    colour: str
    hint: str

    @property
    def label(self) -> str:
        return f"{self.glyph} {self.word}"

    def qcolor(self) -> QColor:
        return QColor(self.colour)


STATE_LOOK: dict[CellState, StateLook] = {
    CellState.PARSED: StateLook(
        "read", "✓", OKABE_ITO["bluish green"], "Read as a date by the column's reading."
    ),
    CellState.BLANK: StateLook(
        "blank", "○", "#7F7F7F", "Empty, or a token the fix log treats as blank."
    ),
    CellState.FAILED: StateLook(
        "not read", "✗", OKABE_ITO["vermillion"], "No reading fits this value; the note says why."
    ),
    CellState.AMBIGUOUS: StateLook(
        "unclear", "?", OKABE_ITO["orange"], "Readable in more than one way; nothing was chosen."
    ),
    CellState.MANUAL: StateLook(
        "set by hand", "✎", OKABE_ITO["reddish purple"], "Set by hand; a step in the fix log."
    ),
}


def state_look(state: int) -> StateLook:
    """The look of a state given as an int (as stored in ParsedColumn.state)."""
    return STATE_LOOK[CellState(int(state))]
