"""A healthy unit's switch-on as reportlab vector graphics: lamp current against time.

Drawn from a certificate snapshot's ``switch_on`` block alone, in the colours and words of
the web plot (``shop.bench.switch_on_look``): each stretch of the RMS current in the colour
of the lamp's glow and named where it begins, so it reads the same in black and white.
"""

from __future__ import annotations

from reportlab.graphics.shapes import Circle, Drawing, Group, Line, PolyLine, Rect, String
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth

from shop.bench import switch_on_look as look

from .plot import (
    AXIS_BOTTOM,
    AXIS_LEFT,
    LABEL_SIZE,
    LEGEND_GAP,
    LEGEND_ROW,
    LEGEND_WIDTH,
    axis_ticks,
    draw_axis_labels,
    draw_frame,
    draw_grid,
)
from .styles import FONT, FONT_BOLD, INK

NAME_ROWS = 2
NAME_ROW_HEIGHT = 9  # [pt] room for each row of glow names above the plot
NAME_SIZE = 6.5
NAME_CHARACTER = 3.6  # [pt] width of a character of the names, about
PEAK_LINE = colors.HexColor(look.PEAK_LINE)
STEADY_LINE = colors.HexColor(look.STEADY_LINE)
GLOW_EDGE = colors.HexColor(look.GLOW_EDGE)
CHANGE_LINE = colors.HexColor("#b0b0b0")


def _label(x: float, y: float, words: str, anchor: str = "start", size=LABEL_SIZE) -> String:
    return String(x, y, words, fontName=FONT, fontSize=size, fillColor=INK, textAnchor=anchor)


def switch_on_plot(switch_on: dict, width: float, height: float) -> tuple[Drawing, int, int]:
    """The lamp's RMS current over a healthy unit's switch-on, with a key on the right.

    Parameters
    ----------
    switch_on : dict
        A snapshot test's ``switch_on`` block: ``glow_over_time`` moments (time [s], glow,
        current and peak_current [A]), ``inrush_peak_current``, ``steady_current`` [A],
        ``settle_time`` and ``followed_for`` [s].
    width, height : float
        Size of the drawing [pt]; the key takes the right-hand ``LEGEND_WIDTH``.

    Returns
    -------
    drawing : Drawing
    stretches, unnamed : int
        How many stretches of one glow it has, and how many were too short to name.
    """
    moments = look.moments_of(switch_on)
    plot_width = width - AXIS_LEFT - LEGEND_GAP - LEGEND_WIDTH
    plot_height = height - AXIS_BOTTOM - NAME_ROWS * NAME_ROW_HEIGHT - 2
    seconds, amperes = look.extent(switch_on, moments)
    x_axis, y_axis = axis_ticks(seconds), axis_ticks(amperes)
    box = (AXIS_LEFT, AXIS_BOTTOM, plot_width, plot_height)

    def px(seconds: float) -> float:
        return AXIS_LEFT + float(seconds) / x_axis[0][-1] * plot_width

    def py(amperes: float) -> float:
        return AXIS_BOTTOM + float(amperes) / y_axis[0][-1] * plot_height

    drawing = Drawing(width, height)
    draw_grid(drawing, box, x_axis, y_axis)
    peaks = [m for m in moments if m.get("peak_current") is not None]
    if len(peaks) > 1:
        drawing.add(
            PolyLine(
                [c for m in peaks for c in (px(m["time"]), py(m["peak_current"]))],
                strokeColor=PEAK_LINE,
                strokeWidth=0.6,
                strokeDashArray=[1, 1.5],
            )
        )
    labels = []  # drawn last, each on a white ground, so that no line runs through them
    steady = switch_on.get("steady_current")
    if steady is not None:
        y = py(steady)
        _dashed(drawing, (AXIS_LEFT, y, AXIS_LEFT + plot_width, y, 0.6, [4, 2]))
        labels.append(
            _label(AXIS_LEFT + plot_width - 3, y - 8, f"steady {steady:.3f} A RMS", "end")
        )
    stretches, unnamed = _glow_line(drawing, moments, px, py, box)
    settle = switch_on.get("settle_time")
    if settle is not None:
        # Under the inrush label, on the side of the line with room.
        x = px(settle)
        words = f"settled at {look.seconds(settle)}"
        labels.append(
            _label(x - 3, AXIS_BOTTOM + plot_height - 19, words, "end")
            if x > AXIS_LEFT + 0.7 * plot_width
            else _label(x + 3, AXIS_BOTTOM + plot_height - 19, words)
        )
        _dashed(drawing, (x, AXIS_BOTTOM, x, AXIS_BOTTOM + plot_height, 0.9, [3, 2]))
    inrush = look.inrush_moment(moments)
    if inrush is not None and switch_on.get("inrush_peak_current") is not None:
        x, y = px(inrush["time"]), py(switch_on["inrush_peak_current"])
        drawing.add(Circle(x, y, 2.6, fillColor=INK, strokeColor=None))
        label_y = min(y - 2.5, AXIS_BOTTOM + plot_height - 9)
        labels.append(_label(x + 6, label_y, look.inrush_words(switch_on, inrush)))
    for label in labels:
        drawing.add(_on_white(label))
    draw_frame(drawing, box)
    draw_axis_labels(drawing, box, ("Time since switch-on [s]", "Lamp current [A]"))
    drawing.add(_key(switch_on, moments, AXIS_LEFT + plot_width + LEGEND_GAP, height))
    return drawing, stretches, unnamed


