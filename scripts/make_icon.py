"""Draw the datemend icon: assets/datemend.svg (the source) and assets/datemend.png (256×256).

Our own design: a calendar page whose torn corner is stitched back, with a tick. Colours from
the Okabe–Ito palette. Run: QT_QPA_PLATFORM=offscreen python scripts/make_icon.py
"""

from __future__ import annotations

import sys
from pathlib import Path

ASSETS = Path(__file__).resolve().parents[1] / "assets"

SVG = """<svg xmlns="http://www.w3.org/2000/svg" width="256" height="256" viewBox="0 0 256 256">
  <title>datemend</title>
  <rect x="20" y="34" width="216" height="200" rx="26" fill="#FFFFFF" stroke="#0072B2"
        stroke-width="10"/>
  <path d="M25 60 a26 26 0 0 1 26 -26 h154 a26 26 0 0 1 26 26 v26 h-206 z" fill="#0072B2"/>
  <rect x="66" y="14" width="18" height="44" rx="9" fill="#3A3A3A"/>
  <rect x="172" y="14" width="18" height="44" rx="9" fill="#3A3A3A"/>
  <g fill="#56B4E9">
    <rect x="48" y="106" width="30" height="24" rx="5"/>
    <rect x="92" y="106" width="30" height="24" rx="5"/>
    <rect x="136" y="106" width="30" height="24" rx="5"/>
    <rect x="180" y="106" width="30" height="24" rx="5"/>
    <rect x="48" y="144" width="30" height="24" rx="5"/>
    <rect x="48" y="182" width="30" height="24" rx="5"/>
    <rect x="92" y="182" width="30" height="24" rx="5"/>
  </g>
  <path d="M96 156 l26 26 l70 -74" fill="none" stroke="#009E73" stroke-width="22"
        stroke-linecap="round" stroke-linejoin="round"/>
  <g stroke="#E69F00" stroke-width="6" stroke-linecap="round">
    <line x1="186" y1="172" x2="208" y2="194"/>
    <line x1="200" y1="160" x2="222" y2="182"/>
    <line x1="172" y1="186" x2="194" y2="208"/>
  </g>
</svg>
"""


def main() -> int:
    from PySide6.QtCore import QByteArray, Qt
    from PySide6.QtGui import QGuiApplication, QImage, QPainter
    from PySide6.QtSvg import QSvgRenderer

    app = QGuiApplication.instance() or QGuiApplication(sys.argv)
    ASSETS.mkdir(exist_ok=True)
    (ASSETS / "datemend.svg").write_text(SVG, encoding="utf-8")
    # The window loads its icon from the package (package-data: gui/*.svg).
    (ASSETS.parent / "src" / "datemend" / "gui" / "datemend.svg").write_text(SVG, encoding="utf-8")
    img = QImage(256, 256, QImage.Format.Format_ARGB32)
    img.fill(Qt.GlobalColor.transparent)
    p = QPainter(img)
    p.setRenderHint(QPainter.RenderHint.Antialiasing)
    QSvgRenderer(QByteArray(SVG.encode())).render(p)
    p.end()
    img.save(str(ASSETS / "datemend.png"))
    del app
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
