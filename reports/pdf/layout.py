"""The page template both documents share: numbered pages, header, boxes, lists, signature lines."""

from __future__ import annotations

import io
from functools import partial

from reportlab.lib.units import mm
from reportlab.pdfgen.canvas import Canvas
from reportlab.platypus import Paragraph, SimpleDocTemplate, Table, TableStyle

from .formatting import text
from .styles import (
    FONT,
    FOOTER_OFFSET,
    MARGIN,
    MUTED,
    RULE,
    SHADE,
    SMALL_SIZE,
    STYLES,
    WARNING,
    page_size,
)

CREATOR = "Bench record service"
# Printed when a unit's chassis may be live and the document carries no note of its own.
LIVE_CHASSIS_WARNING = (
    "The chassis of this unit may be at mains potential (transformerless, fed by an "
    "autotransformer of its own, or of unknown construction). Touching the chassis, or anything "
    "connected to it, while the unit is plugged in can kill."
)
# SimpleDocTemplate's frame pads its content by 6 pt on each side.
FRAME_PADDING = 6
SIGNATURE_SPACE = 12 * mm  # room to sign above each signature line


def content_width(paper_size: str) -> float:
    """Width in points that flowables may fill on a page of this size."""
    return page_size(paper_size)[0] - 2 * MARGIN - 2 * FRAME_PADDING


class NumberedCanvas(Canvas):
    """A canvas that holds every page until the end, so that each can say "Page n of m"."""

    def __init__(self, *args, footer: str, **kwargs):
        super().__init__(*args, **kwargs)
        self._footer = footer
        self._held_pages: list[dict] = []

    def showPage(self):
        self._held_pages.append(dict(self.__dict__))
        self._startPage()

    def save(self):
        total = len(self._held_pages)
        for number, state in enumerate(self._held_pages, start=1):
            self.__dict__.update(state)
            self._draw_footer(number, total)
            super().showPage()
        super().save()

    def _draw_footer(self, number: int, total: int) -> None:
        width = self._pagesize[0]
        self.saveState()
        self.setStrokeColor(RULE)
        self.setLineWidth(0.5)
        self.line(MARGIN, FOOTER_OFFSET + 10, width - MARGIN, FOOTER_OFFSET + 10)
        self.setFont(FONT, SMALL_SIZE)
        self.setFillColor(MUTED)
        self.drawString(MARGIN, FOOTER_OFFSET, self._footer)
        self.drawRightString(width - MARGIN, FOOTER_OFFSET, f"Page {number} of {total}")
        self.restoreState()


def build_pdf(
    story: list, *, paper_size: str, title: str, subject: str, author: str, footer: str
) -> bytes:
    """Lay out `story` on numbered pages and return the PDF; the same input gives the same bytes.

    `footer` is printed at the foot of every page beside "Page n of m"; keep it short, it is
    not wrapped.
    """
    buffer = io.BytesIO()
    document = SimpleDocTemplate(
        buffer,
        pagesize=page_size(paper_size),
        leftMargin=MARGIN,
        rightMargin=MARGIN,
        topMargin=MARGIN,
        bottomMargin=MARGIN,
        title=title,
        subject=subject,
        author=author,
        creator=CREATOR,
        invariant=1,
    )
    document.build(story, canvasmaker=partial(NumberedCanvas, footer=footer))
    return buffer.getvalue()


def shop_header(shop: dict, right: list[str], width: float) -> Table:
    """Shop identity on the left, the document's own identity (mark-up lines) on the right."""
    left = [Paragraph(text(shop.get("name")), STYLES["shop"])]
    left += [
        Paragraph(text(shop[key]), STYLES["small"]) for key in ("address", "phone") if shop.get(key)
    ]
    right_cell = [Paragraph(line, STYLES["body"]) for line in right]
    table = Table([[left, right_cell]], colWidths=[width * 0.55, width * 0.45])
    table.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LEFTPADDING", (0, 0), (0, -1), 0),
                ("RIGHTPADDING", (-1, 0), (-1, -1), 0),
                ("LINEBELOW", (0, 0), (-1, -1), 1, RULE),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 6),
            ]
        )
    )
    return table