def _dashed(drawing: Drawing, line: tuple) -> None:
    """A dashed line (x1, y1, x2, y2, width, dashes) [pt] in the steady colour."""
    *ends, width, dashes = line
    drawing.add(Line(*ends, strokeColor=STEADY_LINE, strokeWidth=width, strokeDashArray=dashes))


def _on_white(label: String) -> Group:
    """A label over a white box of its size."""
    width = stringWidth(label.text, label.fontName, label.fontSize)
    left = {"start": label.x, "middle": label.x - width / 2, "end": label.x - width}[
        label.textAnchor
    ]
    ground = Rect(
        left - 1,
        label.y - 2,
        width + 2,
        label.fontSize + 2,
        fillColor=colors.white,
        strokeColor=None,
    )
    return Group(ground, label)


def _glow_line(drawing: Drawing, moments: list[dict], px, py, box: tuple) -> tuple[int, int]:
    """Each stretch over a dark edge in its glow's colour, named above the plot where it fits."""
    left, bottom, width, height = box
    stretches = look.glow_stretches(moments)
    starts = [px(stretch[0]["time"]) for _, stretch in stretches]
    rows = look.name_rows(
        starts, [glow for glow, _ in stretches], NAME_ROWS, NAME_CHARACTER, left + width
    )
    for (glow, stretch), x, row in zip(stretches, starts, rows):
        points = [c for m in stretch for c in (px(m["time"]), py(m["current"]))]
        for colour, stroke in ((GLOW_EDGE, 2.8), (colors.HexColor(look.glow_colour(glow)), 1.6)):
            drawing.add(PolyLine(points, strokeColor=colour, strokeWidth=stroke, strokeLineJoin=1))
        if row is None:
            continue
        top = bottom + height + (NAME_ROWS - row) * NAME_ROW_HEIGHT
        drawing.add(_label(x, top - NAME_SIZE, glow, size=NAME_SIZE))
        drawing.add(
            Line(
                x,
                top - NAME_SIZE - 1.5,
                x,
                bottom,
                strokeColor=CHANGE_LINE,
                strokeWidth=0.4,
                strokeDashArray=[1, 2],
            )
        )
    return len(stretches), rows.count(None)


def _key(switch_on: dict, moments: list[dict], left: float, top: float) -> Group:
    """The glow classes drawn, then the lines and the mark the plot holds."""
    group = Group()
    group.add(String(left, top - 8, "Key", fontName=FONT_BOLD, fontSize=LABEL_SIZE, fillColor=INK))
    row = top - 8
    text_left = left + 20
    for glow in look.glows_seen(moments):
        row -= LEGEND_ROW
        group.add(
            Rect(
                left,
                row - 1,
                14,
                7,
                fillColor=colors.HexColor(look.glow_colour(glow)),
                strokeColor=GLOW_EDGE,
                strokeWidth=0.6,
            )
        )
        group.add(_label(text_left, row, f"lamp glow {glow}"))
    lines = [("peak current, each half cycle", PEAK_LINE, [1, 1.5], False)]
    if switch_on.get("steady_current") is not None:
        lines.append(("steady current", STEADY_LINE, [4, 2], False))
    if switch_on.get("settle_time") is not None:
        lines.append(("within 10 % of steady from", STEADY_LINE, [3, 2], True))
    for words, colour, dashes, vertical in lines:
        row -= LEGEND_ROW
        ends = (
            (left + 7, row - 2, left + 7, row + 7)
            if vertical
            else (left, row + 3, left + 14, row + 3)
        )
        group.add(Line(*ends, strokeColor=colour, strokeWidth=0.8, strokeDashArray=dashes))
        group.add(_label(text_left, row, words))
    if switch_on.get("inrush_peak_current") is not None:
        row -= LEGEND_ROW
        group.add(Circle(left + 7, row + 3, 2.6, fillColor=INK, strokeColor=None))
        group.add(_label(text_left, row, "inrush peak (instantaneous)"))
    return group
