"""The power-up plot as SVG: unit volts against source volts, the healthy band, the readings.

Readings are marked by status in shape as well as colour, so the plot survives a
black-and-white print.
"""

from __future__ import annotations

import math
import textwrap
import xml.etree.ElementTree as ET

from . import switch_on_look as look

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
GRID = "#dddddd"
# The declared load in words, wrapped under the legend.
MODEL_LINE_WIDTH = 100
MODEL_LINES = 3

# The switch-on panel under the readings plot: a healthy unit's lamp current over time.
PANEL_PLOT_TOP = 60  # [px] below the panel's top: its title, then two rows of glow names
PANEL_PLOT_HEIGHT = 150
LEGEND_BELOW_PLOT = 50  # [px] from the plot's bottom to the glow legend's baseline
NOTE_LINE_HEIGHT = 15
NOTE_LINE_WIDTH = 90  # characters of an 11 px line that fit the plot's width
# What the lines mean (2), the settling, glow names left out where crowded, the behaviour (3).
NOTE_LINES = 7
BEHAVIOUR_LINES = 3
PANEL_HEIGHT = (
    PANEL_PLOT_TOP + PANEL_PLOT_HEIGHT + LEGEND_BELOW_PLOT + NOTE_LINE_HEIGHT * NOTE_LINES + 12
)
REFUSED_LINES = 2
REFUSED_HEIGHT = 20 + NOTE_LINE_HEIGHT * REFUSED_LINES
NAME_ROWS = (38, 51)  # [px] below the panel's top
NAME_CHARACTER = 5.6  # [px] width of a character of the 10 px glow names, about
# Labels inside the plot get a white edge so that the lines under them do not hide them.
LABEL_HALO = {"stroke": "white", "stroke-width": "3", "paint-order": "stroke"}


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


def _wrapped(words: str, width: int, most: int) -> list[str]:
    """`words` in lines of `width` characters, at most `most` of them (the last shortened)."""
    lines = textwrap.wrap(words, width)
    if len(lines) > most:
        lines = [
            *lines[: most - 1],
            textwrap.shorten(" ".join(lines[most - 1 :]), width, placeholder=" ..."),
        ]
    return lines


def _axes(
    parent,
    *,
    box: tuple[float, float, float, float],
    largest: tuple[float, float],
    labels: tuple[str, str],
):
    """Grid, tick labels, frame and axis labels of one panel; returns its (px, py) scales.

    `box` is (left, top, width, height) [px]; both axes run from zero to a round number at
    or above the `largest` x and y values; `labels` are the x and y axis words.
    """
    left, top, width, height = box
    (x_top, x_step), (y_top, y_step) = _range(largest[0]), _range(largest[1])

    def px(v: float) -> float:
        return left + v / x_top * width

    def py(v: float) -> float:
        return top + height - v / y_top * height

    axes = ET.SubElement(parent, "g", **{"class": "axes"})
    for i in range(int(round(x_top / x_step)) + 1):
        v = i * x_step
        x = f"{px(v):.1f}"
        ET.SubElement(axes, "line", x1=x, x2=x, y1=str(top), y2=str(top + height), stroke=GRID)
        ET.SubElement(
            axes, "text", x=x, y=str(top + height + 14), **{"text-anchor": "middle"}
        ).text = f"{v:g}"
    for i in range(int(round(y_top / y_step)) + 1):
        v = i * y_step
        y = py(v)
        ET.SubElement(
            axes,
            "line",
            x1=str(left),
            x2=str(left + width),
            y1=f"{y:.1f}",
            y2=f"{y:.1f}",
            stroke=GRID,
        )
        ET.SubElement(
            axes, "text", x=str(left - 6), y=f"{y + 4:.1f}", **{"text-anchor": "end"}
        ).text = f"{v:g}"
    ET.SubElement(
        axes,
        "rect",
        x=str(left),
        y=str(top),
        width=str(width),
        height=str(height),
        fill="none",
        stroke="#333333",
    )
    ET.SubElement(
        axes,
        "text",
        x=f"{left + width / 2:.1f}",
        y=str(top + height + 30),
        **{"text-anchor": "middle", "class": "x-label"},
    ).text = labels[0]
    middle = f"{top + height / 2:.1f}"
    ET.SubElement(
        axes,
        "text",
        x="14",
        y=middle,
        transform=f"rotate(-90 14 {middle})",
        **{"text-anchor": "middle", "class": "y-label"},
    ).text = labels[1]
    return px, py


