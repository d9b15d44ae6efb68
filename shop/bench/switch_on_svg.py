"""The SVG plot's switch-on panel: a healthy unit's lamp current over time, under the readings.

Time runs on a logarithmic axis and the current axis is scaled to the RMS current
(``shop.bench.switch_on_axes``); labels go where they cover no other label, no tick label and
no marked line (``shop.bench.plot_labels``); colours and words are the certificate's
(``shop.bench.switch_on_look``).
"""

from __future__ import annotations

import xml.etree.ElementTree as ET

from . import switch_on_look as look
from .plot_labels import LabelRoom, polyline_segments
from .svg_parts import LEFT, RIGHT, WIDTH, axes, line, text_width, wrapped
from .switch_on_axes import axes_of, clipped_runs, peaks_clipped

PANEL_PLOT_TOP = 60  # [px] below the panel's top: its title, then two rows of glow names
PANEL_PLOT_HEIGHT = 150
LEGEND_BELOW_PLOT = 50  # [px] from the plot's bottom to the glow legend's baseline
NOTE_LINE_HEIGHT = 15
NOTE_LINE_WIDTH = 90  # characters of an 11 px line that fit the plot's width
# What the lines mean (3), the settling, glow names left out where crowded, the behaviour (3).
LINES_LINES = 3
BEHAVIOUR_LINES = 3
NOTE_LINES = LINES_LINES + 2 + BEHAVIOUR_LINES
PANEL_HEIGHT = (
    PANEL_PLOT_TOP + PANEL_PLOT_HEIGHT + LEGEND_BELOW_PLOT + NOTE_LINE_HEIGHT * NOTE_LINES + 12
)
REFUSED_LINES = 2
REFUSED_HEIGHT = 20 + NOTE_LINE_HEIGHT * REFUSED_LINES
NAME_ROWS = (38, 51)  # [px] below the panel's top
NAME_CHARACTER = 6.0  # [px] width of a character of the 10 px glow names, about
TEXT_SIZE = 11  # [px] the panel's words and the inrush label
LABEL_SIZE = 10  # [px] the steady and settling labels
TICK_GAP = 6  # [px] at least between two time labels
# Labels inside the plot get a white edge so that the lines under them do not hide them.
LABEL_HALO = {"stroke": "white", "stroke-width": "3", "paint-order": "stroke"}
ROW = 12  # [px] between the rows a label may take
LINE_CLEARANCE = 2.5  # [px] half the glow line's stroke, and a little more


def _text_box(x: float, y: float, words: str, size: float, anchor: str) -> tuple:
    """The box [px] a label with its baseline at `y` covers, halo included."""
    width = text_width(words, size)
    left = {"start": x, "middle": x - width / 2, "end": x - width}[anchor]
    return (left - 2, y - 0.8 * size - 1, left + width + 2, y + 0.25 * size + 1)


def _candidates(places: list[tuple[float, float, str]], words: str, size: float) -> list:
    """(box, place) of a label at each (x, baseline y, anchor) place, in that order."""
    return [(_text_box(x, y, words, size, anchor), (x, y, anchor)) for x, y, anchor in places]


