"""A healthy unit's switch-on as reportlab vector graphics: lamp current against time.

Drawn from a certificate snapshot's ``switch_on`` block alone, in the colours and words of
the web plot (``shop.bench.switch_on_look``): each stretch of the RMS current in the colour
of the lamp's glow and named where it begins, so it reads the same in black and white.
"""

from __future__ import annotations

from reportlab.graphics.shapes import (
    Circle,
    Drawing,
    Group,
    Line,
    Polygon,
    PolyLine,
    Rect,
    String,
)
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth

from shop.bench import switch_on_look as look
from shop.bench.plot_labels import LabelRoom, polyline_segments
from shop.bench.switch_on_axes import axes_of, clipped_runs, peaks_clipped

from .plot import (
    AXIS_BOTTOM,
    AXIS_LEFT,
    LABEL_SIZE,
    LEGEND_GAP,
    LEGEND_ROW,
    LEGEND_WIDTH,
    draw_axis_labels,
    draw_frame,
    draw_ticks,
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
TICK_GAP = 4  # [pt] at least between two time labels
ROW = 9  # [pt] between the rows a label may take
LINE_CLEARANCE = 1.8  # [pt] half the glow line's stroke, and a little more
KEY_FOOT = 4  # [pt] the key's last row stays this far above the drawing's bottom


def _label(x: float, y: float, words: str, anchor: str = "start", size=LABEL_SIZE) -> String:
    return String(x, y, words, fontName=FONT, fontSize=size, fillColor=INK, textAnchor=anchor)


def switch_on_plot(switch_on: dict, width: float, height: float) -> tuple[Drawing, int, int]:
    """The lamp's RMS current over a healthy unit's switch-on, with a key on the right.

    Time runs on a logarithmic axis and the current axis is scaled to the RMS current
    (``shop.bench.switch_on_axes``), as on the web plot; peaks above the frame are clipped and
    the key says so; labels go where they cover no other label nor a marked line
    (``shop.bench.plot_labels``).

    Parameters
    ----------
    switch_on : dict
        A snapshot test's ``switch_on`` block: ``glow_over_time`` moments (time [s], glow,
        current and peak_current [A]), ``inrush_peak_current``, ``steady_current`` [A],
        ``settle_time`` and ``followed_for`` [s]. Blocks of certificates issued before the
        log axis carry the same keys and draw the same way.
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
    scale = axes_of(switch_on, moments)
    box = (AXIS_LEFT, AXIS_BOTTOM, plot_width, plot_height)
    top = AXIS_BOTTOM + plot_height

    def px(seconds: float) -> float:
        return AXIS_LEFT + scale.x(seconds) * plot_width

    def py(amperes: float) -> float:
        return AXIS_BOTTOM + scale.y(amperes) * plot_height

    drawing = Drawing(width, height)
    time_ticks = scale.time_ticks(
        plot_width,
        lambda words: stringWidth(words, FONT, LABEL_SIZE),
        (4, LEGEND_GAP - 2),
        TICK_GAP,
    )
    draw_ticks(drawing, box, time_ticks, scale.current_ticks)
    peaks = [m for m in moments if m.get("peak_current") is not None]
    for run in clipped_runs([(scale.x(m["time"]), scale.y(m["peak_current"])) for m in peaks]):
        if len(run) > 1:
            drawing.add(
                PolyLine(
                    [
                        c
                        for u, v in run
                        for c in (AXIS_LEFT + u * plot_width, AXIS_BOTTOM + v * plot_height)
                    ],
                    strokeColor=PEAK_LINE,
                    strokeWidth=0.6,
                    strokeDashArray=[1, 1.5],
                )
            )
    room = LabelRoom(
        inside=(AXIS_LEFT + 1, AXIS_BOTTOM + 1, AXIS_LEFT + plot_width - 1, top - 1),
        clearance=LINE_CLEARANCE,
    )
    steady = switch_on.get("steady_current")
    if steady is not None:
        room.lines.append((AXIS_LEFT, py(steady), AXIS_LEFT + plot_width, py(steady)))
        _dashed(drawing, (*room.lines[-1], 0.6, [4, 2]))
    settle = switch_on.get("settle_time")
    if settle is not None:
        room.lines.append((px(settle), AXIS_BOTTOM, px(settle), top))
        _dashed(drawing, (*room.lines[-1], 0.9, [3, 2]))
    stretches, unnamed = _glow_line(drawing, moments, (px, py), box, room)
    labels = []  # drawn last, each on a white ground, so that no line runs through them
    inrush = look.inrush_moment(moments)
    if inrush is not None and switch_on.get("inrush_peak_current") is not None:
        at = (px(inrush["time"]), py(switch_on["inrush_peak_current"]))
        labels.append(_inrush(drawing, look.inrush_words(switch_on, inrush), at, room))
    if settle is not None:
        labels.append(_settle_label(f"settled at {look.seconds(settle)}", px(settle), room))
    if steady is not None:
        labels.append(_steady_label(f"steady {steady:.3f} A RMS", py(steady), room))
    for label in labels:
        drawing.add(_on_white(label))
    draw_frame(drawing, box)
    draw_axis_labels(drawing, box, (look.TIME_AXIS_WORDS, look.CURRENT_AXIS_WORDS))
    marks = (
        peaks_clipped(switch_on, moments, scale),
        inrush is not None and scale.y(switch_on.get("inrush_peak_current") or 0.0) > 1.0,
    )
    drawing.add(_key(switch_on, moments, marks, (AXIS_LEFT + plot_width + LEGEND_GAP, height)))
    return drawing, stretches, unnamed


def _rows(room: LabelRoom) -> list[float]:
    """Baselines [pt] a label may take inside the frame, from the top down."""
    bottom, top = room.inside[1], room.inside[3]
    return [top - LABEL_SIZE - 1 - ROW * i for i in range(int((top - bottom - LABEL_SIZE) // ROW))]


def _placed(room: LabelRoom, places: list[tuple[float, float, str]], words: str) -> String:
    """A label at the first free one of `places` (x, baseline y, anchor) [pt]."""
    labels = [_label(x, y, words, anchor) for x, y, anchor in places]
    return room.place([(_ground(label), label) for label in labels])


def _inrush(drawing: Drawing, words: str, at: tuple[float, float], room: LabelRoom) -> String:
    """The inrush peak's mark (a dot, or a triangle under the frame's top where the peak is
    above it) and its label, which states the peak's value."""
    x, y = at
    top = room.inside[3] + 1
    rows = _rows(room)
    if y <= top:
        drawing.add(Circle(x, y, 2.6, fillColor=INK, strokeColor=None))
        room.boxes.append((x - 3, y - 3, x + 3, y + 3))
        rows = [y - 2.5, *rows]
    else:
        drawing.add(_clipped_mark(x, top))
        room.boxes.append((x - 3.5, top - 6, x + 3.5, top))
    places = [(x + 6, row, "start") for row in rows] + [(x - 6, row, "end") for row in rows]
    return _placed(room, places, words)


