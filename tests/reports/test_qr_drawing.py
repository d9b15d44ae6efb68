"""The certificate's QR code is drawn as one path with the modules reportlab's widget draws."""

from __future__ import annotations

import pytest
from reportlab.graphics.barcode.qr import QrCodeWidget
from reportlab.graphics.shapes import Rect

from reports.pdf.certificate import QR_SIZE, qr_code

URLS = [
    "https://bench.example.org/verify/BR-2026-000123-ABCD1234/",
    "https://a-much-longer-shop-name.example.org/verify/" + "X" * 60 + "/",
]


def widget_rectangles(value: str, size: float) -> set[tuple]:
    """The dark runs reportlab's own widget draws for `value`, as rounded rectangles."""
    widget = QrCodeWidget(value, barLevel="M", barWidth=size, barHeight=size)
    shapes = widget.draw().contents
    dark = [s for s in shapes if isinstance(s, Rect) and s.fillColor is not None]
    return {tuple(round(v, 6) for v in (s.x, s.y, s.width, s.height)) for s in dark}


def path_rectangles(drawing) -> set[tuple]:
    (path,) = drawing.contents
    points = path.points
    rectangles = set()
    for start in range(0, len(points), 8):  # four corners a rectangle, x and y each
        xs, ys = points[start : start + 8 : 2], points[start + 1 : start + 8 : 2]
        rectangles.add(
            tuple(round(v, 6) for v in (min(xs), min(ys), max(xs) - min(xs), max(ys) - min(ys)))
        )
    return rectangles


@pytest.mark.parametrize("url", URLS)
def test_the_path_covers_exactly_the_widgets_dark_modules(url):
    drawn = path_rectangles(qr_code(url, QR_SIZE))
    assert drawn == widget_rectangles(url, QR_SIZE)
    assert len(drawn) > 50
