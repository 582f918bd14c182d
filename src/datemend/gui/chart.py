"""The date spread: a small bar chart of a column's read dates, drawn with QPainter.

Bars count read dates by year (or by month when the dates span three years or less). Dates far
from the rest are set apart at the ends with a hatch, a "!" and another colour, so a placeholder
such as 1900-01-01 or a far-future sentinel such as 9999-12-31 is seen at once. "Far" means
outside Tukey's far-out fences on the year (quartiles ± 3 × IQR; Tukey, Exploratory Data
Analysis, 1977), or a year before 1901 or after 2099 (common practice, no source).
Clicking a bar (or Enter on the selected bar) asks the table to show only those rows.

Signals:
    bar_chosen(object, object): the chosen bar's bounds as numpy datetime64 (lo included,
        hi excluded).
    cleared(): the choice was taken back (Escape, or a click beside the bars).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from PySide6.QtCore import QPoint, QRectF, QSize, Qt, Signal
from PySide6.QtGui import QBrush, QColor, QKeyEvent, QMouseEvent, QPainter, QPaintEvent, QPen
from PySide6.QtWidgets import QSizePolicy, QToolTip, QWidget

from .look import INK, OKABE_ITO

__all__ = ["Bar", "DateSpread", "bars_for"]

_MAIN = QColor(OKABE_ITO["blue"])
_APART = QColor(OKABE_ITO["vermillion"])
_PLAIN_YEARS = (1901, 2099)
_STEPS = (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 10000)


@dataclass(frozen=True)
class Bar:
    """One bar: its bounds, how many dates fall in it, a label, and whether it is set apart."""

    lo: np.datetime64
    hi: np.datetime64
    count: int
    label: str
    apart: bool = False


def _year_start(y: int) -> np.datetime64:
    return np.datetime64(f"{y:04d}-01-01", "us")


def bars_for(values: np.ndarray, max_bars: int = 120) -> list[Bar]:
    """Bars for the read dates in ``values`` (datetime64; NaT ignored), in date order."""
    v = values[~np.isnat(values)].astype("datetime64[us]", copy=False)
    if len(v) == 0:
        return []
    years = _years_of(v)
    q1, q3 = _quartiles(years)
    iqr = max(q3 - q1, 1.0)
    lo_fence = max(q1 - 3 * iqr, _PLAIN_YEARS[0])
    hi_fence = min(q3 + 3 * iqr, _PLAIN_YEARS[1])
    apart = (years < lo_fence) | (years > hi_fence)
    main = years[~apart]
    bars: list[Bar] = []
    below = [b for b in _apart_bars(v[apart & (years < lo_fence)])]
    above = [b for b in _apart_bars(v[apart & (years > hi_fence)])]
    if len(main):
        y0, y1 = int(main.min()), int(main.max())
        if y1 - y0 <= 2:
            months = v[~apart].astype("datetime64[M]")
            m0, m1 = months.min(), months.max()
            edges = np.arange(m0, m1 + np.timedelta64(2, "M"), dtype="datetime64[M]")
            counts = np.bincount((months - m0).astype(np.int64), minlength=len(edges) - 1)
            for i in range(len(edges) - 1):
                bars.append(
                    Bar(
                        edges[i].astype("datetime64[us]"),
                        edges[i + 1].astype("datetime64[us]"),
                        int(counts[i]),
                        str(edges[i]),
                    )
                )
        else:
            step = next(s for s in _STEPS if (y1 - y0) // s + 1 <= max_bars)
            start = y0 - (y0 % step)
            counts = np.bincount((main - start) // step)
            for i, c in enumerate(counts):
                a = start + i * step
                label = str(a) if step == 1 else f"{a}–{a + step - 1}"
                bars.append(Bar(_year_start(a), _year_start(a + step), int(c), label))
    return below + bars + above


_TABLE_DAYS = 200_000  # ~550 years: a day → year table this long is built in a few ms


def _years_of(v: np.ndarray) -> np.ndarray:
    """Calendar year of each datetime64[us] value. numpy's own conversion to years costs ~55 ms
    a million; over a span of a few centuries a day → year table and one take do it in ~10."""
    days = v.astype("datetime64[D]").view(np.int64)
    d0, d1 = int(days.min()), int(days.max())
    if d1 - d0 > _TABLE_DAYS:
        return v.astype("datetime64[Y]").astype(np.int64) + 1970
    span = np.arange(d0, d1 + 1, dtype=np.int64).astype("datetime64[D]")
    table = span.astype("datetime64[Y]").astype(np.int64) + 1970
    return table[days - d0]


def _quartiles(years: np.ndarray) -> tuple[float, float]:
    """The 25th and 75th percentiles, as np.percentile's default (linear) gives them, from a
    count per year instead of a sort of every value."""
    y0 = int(years.min())
    cum = np.cumsum(np.bincount(years - y0))
    n = int(cum[-1])

    def at(k: int) -> int:  # the k-th smallest year (0-based)
        return y0 + int(np.searchsorted(cum, k, side="right"))

    out = []
    for q in (0.25, 0.75):
        pos = (n - 1) * q
        lo = int(np.floor(pos))
        a, b = at(lo), at(min(lo + 1, n - 1))
        out.append(a + (pos - lo) * (b - a))
    return out[0], out[1]


def _apart_bars(v: np.ndarray) -> list[Bar]:
    """One set-apart bar per distinct year (labelled by the day when all share one day)."""
    out = []
    if len(v) == 0:
        return out
    years = v.astype("datetime64[Y]").astype(np.int64) + 1970
    for y in np.unique(years):
        inyear = v[years == y]
        days = np.unique(inyear.astype("datetime64[D]"))
        if len(days) == 1:
            lo = days[0].astype("datetime64[us]")
            hi = (days[0] + np.timedelta64(1, "D")).astype("datetime64[us]")
            label = str(days[0])
        else:
            lo, hi, label = _year_start(int(y)), _year_start(int(y) + 1), str(int(y))
        if int(y) >= 9999:
            hi = np.datetime64("9999-12-31T23:59:59.999999", "us")
        out.append(Bar(lo, hi, len(inyear), label, apart=True))
    return out


def _round(label: str) -> bool:
    """A label worth a tick: a year ending in 0 or 5, a decade range, or a January."""
    head = label.split("–")[0]
    if len(head) == 7:  # YYYY-MM
        return head.endswith("-01")
    return head.isdigit() and int(head) % 5 == 0


class DateSpread(QWidget):
    """The chart; see the module docstring for what it shows and the signals it emits."""

    bar_chosen = Signal(object, object)
    cleared = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("dateSpread")
        self.setAccessibleName("Date spread")
        self.setFocusPolicy(Qt.FocusPolicy.StrongFocus)
        self.setMouseTracking(True)
        self.setMinimumHeight(120)
        self.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Preferred)
        self.bars: list[Bar] = []
        self.chosen: int | None = None
        self._rects: list[QRectF] = []

    def sizeHint(self) -> QSize:
        return QSize(420, 150)

    def set_values(self, values: np.ndarray | None) -> None:
        self.bars = [] if values is None else bars_for(values)
        self.chosen = None
        self.update()

    def choose(self, i: int | None) -> None:
        """Select bar ``i`` (None: no bar) and say so through the signals."""
        self.chosen = i
        self.update()
        if i is None:
            self.cleared.emit()
        else:
            b = self.bars[i]
            self.bar_chosen.emit(b.lo, b.hi)

    # -- drawing ---------------------------------------------------------------------------
    def _layout(self) -> list[QRectF]:
        w, h = self.width(), self.height()
        left, right, top, bottom = 34.0, 8.0, 18.0, 30.0
        n = len(self.bars)
        if n == 0:
            return []
        gaps = sum(1 for i in range(1, n) if self.bars[i].apart != self.bars[i - 1].apart)
        slot = (w - left - right) / (n + gaps * 1.5)
        peak = max(b.count for b in self.bars) or 1
        rects = []
        x = left
        for i, b in enumerate(self.bars):
            if i and b.apart != self.bars[i - 1].apart:
                x += slot * 1.5
            bh = (h - top - bottom) * (b.count / peak)
            if b.count:
                bh = max(bh, 2.0)
            rects.append(QRectF(x + slot * 0.1, h - bottom - bh, max(slot * 0.8, 1.0), bh))
            x += slot
        return rects

    def paintEvent(self, event: QPaintEvent) -> None:
        p = QPainter(self)
        p.setRenderHint(QPainter.RenderHint.Antialiasing, False)
        p.fillRect(self.rect(), self.palette().base())
        ink = QColor(INK)
        p.setPen(ink)
        if not self.bars:
            p.drawText(self.rect(), Qt.AlignmentFlag.AlignCenter, "No dates read yet.")
            p.end()
            return
        self._rects = rects = self._layout()
        h = self.height()
        peak = max(b.count for b in self.bars)
        p.drawText(QRectF(0, 2, 32, 14), Qt.AlignmentFlag.AlignRight, str(peak))
        p.drawLine(33, 18, 33, h - 30)
        p.drawLine(33, h - 30, self.width() - 8, h - 30)
        for i, (b, r) in enumerate(zip(self.bars, rects)):
            colour = _APART if b.apart else _MAIN
            p.fillRect(r, colour)
            if b.apart:
                p.fillRect(r, QBrush(QColor("white"), Qt.BrushStyle.BDiagPattern))
                p.setPen(_APART)
                p.drawText(
                    QRectF(r.center().x() - 8, r.top() - 15, 16, 14),
                    Qt.AlignmentFlag.AlignCenter,
                    "!",
                )
            if i == self.chosen:
                p.setPen(QPen(QColor(OKABE_ITO["black"]), 2))
                p.drawRect(r.adjusted(-2, -2, 2, 2))
            p.setPen(ink)
        self._draw_labels(p, rects)
        if self.hasFocus():
            p.setPen(QPen(ink, 1, Qt.PenStyle.DotLine))
            p.drawRect(self.rect().adjusted(0, 0, -1, -1))
        p.end()

    def _draw_labels(self, p: QPainter, rects: list[QRectF]) -> None:
        h = self.height()
        fm = p.fontMetrics()
        # Labels by priority (set-apart bars, the ends, round years), kept where they fit.
        main = [i for i, b in enumerate(self.bars) if not b.apart]
        picks = [i for i, b in enumerate(self.bars) if b.apart]
        if main:
            picks += [main[0], main[-1]]
        picks += [i for i in main if _round(self.bars[i].label)]
        taken: list[tuple[float, float]] = []
        for i in dict.fromkeys(picks):
            b, r = self.bars[i], rects[i]
            tw = fm.horizontalAdvance(b.label)
            x = min(max(r.center().x() - tw / 2, 0), self.width() - tw - 2)
            if any(x < right + 6 and x + tw + 6 > left for left, right in taken):
                continue
            taken.append((x, x + tw))
            p.setPen(_APART if b.apart else QColor(INK))
            p.drawText(QPoint(int(x), int(h - 14)), b.label)
        p.setPen(QColor(INK))
        if any(b.apart for b in self.bars):
            p.drawText(QPoint(36, h - 2), "! hatched: set apart — placeholders and far-off dates")

    # -- input -----------------------------------------------------------------------------
    def _bar_at(self, x: float) -> int | None:
        for i, r in enumerate(self._rects or self._layout()):
            if r.left() - 1 <= x <= r.right() + 1:
                return i
        return None

    def mousePressEvent(self, event: QMouseEvent) -> None:
        i = self._bar_at(event.position().x())
        self.setFocus()
        self.choose(i)

    def mouseMoveEvent(self, event: QMouseEvent) -> None:
        i = self._bar_at(event.position().x())
        if i is None:
            QToolTip.hideText()
            return
        b = self.bars[i]
        kind = " (set apart)" if b.apart else ""
        QToolTip.showText(
            event.globalPosition().toPoint(), f"{b.label}: {b.count} dates{kind}", self
        )

    def keyPressEvent(self, event: QKeyEvent) -> None:
        key = event.key()
        n = len(self.bars)
        if n and key in (Qt.Key.Key_Left, Qt.Key.Key_Right):
            cur = self.chosen if self.chosen is not None else (-1 if key == Qt.Key.Key_Right else n)
            self.choose(max(0, min(n - 1, cur + (1 if key == Qt.Key.Key_Right else -1))))
            return
        if key == Qt.Key.Key_Escape and self.chosen is not None:
            self.choose(None)
            return
        super().keyPressEvent(event)