def _clipped_mark(x: float, top: float) -> Polygon:
    """A triangle pointing up with its tip on the frame's top: a peak above the frame."""
    return Polygon([x, top, x - 3, top - 5.5, x + 3, top - 5.5], fillColor=INK, strokeColor=None)


def _settle_label(words: str, x: float, room: LabelRoom) -> String:
    """Beside the settling line, on the side with room, as high as is free."""
    sides = [(x + 4, "start"), (x - 4, "end")]
    if x > room.inside[0] + 0.7 * (room.inside[2] - room.inside[0]):
        sides.reverse()
    return _placed(room, [(sx, row, anchor) for row in _rows(room) for sx, anchor in sides], words)


def _steady_label(words: str, y: float, room: LabelRoom) -> String:
    """Along the steady line, under or over it, from its right end."""
    left, right = room.inside[0] + 2, room.inside[2] - 2
    along = [(right, "end"), ((left + right) / 2, "middle"), (left, "start")]
    rows = (y - LABEL_SIZE - 3.5, y + 4.5)
    return _placed(room, [(x, row, anchor) for x, anchor in along for row in rows], words)


def _dashed(drawing: Drawing, line: tuple) -> None:
    """A dashed line (x1, y1, x2, y2, width, dashes) [pt] in the steady colour."""
    *ends, width, dashes = line
    drawing.add(Line(*ends, strokeColor=STEADY_LINE, strokeWidth=width, strokeDashArray=dashes))