def switch_on_panel(svg, switch_on: dict, top: float) -> None:
    """Draw a healthy unit's switch-on under the readings plot, from `top` [px] down.

    The lamp's RMS current per half cycle against time since switch-on (logarithmic), each
    stretch in the colour of its glow class with the class named where it begins; the peak
    current of each half cycle dotted and clipped at the frame's top; the inrush peak, the
    steady current and the settling time marked and labelled where no label covers another;
    a legend in words and the behaviour as a sentence.
    """
    panel = ET.SubElement(svg, "g", **{"class": "switch-on"})
    moments = look.moments_of(switch_on)
    ET.SubElement(panel, "text", x=str(LEFT), y=f"{top + 22:.0f}", **{"font-size": "13"}).text = (
        f"Switch-on at {look.volts(switch_on['source_voltage'])}: a healthy unit's lamp "
        "current over time"
    )
    width, height = WIDTH - LEFT - RIGHT, PANEL_PLOT_HEIGHT
    plot_top = top + PANEL_PLOT_TOP
    bottom = plot_top + height
    scale = axes_of(switch_on, moments)

    def px(seconds: float) -> float:
        return LEFT + scale.x(seconds) * width

    def py(amperes: float) -> float:
        return bottom - scale.y(amperes) * height

    time_ticks = scale.time_ticks(
        width, lambda words: text_width(words, TEXT_SIZE), (6, RIGHT), TICK_GAP
    )
    axes(
        panel,
        box=(LEFT, plot_top, width, height),
        ticks=(time_ticks, scale.current_ticks),
        labels=(look.TIME_AXIS_WORDS, look.CURRENT_AXIS_WORDS),
    )
    room = LabelRoom(
        inside=(LEFT + 1, plot_top + 1, LEFT + width - 1, bottom - 1), clearance=LINE_CLEARANCE
    )
    peaks = [m for m in moments if m.get("peak_current") is not None]
    for run in clipped_runs([(scale.x(m["time"]), scale.y(m["peak_current"])) for m in peaks]):
        ET.SubElement(
            panel,
            "polyline",
            fill="none",
            stroke=look.PEAK_LINE,
            points=" ".join(f"{LEFT + u * width:.1f},{bottom - v * height:.1f}" for u, v in run),
            **{"stroke-width": "1", "stroke-dasharray": "1.5 2.5", "class": "peak-current"},
        )
    steady = switch_on.get("steady_current")
    if steady is not None:
        room.lines.append((LEFT, py(steady), LEFT + width, py(steady)))
        _dashed(panel, room.lines[-1], ("steady-current", "0.8", "6 3"))
    settle = switch_on.get("settle_time")
    if settle is not None:
        room.lines.append((px(settle), plot_top, px(settle), bottom))
        _dashed(panel, room.lines[-1], ("settle-time", "1.2", "5 3"))
    stretches, unnamed = _glow_line(panel, moments, (px, py), top, room)
    inrush = look.inrush_moment(moments)
    if switch_on.get("inrush_peak_current") is not None and inrush is not None:
        at = (px(inrush["time"]), py(switch_on["inrush_peak_current"]))
        _inrush(panel, switch_on, inrush, at, room)
    if settle is not None:
        _settle_label(panel, settle, px(settle), room)
    if steady is not None:
        _steady_label(panel, steady, py(steady), room)
    notes = [
        *wrapped(
            look.lines_words(peaks_clipped(switch_on, moments, scale)), NOTE_LINE_WIDTH, LINES_LINES
        ),
        look.settling_sentence(switch_on),
        *wrapped(look.crowded_sentence(stretches, unnamed), NOTE_LINE_WIDTH, 1),
        *wrapped(look.behaviour_words(switch_on), NOTE_LINE_WIDTH, BEHAVIOUR_LINES),
    ]
    _switch_on_legend(panel, look.glows_seen(moments), notes, bottom + LEGEND_BELOW_PLOT)


def _inrush(panel, switch_on: dict, moment: dict, at: tuple[float, float], room) -> None:
    """The inrush peak's mark (a dot, or a triangle on the frame's top where the peak is above
    it) and its label, which states the peak's value."""
    x, y = at
    top = room.inside[1] - 1
    rows = _rows(room)
    if y >= top:
        ET.SubElement(
            panel,
            "circle",
            cx=f"{x:.1f}",
            cy=f"{y:.1f}",
            r="4",
            fill="#111111",
            **{"class": "inrush-peak"},
        )
        room.boxes.append((x - 5, y - 5, x + 5, y + 5))
        rows = [y + 4, *rows]
    else:
        ET.SubElement(
            panel,
            "polygon",
            points=f"{x:.1f},{top:.1f} {x - 4.5:.1f},{top + 8:.1f} {x + 4.5:.1f},{top + 8:.1f}",
            fill="#111111",
            **{"class": "inrush-peak clipped"},
        )
        room.boxes.append((x - 5, top, x + 5, top + 9))
    words = look.inrush_words(switch_on, moment)
    places = [(x + 9, row, "start") for row in rows] + [(x - 9, row, "end") for row in rows]
    _label(panel, room, places, words, ("inrush-label", TEXT_SIZE))


