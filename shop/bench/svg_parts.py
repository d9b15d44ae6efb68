"""Pieces both panels of the SVG power-up plot draw with: the page's width and margins, a
panel's grid, ticks and frame, wrapped lines of words, and a straight line."""

from __future__ import annotations

import textwrap
import xml.etree.ElementTree as ET

from .switch_on_axes import Tick

WIDTH = 640
LEFT, RIGHT = 64, 20
GRID = "#dddddd"
FRAME = "#333333"
# Width of an average character of the plot's sans-serif font, in font sizes, about (wide
# enough for DejaVu Sans, the widest of the usual ones).
CHARACTER_EM = 0.6


def text_width(words: str, size: float) -> float:
    """About how wide `words` run at font size `size` [px]."""
    return CHARACTER_EM * size * len(words)


def wrapped(words: str, width: int, most: int) -> list[str]:
    """`words` in lines of `width` characters, at most `most` of them (the last shortened)."""
    lines = textwrap.wrap(words, width)
    if len(lines) > most:
        lines = [
            *lines[: most - 1],
            textwrap.shorten(" ".join(lines[most - 1 :]), width, placeholder=" ..."),
        ]
    return lines


def line(parent, ends: tuple, **attributes) -> None:
    """A straight line from (x1, y1, x2, y2) [px] with these SVG attributes."""
    x1, y1, x2, y2 = (f"{value:.1f}" for value in ends)
    ET.SubElement(parent, "line", x1=x1, y1=y1, x2=x2, y2=y2, **attributes)


def axes(
    parent,
    *,
    box: tuple[float, float, float, float],
    ticks: tuple[list[Tick], list[Tick]],
    labels: tuple[str, str],
) -> None:
    """Grid, tick labels, frame and axis labels of one panel.

    `box` is (left, top, width, height) [px]; `ticks` are the x and y axes' ticks, each at a
    fraction of its axis (a tick without a label draws its grid line only); `labels` are the
    x and y axis words.
    """
    left, top, width, height = box
    x_ticks, y_ticks = ticks
    group = ET.SubElement(parent, "g", **{"class": "axes"})
    for tick in x_ticks:
        x = left + tick.at * width
        line(group, (x, top, x, top + height), stroke=GRID)
        if tick.label is not None:
            ET.SubElement(
                group,
                "text",
                x=f"{x:.1f}",
                y=str(top + height + 14),
                **{"text-anchor": "middle", "class": "x-tick"},
            ).text = tick.label
    for tick in y_ticks:
        y = top + height - tick.at * height
        line(group, (left, y, left + width, y), stroke=GRID)
        if tick.label is not None:
            ET.SubElement(
                group,
                "text",
                x=str(left - 6),
                y=f"{y + 4:.1f}",
                **{"text-anchor": "end", "class": "y-tick"},
            ).text = tick.label
    ET.SubElement(
        group,
        "rect",
        x=str(left),
        y=str(top),
        width=str(width),
        height=str(height),
        fill="none",
        stroke=FRAME,
    )
    ET.SubElement(
        group,
        "text",
        x=f"{left + width / 2:.1f}",
        y=str(top + height + 30),
        **{"text-anchor": "middle", "class": "x-label"},
    ).text = labels[0]
    middle = f"{top + height / 2:.1f}"
    ET.SubElement(
        group,
        "text",
        x="14",
        y=middle,
        transform=f"rotate(-90 14 {middle})",
        **{"text-anchor": "middle", "class": "y-label"},
    ).text = labels[1]
