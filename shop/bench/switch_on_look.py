"""How a switch-on is drawn, alike in the SVG plot and on the certificate: colours and words.

Reads only the switch-on block of ``shop.bench.switch_on`` (plain data), so that the
certificate's PDF code can use it without the physics.
"""

from __future__ import annotations

import math

# Our own palette for the glow classes of shop.physics.glow.GLOW_CLASSES, read as the words
# that module gives its class limits: dark, dull red, orange, yellow, yellow-white. Both
# plots draw each stretch over a dark edge so that the pale ones show on white paper, and
# name the class where it begins, so colour is never needed to read it.
GLOW_COLOURS = {
    "dark": "#3c3c3c",
    "faint": "#8e2a1e",
    "dull": "#e07a1f",
    "medium": "#f3cd4a",
    "bright": "#fff5cf",
}
UNKNOWN_GLOW_COLOUR = "#9a9a9a"  # a class this palette does not know yet
GLOW_EDGE = "#262626"
PEAK_LINE = "#8c8c8c"
STEADY_LINE = "#1f4e79"
LINES_WORDS = (
    "Line: the lamp's RMS current in each half cycle, coloured by its glow; dotted: the peak "
    "current in each half cycle; dashed: the steady current."
)
CLIPPED_WORDS = (
    "The current axis fits the RMS current: peaks above the frame are clipped (the inrush "
    "peak's value is in its label)."
)
CLIPPED_KEY = "peaks above the frame are clipped"
TIME_AXIS_WORDS = "Time since switch-on [s], log scale"
CURRENT_AXIS_WORDS = "Lamp current [A]"


def lines_words(clipped: bool) -> str:
    """What the plot's lines mean, and that peaks are clipped where any is."""
    return f"{LINES_WORDS} {CLIPPED_WORDS}" if clipped else LINES_WORDS


def volts(value: float) -> str:
    """Source volts to three significant figures: "121 V", "99.5 V"."""
    return f"{float(f'{float(value):.3g}'):g} V"


def glow_colour(glow: str) -> str:
    """The palette's colour of a glow class, as #rrggbb (grey for a class it does not know)."""
    return GLOW_COLOURS.get(glow, UNKNOWN_GLOW_COLOUR)


def moments_of(switch_on: dict) -> list[dict]:
    """The block's moments that can be drawn: with a time and a current."""
    return [
        moment
        for moment in switch_on.get("glow_over_time", [])
        if moment.get("time") is not None and moment.get("current") is not None
    ]


def glows_seen(moments: list[dict]) -> list[str]:
    """The glow classes among the moments: the palette's in its order, then any others."""
    seen = {moment["glow"] for moment in moments}
    return [glow for glow in GLOW_COLOURS if glow in seen] + sorted(seen - set(GLOW_COLOURS))


def glow_stretches(moments: list[dict]) -> list[tuple[str, list[dict]]]:
    """The moments split into stretches of one glow class, each with the moment before it.

    A moment's glow holds from the previous moment's time to its own, so a stretch is drawn
    from the moment before its first (where the class changed) to its last.
    """
    stretches: list[tuple[str, list[dict]]] = []
    for index, moment in enumerate(moments):
        if stretches and stretches[-1][0] == moment["glow"]:
            stretches[-1][1].append(moment)
        else:
            stretches.append((moment["glow"], moments[max(index - 1, 0) : index + 1]))
    return stretches


def name_rows(
    starts: list[float], names: list[str], rows: int, character: float, right: float
) -> list[int | None]:
    """Where to write each stretch's glow name: a row index, or None where no row has room.

    Parameters
    ----------
    starts : list of float
        Where each stretch begins along the time axis, left to right [px or pt].
    names : list of str
        The glow class of each stretch.
    rows : int
        Rows of names above the plot.
    character : float
        Width of one character of the names, about [px or pt].
    right : float
        No name may run past this [px or pt].

    Returns
    -------
    list of int or None
        Per stretch; a name goes in the first row where the one before it has ended.
    """
    ends = [-math.inf] * rows
    placed: list[int | None] = []
    for start, name in zip(starts, names, strict=True):
        width = character * (len(name) + 1)
        row = next((row for row, end in enumerate(ends) if start >= end), None)
        if row is not None and start + width > right:
            row = None
        if row is not None:
            ends[row] = start + width
        placed.append(row)
    return placed


def seconds(value: float) -> str:
    """A time since switch-on: "0.242 s", "12.50 s"."""
    return f"{value:.3f} s" if value < 1 else f"{value:.2f} s"


def inrush_moment(moments: list[dict]) -> dict | None:
    """The moment holding the largest peak current (the inrush half cycle), if any."""
    peaks = [moment for moment in moments if moment.get("peak_current") is not None]
    return max(peaks, key=lambda moment: moment["peak_current"]) if peaks else None


def inrush_words(switch_on: dict, moment: dict) -> str:
    return (
        f"inrush peak {switch_on['inrush_peak_current']:.2f} A (instantaneous) at "
        f"{seconds(moment['time'])}"
    )


def settling_sentence(switch_on: dict) -> str:
    """When the current came within 10 % of steady, or that it did not in the time followed."""
    settle = switch_on.get("settle_time")
    if settle is not None:
        return f"Within 10 % of the steady current from {seconds(settle)} on."
    if switch_on.get("steady_current") is None:
        return "No steady current: the unit does not settle through this lamp."
    followed = switch_on.get("followed_for") or 0.0
    return f"Not within 10 % of the steady current in the {seconds(followed)} followed."


def crowded_sentence(stretches: int, unnamed: int) -> str:
    """Said when some stretches were too short to name ("" when every one is named)."""
    if not unnamed:
        return ""
    return (
        f"The glow changes {stretches - 1} times: {unnamed} stretches too short to name are "
        "told by their colour."
    )


def behaviour_words(switch_on: dict) -> str:
    """The block's sentence, or its behaviour code in words where it has none."""
    words = switch_on.get("behaviour_words")
    if words:
        return words
    return f"Switch-on behaviour: {str(switch_on.get('behaviour', 'not known')).replace('_', ' ')}."