def key_value_table(rows: list[tuple[str, str]], width: float, label_width: float) -> Table:
    """Labelled facts, one per row; values are paragraph mark-up and wrap within `width`.

    A value longer than a page (a 4,000-character complaint) continues on the next page.
    """
    data = [
        [Paragraph(label, STYLES["label"]), Paragraph(value, STYLES["cell"])]
        for label, value in rows
    ]
    table = Table(data, colWidths=[label_width, width - label_width], splitInRow=1)
    table.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LEFTPADDING", (0, 0), (-1, -1), 2),
                ("TOPPADDING", (0, 0), (-1, -1), 1.5),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 1.5),
                ("LINEBELOW", (0, 0), (-1, -1), 0.25, SHADE),
            ]
        )
    )
    return table


def data_table(header: list[str], rows: list[list], widths: list[float]) -> Table:
    """A ruled table whose header row repeats on every page it spans.

    Rows split between pages, and so does a row taller than a page (a step with a hundred
    parts), as long as its tall cells are paragraphs.
    """
    data = [[Paragraph(words, STYLES["cell_header"]) for words in header], *rows]
    table = Table(data, colWidths=widths, repeatRows=1, splitInRow=1)
    table.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("BACKGROUND", (0, 0), (-1, 0), SHADE),
                ("LINEBELOW", (0, 0), (-1, 0), 0.75, RULE),
                ("LINEBELOW", (0, 1), (-1, -1), 0.25, SHADE),
                ("FONTNAME", (0, 1), (-1, -1), FONT),
                ("FONTSIZE", (0, 1), (-1, -1), SMALL_SIZE),
                ("LEFTPADDING", (0, 0), (-1, -1), 3),
                ("RIGHTPADDING", (0, 0), (-1, -1), 3),
                ("TOPPADDING", (0, 0), (-1, -1), 2),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
            ]
        )
    )
    return table


def boxed(flowables: list, width: float, colour) -> Table:
    """Flowables inside a coloured frame, for what the reader must not miss."""
    table = Table([[flowables]], colWidths=[width])
    table.setStyle(
        TableStyle(
            [
                ("BOX", (0, 0), (-1, -1), 1.2, colour),
                ("LEFTPADDING", (0, 0), (-1, -1), 7),
                ("RIGHTPADDING", (0, 0), (-1, -1), 7),
                ("TOPPADDING", (0, 0), (-1, -1), 5),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 5),
            ]
        )
    )
    return table


def live_chassis_box(note: str | None, width: float) -> Table:
    """The live-chassis warning, framed in red: the document's own note, or the general one."""
    words = f"<b>Live chassis.</b> {text(note or LIVE_CHASSIS_WARNING)}"
    return boxed([Paragraph(words, STYLES["warning"])], width, WARNING)


def numbered(items: list[str], style: str = "list") -> list[Paragraph]:
    """Paragraph mark-up items as a numbered list."""
    return [
        Paragraph(item, STYLES[style], bulletText=f"{number}.")
        for number, item in enumerate(items, start=1)
    ]


def signature_lines(labels: list[str], width: float) -> Table:
    """A line to sign on above each label (mark-up), side by side."""
    gap = 10 * mm
    column = (width - gap * (len(labels) - 1)) / len(labels)
    row = []
    widths = []
    for index, label in enumerate(labels):
        row.append(Paragraph(label, STYLES["small"]))
        widths.append(column)
        if index < len(labels) - 1:
            row.append("")
            widths.append(gap)
    table = Table([[""] * len(row), row], colWidths=widths, rowHeights=[SIGNATURE_SPACE, None])
    table.setStyle(
        TableStyle(
            [
                ("LINEABOVE", (column_index, 1), (column_index, 1), 0.75, MUTED)
                for column_index in range(0, len(row), 2)
            ]
            + [("LEFTPADDING", (0, 0), (-1, -1), 0), ("VALIGN", (0, 0), (-1, -1), "TOP")]
        )
    )
    return table
