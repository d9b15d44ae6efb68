"""The power-up plot as SVG: unit volts against source volts, the healthy band, the readings.

Readings are marked by status in shape as well as colour, so the plot survives a
black-and-white print.
"""

from __future__ import annotations

import math
import textwrap
import xml.etree.ElementTree as ET

WIDTH, HEIGHT = 640, 482
LEFT, RIGHT, TOP, BOTTOM = 64, 20, 36, 154
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


def _nice_step(span: float) -> float:
    raw = span / 6 if span > 0 else 1
    magnitude = 10 ** math.floor(math.log10(raw))
    return next(m * magnitude for m in (1, 2, 5, 10) if m * magnitude >= raw)


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


def render_svg(*, prediction: dict, readings: list[dict], title: str) -> str:
    """Draw the plot. `readings` are {source_voltage, load_voltage, status} dicts."""
    x_max = max(prediction["source_voltage"] + [r["source_voltage"] for r in readings] + [1.0])
    y_max = max(prediction["load_voltage_high"] + [r["load_voltage"] for r in readings] + [1.0])
    x_step, y_step = _nice_step(x_max), _nice_step(y_max)
    x_top, y_top = math.ceil(x_max / x_step) * x_step, math.ceil(y_max / y_step) * y_step
    plot_w, plot_h = WIDTH - LEFT - RIGHT, HEIGHT - TOP - BOTTOM

    def px(v: float) -> float:
        return LEFT + v / x_top * plot_w

    def py(v: float) -> float:
        return TOP + plot_h - v / y_top * plot_h

    svg = ET.Element(
        "svg",
        xmlns="http://www.w3.org/2000/svg",
        width=str(WIDTH),
        height=str(HEIGHT),
        viewBox=f"0 0 {WIDTH} {HEIGHT}",
        **{"font-family": "sans-serif", "font-size": "11"},
    )
    ET.SubElement(svg, "title").text = title
    ET.SubElement(svg, "text", x=str(LEFT), y="20", **{"font-size": "13"}).text = title
    axes = ET.SubElement(svg, "g", **{"class": "axes"})
    for i in range(int(round(x_top / x_step)) + 1):
        v = i * x_step
        ET.SubElement(
            axes,
            "line",
            x1=f"{px(v):.1f}",
            x2=f"{px(v):.1f}",
            y1=str(TOP),
            y2=str(TOP + plot_h),
            stroke="#dddddd",
        )
        ET.SubElement(
            axes, "text", x=f"{px(v):.1f}", y=str(TOP + plot_h + 14), **{"text-anchor": "middle"}
        ).text = f"{v:g}"
    for i in range(int(round(y_top / y_step)) + 1):
        v = i * y_step
        ET.SubElement(
            axes,
            "line",
            x1=str(LEFT),
            x2=str(LEFT + plot_w),
            y1=f"{py(v):.1f}",
            y2=f"{py(v):.1f}",
            stroke="#dddddd",
        )
        ET.SubElement(
            axes, "text", x=str(LEFT - 6), y=f"{py(v) + 4:.1f}", **{"text-anchor": "end"}
        ).text = f"{v:g}"
    ET.SubElement(
        axes,
        "rect",
        x=str(LEFT),
        y=str(TOP),
        width=str(plot_w),
        height=str(plot_h),
        fill="none",
        stroke="#333333",
    )
    ET.SubElement(
        axes,
        "text",
        x=f"{LEFT + plot_w / 2:.1f}",
        y=str(TOP + plot_h + 30),
        **{"text-anchor": "middle", "class": "x-label"},
    ).text = "Source voltage [V RMS]"
    ET.SubElement(
        axes,
        "text",
        x="14",
        y=f"{TOP + plot_h / 2:.1f}",
        transform=f"rotate(-90 14 {TOP + plot_h / 2:.1f})",
        **{"text-anchor": "middle", "class": "y-label"},
    ).text = "Unit voltage [V RMS]"

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
    model = textwrap.wrap(f"Declared load: {prediction['model']['summary']}", MODEL_LINE_WIDTH)
    if len(model) > MODEL_LINES:
        model = [
            *model[: MODEL_LINES - 1],
            textwrap.shorten(
                " ".join(model[MODEL_LINES - 1 :]), MODEL_LINE_WIDTH, placeholder=" ..."
            ),
        ]
    lines = (*lines, *model)
    for offset, line in zip(range(36, 36 + 14 * len(lines), 14), lines):
        ET.SubElement(
            legend, "text", x=str(LEFT), y=str(y + offset), **{"class": "fault-cap"}
        ).text = line
    return ET.tostring(svg, encoding="unicode")
