"""The power-up plot as reportlab vector graphics: unit volts against source volts.

The healthy band and line come from the snapshot's curve. Each reading is marked by its status
in shape as well as colour, with the marks and words of the web plot
(``shop.bench.plot_svg.MARKERS``), so the plot reads the same in black and white.
"""

from __future__ import annotations

from reportlab.graphics.charts.utils import ticks
from reportlab.graphics.shapes import Circle, Drawing, Group, Line, Polygon, PolyLine, Rect, String
from reportlab.lib import colors

from shop.bench.plot_svg import MARKERS
from shop.bench.switch_on_axes import Tick

from .styles import FONT, FONT_BOLD, INK, MUTED

AXIS_LEFT = 38  # room for the tick labels and the rotated y label
AXIS_BOTTOM = 28  # room for the tick labels and the x label
TOP_PAD = 6
LEGEND_WIDTH = 148
LEGEND_GAP = 14
LEGEND_ROW = 13
TICK_COUNTS = (4, 5, 6, 7)
LABEL_SIZE = 7.5
MARKER_RADIUS = 3.4
MARKER_STROKE = 1.2
BAND_FILL = colors.HexColor("#cfe0ee")
BAND_EDGE = colors.HexColor("#4a7fa8")
HEALTHY_LINE = colors.HexColor("#1f4e79")
GRID = colors.HexColor("#e4e4e4")
BAND_WORDS = "healthy band (predicted)"
HEALTHY_WORDS = "healthy unit (predicted)"


def marker(shape: str, x: float, y: float, colour, radius: float = MARKER_RADIUS) -> Group:
    """One reading's mark centred on (x, y): hollow circle or diamond, triangle, cross or
    filled square."""
    ink = colors.HexColor(colour)
    group = Group()
    if shape == "circle":
        group.add(Circle(x, y, radius, fillColor=None, strokeColor=ink, strokeWidth=MARKER_STROKE))
    elif shape == "square":
        group.add(
            Rect(
                x - radius,
                y - radius,
                2 * radius,
                2 * radius,
                fillColor=ink,
                strokeColor=ink,
                strokeWidth=MARKER_STROKE,
            )
        )
    elif shape == "cross":
        for sign in (1, -1):
            group.add(
                Line(
                    x - radius,
                    y - sign * radius,
                    x + radius,
                    y + sign * radius,
                    strokeColor=ink,
                    strokeWidth=1.8,
                )
            )
    elif shape in ("triangle_up", "triangle_down"):
        apex = radius if shape == "triangle_up" else -radius
        group.add(
            Polygon(
                [x, y + apex, x - radius, y - apex, x + radius, y - apex],
                fillColor=ink,
                strokeColor=ink,
                strokeWidth=MARKER_STROKE,
            )
        )
    elif shape == "diamond":
        group.add(
            Polygon(
                [x, y + radius, x + radius, y, x, y - radius, x - radius, y],
                fillColor=None,
                strokeColor=ink,
                strokeWidth=MARKER_STROKE,
            )
        )
    else:
        raise ValueError(f"marker shape {shape!r} is not one the plot can draw")
    return group


def _status_marker(status: str) -> tuple[str, str, str]:
    try:
        return MARKERS[status]
    except KeyError:
        raise ValueError(
            f"reading status must be one of {', '.join(MARKERS)} (got {status!r})"
        ) from None


def status_words(status: str) -> str:
    """What a reading's status means, in the words of the legend: "draws more than the band"."""
    return _status_marker(status)[2]


def axis_ticks(top: float) -> tuple[list[float], list[str]]:
    """Tick positions from zero to at least `top`, and their labels."""
    positions, labels = ticks(0, top, n=TICK_COUNTS)
    return positions, [label.strip() for label in labels]


def draw_grid(drawing: Drawing, box: tuple, x_axis: tuple, y_axis: tuple) -> None:
    """Grid lines and tick labels of a plot.

    `box` is (left, bottom, width, height) [pt]; each axis is (ticks, labels) from
    `axis_ticks`, the last tick at the box's far edge.
    """
    draw_ticks(
        drawing,
        box,
        *(
            [Tick(float(v), float(v) / float(ticks[-1]), label) for v, label in zip(ticks, labels)]
            for ticks, labels in (x_axis, y_axis)
        ),
    )


def draw_ticks(drawing: Drawing, box: tuple, x_ticks: list[Tick], y_ticks: list[Tick]) -> None:
    """Grid lines and tick labels of a plot whose ticks fall at fractions of each axis.

    `box` is (left, bottom, width, height) [pt]; a tick without a label draws its grid line
    only (``shop.bench.switch_on_axes.Tick``).
    """
    left, bottom, width, height = box
    for tick in x_ticks:
        x = left + tick.at * width
        drawing.add(Line(x, bottom, x, bottom + height, strokeColor=GRID, strokeWidth=0.5))
        if tick.label is not None:
            drawing.add(_tick_label(x, bottom - 9, tick.label, "middle"))
    for tick in y_ticks:
        y = bottom + tick.at * height
        drawing.add(Line(left, y, left + width, y, strokeColor=GRID, strokeWidth=0.5))
        if tick.label is not None:
            drawing.add(_tick_label(left - 4, y - 2.5, tick.label, "end"))


def _tick_label(x: float, y: float, words: str, anchor: str) -> String:
    return String(x, y, words, fontName=FONT, fontSize=LABEL_SIZE, fillColor=INK, textAnchor=anchor)