def _rows(room) -> list[float]:
    """Baselines [px] a label may take inside the frame, from the top down."""
    top, bottom = room.inside[1] - 1, room.inside[3] + 1
    return [top + 14 + ROW * i for i in range(int((bottom - top - 4) // ROW))]


def _settle_label(panel, settle: float, x: float, room) -> None:
    """Says "settled at ..." beside the settling line, on the side with room, high up."""
    sides = [(x + 6, "start"), (x - 6, "end")]
    if x > room.inside[0] + 0.7 * (room.inside[2] - room.inside[0]):
        sides.reverse()
    places = [(side_x, row, anchor) for row in _rows(room) for side_x, anchor in sides]
    _label(panel, room, places, f"settled at {look.seconds(settle)}", ("settle-label", LABEL_SIZE))


def _steady_label(panel, steady: float, y: float, room) -> None:
    """Says "steady ... A RMS" along the steady line, under or over it, from its right end."""
    left, right = room.inside[0] + 3, room.inside[2] - 3
    along = [(right, "end"), ((left + right) / 2, "middle"), (left, "start")]
    places = [(x, row, anchor) for x, anchor in along for row in (y + 4 + LABEL_SIZE, y - 7)]
    _label(panel, room, places, f"steady {steady:.3f} A RMS", ("steady-label", LABEL_SIZE))


def _label(panel, room, places: list, words: str, style: tuple[str, int]) -> None:
    """A label at the first free one of `places` (x, baseline y, anchor); `style` is its
    (class, font size [px])."""
    css, size = style
    x, y, anchor = room.place(_candidates(places, words, size))
    ET.SubElement(
        panel,
        "text",
        x=f"{x:.1f}",
        y=f"{y:.1f}",
        **{"text-anchor": anchor, "class": css, "font-size": str(size), **LABEL_HALO},
    ).text = words


def _glow_line(panel, moments: list[dict], scale: tuple, top: float, room) -> tuple[int, int]:
    """The RMS current, stretch by stretch in its glow's colour, each class named at its start.

    `scale` is the (px, py) pair mapping seconds and amperes to the panel. Returns the number
    of stretches and of those left unnamed: where the glow changes too often for both rows of
    names, a stretch is told by its colour alone. The line is added to `room` as one for
    labels to keep clear of where they can.
    """
    px, py = scale
    drawn = ET.SubElement(panel, "g", **{"class": "glow-line"})
    names = ET.SubElement(panel, "g", **{"class": "glow-names", "font-size": "10"})
    stretches = look.glow_stretches(moments)
    starts = [px(stretch[0]["time"]) for _, stretch in stretches]
    rows = look.name_rows(
        starts, [glow for glow, _ in stretches], len(NAME_ROWS), NAME_CHARACTER, WIDTH
    )
    for (glow, stretch), x, row in zip(stretches, starts, rows):
        points = [(px(m["time"]), py(m["current"])) for m in stretch]
        room.soft.extend(polyline_segments(points))
        for stroke, width in ((look.GLOW_EDGE, "4.2"), (look.glow_colour(glow), "2.4")):
            ET.SubElement(
                drawn,
                "polyline",
                fill="none",
                stroke=stroke,
                points=" ".join(f"{x:.1f},{y:.1f}" for x, y in points),
                **{"stroke-width": width, "stroke-linejoin": "round", "class": "glow"},
            )
        if row is None:
            continue
        ET.SubElement(
            names, "text", x=f"{x:.1f}", y=f"{top + NAME_ROWS[row]:.1f}", **{"class": "glow-name"}
        ).text = glow
        line(
            names,
            (x, top + NAME_ROWS[row] + 3, x, top + PANEL_PLOT_TOP + PANEL_PLOT_HEIGHT),
            stroke="#b0b0b0",
            **{"stroke-width": "0.6", "stroke-dasharray": "2 3", "class": "glow-change"},
        )
    return len(stretches), rows.count(None)


def _dashed(panel, ends: tuple, style: tuple) -> None:
    """A dashed line (x1, y1, x2, y2) [px] in the steady colour; `style` is (class, width,
    dashes)."""
    css, width, dashes = style
    line(
        panel,
        ends,
        stroke=look.STEADY_LINE,
        **{"stroke-width": width, "stroke-dasharray": dashes, "class": css},
    )


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