def _range(largest: float) -> tuple[float, float]:
    """(top, step) of an axis from zero that holds `largest`."""
    step = _nice_step(largest)
    return math.ceil(largest / step) * step, step


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
    px, py = _axes(
        svg,
        box=(LEFT, TOP, plot_w, plot_h),
        largest=(x_max, y_max),
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
    model = _wrapped(
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
        for offset, line in enumerate(_wrapped(words, NOTE_LINE_WIDTH, REFUSED_LINES)):
            ET.SubElement(
                svg,
                "text",
                x=str(LEFT),
                y=str(HEIGHT + 20 + NOTE_LINE_HEIGHT * offset),
                **{"class": "switch-on-refused"},
            ).text = line
    return ET.tostring(svg, encoding="unicode")


def switch_on_panel(svg, switch_on: dict, top: float) -> None:
    """Draw a healthy unit's switch-on under the readings plot, from `top` [px] down.

    The lamp's RMS current per half cycle against time, each stretch in the colour of its glow
    class with the class named where it begins; the peak current of each half cycle dotted;
    the inrush peak, the steady current and the settling time marked and labelled; a legend
    in words and the behaviour as a sentence.
    """
    panel = ET.SubElement(svg, "g", **{"class": "switch-on"})
    moments = look.moments_of(switch_on)
    volts = switch_on["source_voltage"]
    ET.SubElement(
        panel, "text", x=str(LEFT), y=f"{top + 22:.0f}", **{"font-size": "13"}
    ).text = f"Switch-on at {volts:g} V: a healthy unit's lamp current over time"
    plot_w, plot_h = WIDTH - LEFT - RIGHT, PANEL_PLOT_HEIGHT
    plot_top = top + PANEL_PLOT_TOP
    px, py = _axes(
        panel,
        box=(LEFT, plot_top, plot_w, plot_h),
        largest=look.extent(switch_on, moments),
        labels=("Time since switch-on [s]", "Lamp current [A]"),
    )
    peaks = [m for m in moments if m.get("peak_current") is not None]
    if peaks:
        ET.SubElement(
            panel,
            "polyline",
            fill="none",
            stroke=look.PEAK_LINE,
            points=" ".join(f"{px(m['time']):.1f},{py(m['peak_current']):.1f}" for m in peaks),
            **{"stroke-width": "1", "stroke-dasharray": "1.5 2.5", "class": "peak-current"},
        )
    steady = switch_on.get("steady_current")
    if steady is not None:
        _marked_line(
            panel,
            (LEFT, py(steady), LEFT + plot_w, py(steady)),
            (LEFT + plot_w - 4, py(steady) + 12, f"steady {steady:.3f} A RMS", "end"),
            ("steady-current", "0.8", "6 3"),
        )
    stretches, unnamed = _glow_line(panel, moments, px, py, top)
    settle = switch_on.get("settle_time")
    if settle is not None:
        # Under the inrush label, on the side of the line with room.
        x = px(settle)
        left_of_line = x > LEFT + 0.7 * plot_w
        _marked_line(
            panel,
            (x, plot_top, x, plot_top + plot_h),
            (
                x - 4 if left_of_line else x + 4,
                plot_top + 30,
                f"settled at {look.seconds(settle)}",
                "end" if left_of_line else "start",
            ),
            ("settle-time", "1.2", "5 3"),
        )
    inrush = look.inrush_moment(moments)
    if switch_on.get("inrush_peak_current") is not None and inrush is not None:
        x, y = px(inrush["time"]), py(switch_on["inrush_peak_current"])
        ET.SubElement(
            panel,
            "circle",
            cx=f"{x:.1f}",
            cy=f"{y:.1f}",
            r="4",
            fill="#111111",
            **{"class": "inrush-peak"},
        )
        ET.SubElement(
            panel,
            "text",
            x=f"{x + 9:.1f}",
            y=f"{max(y + 4, plot_top + 14):.1f}",
            **{"class": "inrush-label", **LABEL_HALO},
        ).text = look.inrush_words(switch_on, inrush)
    notes = [
        *_wrapped(look.LINES_WORDS, NOTE_LINE_WIDTH, 2),
        look.settling_sentence(switch_on),
        *_wrapped(look.crowded_sentence(stretches, unnamed), NOTE_LINE_WIDTH, 1),
        *_wrapped(look.behaviour_words(switch_on), NOTE_LINE_WIDTH, BEHAVIOUR_LINES),
    ]
    _switch_on_legend(panel, look.glows_seen(moments), notes, plot_top + plot_h + LEGEND_BELOW_PLOT)


def _glow_line(panel, moments: list[dict], px, py, top: float) -> tuple[int, int]:
    """The RMS current, stretch by stretch in its glow's colour, each class named at its start.

    Returns the number of stretches and of those left unnamed: where the glow changes too
    often for both rows of names, a stretch is told by its colour alone.
    """
    line = ET.SubElement(panel, "g", **{"class": "glow-line"})
    names = ET.SubElement(panel, "g", **{"class": "glow-names", "font-size": "10"})
    stretches = look.glow_stretches(moments)
    starts = [px(stretch[0]["time"]) for _, stretch in stretches]
    rows = look.name_rows(
        starts, [glow for glow, _ in stretches], len(NAME_ROWS), NAME_CHARACTER, WIDTH
    )
    for (glow, stretch), x, row in zip(stretches, starts, rows):
        points = " ".join(f"{px(m['time']):.1f},{py(m['current']):.1f}" for m in stretch)
        for stroke, width in ((look.GLOW_EDGE, "4.2"), (look.glow_colour(glow), "2.4")):
            ET.SubElement(
                line,
                "polyline",
                fill="none",
                stroke=stroke,
                points=points,
                **{"stroke-width": width, "stroke-linejoin": "round", "class": "glow"},
            )
        if row is None:
            continue
        ET.SubElement(
            names, "text", x=f"{x:.1f}", y=f"{top + NAME_ROWS[row]:.1f}", **{"class": "glow-name"}
        ).text = glow
        _line(
            names,
            (x, top + NAME_ROWS[row] + 3, x, top + PANEL_PLOT_TOP + PANEL_PLOT_HEIGHT),
            stroke="#b0b0b0",
            **{"stroke-width": "0.6", "stroke-dasharray": "2 3", "class": "glow-change"},
        )
    return len(stretches), rows.count(None)


def _line(parent, ends: tuple, **attributes) -> None:
    """A straight line from (x1, y1, x2, y2) [px] with these SVG attributes."""
    x1, y1, x2, y2 = (f"{value:.1f}" for value in ends)
    ET.SubElement(parent, "line", x1=x1, y1=y1, x2=x2, y2=y2, **attributes)


def _marked_line(panel, ends: tuple, label: tuple, style: tuple) -> None:
    """A dashed line (x1, y1, x2, y2) [px] and its label (x, y, words, anchor).

    `style` is (class, width, dashes); the label's class is the line's first word + "-label".
    """
    css, width, dashes = style
    _line(
        panel,
        ends,
        stroke=look.STEADY_LINE,
        **{"stroke-width": width, "stroke-dasharray": dashes, "class": css},
    )
    x, y, words, anchor = label
    ET.SubElement(
        panel,
        "text",
        x=f"{x:.1f}",
        y=f"{y:.1f}",
        **{
            "text-anchor": anchor,
            "class": f"{css.split('-')[0]}-label",
            "font-size": "10",
            **LABEL_HALO,
        },
    ).text = words


def _switch_on_legend(panel, glows: list[str], notes: list[str], y: float) -> None:
    """Glow swatches with their names, then the notes one to a line."""
    legend = ET.SubElement(panel, "g", **{"class": "switch-on-legend"})
    ET.SubElement(legend, "text", x=str(LEFT), y=f"{y:.1f}").text = "Lamp glow:"
    x = LEFT + 70
    for glow in glows:
        ET.SubElement(
            legend,
            "rect",
            x=f"{x:.1f}",
            y=f"{y - 9:.1f}",
            width="16",
            height="9",
            fill=look.glow_colour(glow),
            stroke=look.GLOW_EDGE,
            **{"stroke-width": "1"},
        )
        ET.SubElement(legend, "text", x=f"{x + 20:.1f}", y=f"{y:.1f}").text = glow
        x += 32 + 6 * len(glow)
    for offset, words in enumerate(notes, start=1):
        ET.SubElement(
            legend,
            "text",
            x=str(LEFT),
            y=f"{y + NOTE_LINE_HEIGHT * offset:.1f}",
            **{"class": "switch-on-note"},
        ).text = words