def _ground(label: String) -> tuple[float, float, float, float]:
    """The box [pt] a label's white ground covers."""
    width = stringWidth(label.text, label.fontName, label.fontSize)
    left = {"start": label.x, "middle": label.x - width / 2, "end": label.x - width}[
        label.textAnchor
    ]
    return (left - 1, label.y - 2, left + width + 1, label.y + label.fontSize)


def _on_white(label: String) -> Group:
    """A label over a white box of its size."""
    x0, y0, x1, y1 = _ground(label)
    return Group(Rect(x0, y0, x1 - x0, y1 - y0, fillColor=colors.white, strokeColor=None), label)


def _glow_line(
    drawing: Drawing, moments: list[dict], scale: tuple, box: tuple, room: LabelRoom
) -> tuple[int, int]:
    """Each stretch over a dark edge in its glow's colour, named above the plot where it fits.

    `scale` is the (px, py) pair mapping seconds and amperes to the drawing; the line is added
    to `room` as one for labels to keep clear of where they can.
    """
    px, py = scale
    left, bottom, width, height = box
    stretches = look.glow_stretches(moments)
    starts = [px(stretch[0]["time"]) for _, stretch in stretches]
    rows = look.name_rows(
        starts, [glow for glow, _ in stretches], NAME_ROWS, NAME_CHARACTER, left + width
    )
    for (glow, stretch), x, row in zip(stretches, starts, rows):
        points = [(px(m["time"]), py(m["current"])) for m in stretch]
        room.soft.extend(polyline_segments(points))
        flat = [c for point in points for c in point]
        for colour, stroke in ((GLOW_EDGE, 2.8), (colors.HexColor(look.glow_colour(glow)), 1.6)):
            drawing.add(PolyLine(flat, strokeColor=colour, strokeWidth=stroke, strokeLineJoin=1))
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


def _key(switch_on: dict, moments: list[dict], marks: tuple[bool, bool], corner: tuple) -> Group:
    """The glow classes drawn, then the lines and the mark the plot holds, from the top-left
    `corner` (x, y) [pt] down; rows close up where there are many.

    `marks` says whether peaks are clipped at the frame's top, and whether the inrush peak
    is among them (its mark is then a triangle on the frame's top).
    """
    left, top = corner
    clipped, inrush_above = marks
    lines = [("peak current, each half cycle", PEAK_LINE, [1, 1.5], False)]
    if switch_on.get("steady_current") is not None:
        lines.append(("steady current", STEADY_LINE, [4, 2], False))
    if switch_on.get("settle_time") is not None:
        lines.append(("within 10 % of steady from", STEADY_LINE, [3, 2], True))
    glows = look.glows_seen(moments)
    inrush = switch_on.get("inrush_peak_current") is not None
    count = len(glows) + len(lines) + int(clipped) + int(inrush)
    step = min(LEGEND_ROW, (top - 8 - KEY_FOOT) / max(count, 1))
    group = Group()
    group.add(String(left, top - 8, "Key", fontName=FONT_BOLD, fontSize=LABEL_SIZE, fillColor=INK))
    row = top - 8
    text_left = left + 20
    for glow in glows:
        row -= step
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
    for words, colour, dashes, vertical in lines:
        row -= step
        ends = (
            (left + 7, row - 2, left + 7, row + 7)
            if vertical
            else (left, row + 3, left + 14, row + 3)
        )
        group.add(Line(*ends, strokeColor=colour, strokeWidth=0.8, strokeDashArray=dashes))
        group.add(_label(text_left, row, words))
    if clipped:
        row -= step
        group.add(_label(text_left, row, look.CLIPPED_KEY))
    if inrush:
        row -= step
        if inrush_above:
            group.add(_clipped_mark(left + 7, row + 6.5))
            group.add(_label(text_left, row, "inrush peak, above the frame"))
        else:
            group.add(Circle(left + 7, row + 3, 2.6, fillColor=INK, strokeColor=None))
            group.add(_label(text_left, row, "inrush peak (instantaneous)"))
    return group
