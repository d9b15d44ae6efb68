"""The power-up plot as SVG: unit volts against source volts, the healthy band, the readings.

Readings are marked by status in shape as well as colour, so the plot survives a
black-and-white print.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET

from .svg_parts import LEFT, RIGHT, WIDTH, axes, wrapped
from .switch_on_axes import linear_ticks
from .switch_on_svg import (
    NOTE_LINE_HEIGHT,
    NOTE_LINE_WIDTH,
    PANEL_HEIGHT,
    REFUSED_HEIGHT,
    REFUSED_LINES,
    switch_on_panel,
)

HEIGHT = 482
TOP, BOTTOM = 36, 154
# Status -> (shape, colour, legend words). Shapes differ so that colour is never needed.
MARKERS = {
    "in_band": ("circle", "#1a6b3a", "in band"),
    "draw_below_band": ("triangle_down", "#8a5a00", "draws less than the band"),
    "draw_above_band": ("triangle_up", "#8a5a00", "draws more than the band"),
    "draw_high": ("cross", "#a11d21", "draws far more than declared"),
    "draw_near_zero": ("square", "#a11d21", "draws almost nothing"),
    "load_cannot_run": ("diamond", "#5a4a8a", "a healthy unit cannot run here"),
}
MARKER_SIZE = 5.5
# The declared load in words, wrapped under the legend.
MODEL_LINE_WIDTH = 100
MODEL_LINES = 3


def _marker(parent, shape: str, x: float, y: float, colour: str) -> None:
    s = MARKER_SIZE
    common = {"stroke": colour, "stroke-width": "1.6", "class": f"marker {shape}"}
    if shape == "circle":
        ET.SubElement(
            parent, "circle", cx=f"{x:.1f}", cy=f"{y:.1f}", r=f"{s:.1f}", fill="none", **common
        )
    elif shape == "square":
        ET.SubElement(
            parent,
            "rect",
            x=f"{x - s:.1f}",
            y=f"{y - s:.1f}",
            width=f"{2 * s:.1f}",
            height=f"{2 * s:.1f}",
            fill=colour,
            **common,
        )
    elif shape == "cross":
        ET.SubElement(
            parent,
            "path",
            d=f"M{x - s:.1f},{y - s:.1f}L{x + s:.1f},{y + s:.1f}"
            f"M{x - s:.1f},{y + s:.1f}L{x + s:.1f},{y - s:.1f}",
            fill="none",
            **{**common, "stroke-width": "2.4"},
        )
    elif shape == "diamond":
        points = f"{x:.1f},{y - s:.1f} {x + s:.1f},{y:.1f} {x:.1f},{y + s:.1f} {x - s:.1f},{y:.1f}"
        ET.SubElement(parent, "polygon", points=points, fill="none", **common)
    else:
        sign = -1 if shape == "triangle_up" else 1
        points = (
            f"{x:.1f},{y + sign * s:.1f} {x - s:.1f},{y - sign * s:.1f} "
            f"{x + s:.1f},{y - sign * s:.1f}"
        )
        ET.SubElement(parent, "polygon", points=points, fill=colour, **common)


def render_svg(
    *,
    prediction: dict,
    readings: list[dict],
    title: str,
    switch_on: dict | None = None,
    switch_on_refused: str | None = None,
) -> str:
    """Draw the plot, and the switch-on panel under it when given.

    Parameters
    ----------
    prediction : dict
        The healthy curves of ``shop.bench.prediction.predict`` (running steps only).
    readings : list of dict
        {source_voltage, load_voltage [V], status} each.
    title : str
        The plot's title.
    switch_on : dict, optional
        A healthy unit's switch-on (``shop.bench.switch_on.switch_on_block``): drawn in a
        second panel.
    switch_on_refused : str, optional
        Why the switch-on could not be modelled: said in a line instead of the panel.
    """
    x_max = max(prediction["source_voltage"] + [r["source_voltage"] for r in readings] + [1.0])
    y_max = max(prediction["load_voltage_high"] + [r["load_voltage"] for r in readings] + [1.0])
    plot_w, plot_h = WIDTH - LEFT - RIGHT, HEIGHT - TOP - BOTTOM
    height = HEIGHT
    if switch_on is not None:
        height += PANEL_HEIGHT
    elif switch_on_refused is not None:
        height += REFUSED_HEIGHT
    svg = ET.Element(
        "svg",
        xmlns="http://www.w3.org/2000/svg",
        width=str(WIDTH),
        height=str(height),
        viewBox=f"0 0 {WIDTH} {height}",
        **{"font-family": "sans-serif", "font-size": "11"},
    )
    ET.SubElement(svg, "title").text = title
    ET.SubElement(svg, "text", x=str(LEFT), y="20", **{"font-size": "13"}).text = title
    x_ticks, y_ticks = linear_ticks(x_max), linear_ticks(y_max)

    def px(volts: float) -> float:
        return LEFT + volts / x_ticks[-1].value * plot_w

    def py(volts: float) -> float:
        return TOP + plot_h - volts / y_ticks[-1].value * plot_h

    axes(
        svg,
        box=(LEFT, TOP, plot_w, plot_h),
        ticks=(x_ticks, y_ticks),
        labels=("Source voltage [V RMS]", "Unit voltage [V RMS]"),
    )

    xs = prediction["source_voltage"]
    upper = [f"{px(x):.1f},{py(y):.1f}" for x, y in zip(xs, prediction["load_voltage_high"])]
    lower = [f"{px(x):.1f},{py(y):.1f}" for x, y in zip(xs, prediction["load_voltage_low"])]
    ET.SubElement(
        svg,
        "polygon",
        points=" ".join(upper + lower[::-1]),
        fill="#9ecae1",
        **{"fill-opacity": "0.5", "stroke": "#4a7fa8", "stroke-dasharray": "4 3", "class": "band"},
    )
    ET.SubElement(
        svg,
        "polyline",
        fill="none",
        stroke="#1f4e79",
        **{"stroke-width": "1.5", "class": "healthy"},
        points=" ".join(
            f"{px(x):.1f},{py(y):.1f}" for x, y in zip(xs, prediction["load_voltage"], strict=True)
        ),
    )
    marks = ET.SubElement(svg, "g", **{"class": "readings"})
    for reading in readings:
        shape, colour, _ = MARKERS[reading["status"]]
        _marker(marks, shape, px(reading["source_voltage"]), py(reading["load_voltage"]), colour)

    legend = ET.SubElement(svg, "g", **{"class": "legend"})
    y = HEIGHT - BOTTOM + 48
    ET.SubElement(
        legend, "text", x=str(LEFT), y=str(y)
    ).text = "Shaded: healthy band for the declared load; line: healthy prediction."
    x = LEFT
    for status in dict.fromkeys(r["status"] for r in readings):
        shape, colour, words = MARKERS[status]
        _marker(legend, shape, x + 6, y + 14, colour)
        ET.SubElement(legend, "text", x=str(x + 16), y=str(y + 18)).text = words
        x += 30 + 6 * len(words)
    cap = prediction["fault_current_cap"]
    lines = (
        f"Fault-current cap: a dead short in the unit would draw at most {cap['current']:.3f} A",
        f"at {cap['source_voltage']:g} V through this lamp, which would then glow {cap['glow']}.",
    )
    model = wrapped(
        f"Declared load: {prediction['model']['summary']}", MODEL_LINE_WIDTH, MODEL_LINES
    )
    lines = (*lines, *model)
    for offset, line in zip(range(36, 36 + 14 * len(lines), 14), lines):
        ET.SubElement(
            legend, "text", x=str(LEFT), y=str(y + offset), **{"class": "fault-cap"}
        ).text = line
    if switch_on is not None:
        switch_on_panel(svg, switch_on, HEIGHT)
    elif switch_on_refused is not None:
        words = f"Switch-on not drawn: the model cannot follow this unit ({switch_on_refused})."
        for offset, line in enumerate(wrapped(words, NOTE_LINE_WIDTH, REFUSED_LINES)):
            ET.SubElement(
                svg,
                "text",
                x=str(LEFT),
                y=str(HEIGHT + 20 + NOTE_LINE_HEIGHT * offset),
                **{"class": "switch-on-refused"},
            ).text = line
    return ET.tostring(svg, encoding="unicode")