def draw_frame(drawing: Drawing, box: tuple) -> None:
    """The frame around a plot's `box` (left, bottom, width, height) [pt]."""
    drawing.add(Rect(*box, fillColor=None, strokeColor=INK, strokeWidth=0.8))


def draw_axis_labels(drawing: Drawing, box: tuple, words: tuple[str, str]) -> None:
    """The x axis's words under a plot's `box`, the y axis's turned up beside it."""
    left, bottom, width, height = box
    drawing.add(
        String(
            left + width / 2,
            bottom - AXIS_BOTTOM + 5,
            words[0],
            fontName=FONT,
            fontSize=LABEL_SIZE + 0.5,
            fillColor=INK,
            textAnchor="middle",
        )
    )
    y_label = Group(
        String(
            0,
            0,
            words[1],
            fontName=FONT,
            fontSize=LABEL_SIZE + 0.5,
            fillColor=INK,
            textAnchor="middle",
        )
    )
    y_label.transform = (0, 1, -1, 0, left - AXIS_LEFT + 9, bottom + height / 2)
    drawing.add(y_label)


def readings_plot(test: dict, width: float, height: float) -> Drawing:
    """Unit volts against source volts for one test: band, healthy line, readings and a legend.

    Parameters
    ----------
    test : dict
        One entry of a certificate snapshot's ``tests``: its ``curve`` (source_voltage,
        load_voltage, load_voltage_low, load_voltage_high lists [V]) and ``readings``
        (source_voltage, load_voltage [V] and status each).
    width, height : float
        Size of the drawing [pt]; the legend takes the right-hand ``LEGEND_WIDTH``.
    """
    curve = test["curve"]
    readings = test["readings"]
    sources = [float(v) for v in curve["source_voltage"]]
    x_max = max(sources + [float(r["source_voltage"]) for r in readings] + [1.0])
    y_max = max(
        [float(v) for v in curve["load_voltage_high"]]
        + [float(r["load_voltage"]) for r in readings]
        + [1.0]
    )
    x_ticks, x_labels = axis_ticks(x_max)
    y_ticks, y_labels = axis_ticks(y_max)
    plot_width = width - AXIS_LEFT - LEGEND_GAP - LEGEND_WIDTH
    plot_height = height - AXIS_BOTTOM - TOP_PAD

    def px(volts: float) -> float:
        return AXIS_LEFT + float(volts) / x_ticks[-1] * plot_width

    def py(volts: float) -> float:
        return AXIS_BOTTOM + float(volts) / y_ticks[-1] * plot_height

    drawing = Drawing(width, height)
    box = (AXIS_LEFT, AXIS_BOTTOM, plot_width, plot_height)
    draw_grid(drawing, box, (x_ticks, x_labels), (y_ticks, y_labels))

    upper = [(px(x), py(y)) for x, y in zip(sources, curve["load_voltage_high"])]
    lower = [(px(x), py(y)) for x, y in zip(sources, curve["load_voltage_low"])]
    outline = [coordinate for point in upper + lower[::-1] for coordinate in point]
    drawing.add(
        Polygon(
            outline,
            fillColor=BAND_FILL,
            strokeColor=BAND_EDGE,
            strokeWidth=0.6,
            strokeDashArray=[3, 2],
        )
    )
    drawing.add(
        PolyLine(
            [c for x, y in zip(sources, curve["load_voltage"]) for c in (px(x), py(y))],
            strokeColor=HEALTHY_LINE,
            strokeWidth=1.3,
        )
    )
    draw_frame(drawing, box)
    for reading in readings:
        shape, colour, _ = _status_marker(reading["status"])
        drawing.add(
            marker(shape, px(reading["source_voltage"]), py(reading["load_voltage"]), colour)
        )

    draw_axis_labels(drawing, box, ("Source voltage [V RMS]", "Voltage at the unit [V RMS]"))
    drawing.add(
        _legend(
            {r["status"] for r in readings}, AXIS_LEFT + plot_width + LEGEND_GAP, height - TOP_PAD
        )
    )
    return drawing


def _legend(statuses: set[str], left: float, top: float) -> Group:
    group = Group()
    group.add(String(left, top - 8, "Key", fontName=FONT_BOLD, fontSize=LABEL_SIZE, fillColor=INK))
    row = top - 8 - LEGEND_ROW
    text_left = left + 20
    group.add(
        Rect(
            left,
            row - 1,
            14,
            8,
            fillColor=BAND_FILL,
            strokeColor=BAND_EDGE,
            strokeWidth=0.6,
            strokeDashArray=[3, 2],
        )
    )
    group.add(String(text_left, row, BAND_WORDS, fontName=FONT, fontSize=LABEL_SIZE, fillColor=INK))
    row -= LEGEND_ROW
    group.add(Line(left, row + 3, left + 14, row + 3, strokeColor=HEALTHY_LINE, strokeWidth=1.3))
    group.add(
        String(text_left, row, HEALTHY_WORDS, fontName=FONT, fontSize=LABEL_SIZE, fillColor=INK)
    )
    row -= LEGEND_ROW + 3
    group.add(
        String(left, row, "Readings", fontName=FONT_BOLD, fontSize=LABEL_SIZE, fillColor=MUTED)
    )
    for status, (shape, colour, words) in MARKERS.items():
        if status not in statuses:
            continue
        row -= LEGEND_ROW
        group.add(marker(shape, left + 7, row + 3, colour))
        group.add(String(text_left, row, words, fontName=FONT, fontSize=LABEL_SIZE, fillColor=INK))
    return group
