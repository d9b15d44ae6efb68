"""The switch-on plot's axes, alike in the SVG plot and on the certificate.

Time runs on a logarithmic axis from about the end of the first half cycle to the end of the
time followed, so that a valve set's tens of seconds and the inrush of its first half cycle
both show; the lamp's current runs on a linear axis scaled to the RMS currents, so that a
switch-mode input's tens of milliamperes show beside an inrush peak of amperes (peaks above
the frame are clipped and the inrush peak is said in words).

Reads only the switch-on block (plain data) and answers fractions of the plot's width and
height (0 at the left or bottom edge, 1 at the right or top), which each renderer maps onto
its own box: the SVG's y runs down the page, the PDF's up.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

# The time axis starts this factor before the first moment, so that the first half cycle's
# mark sits inside the frame rather than on its edge.
FIRST_MOMENT_MARGIN = 1.25
LEAST_DECADES = 1.0  # a time axis spans at least a factor of ten
# The current axis reaches at least this factor above the largest RMS current (then up to a
# round number), so that the curve never runs along the frame.
HEADROOM = 1.15
LEAST_CURRENT = 1e-3  # [A] the current axis's smallest top
TICK_COUNT = 6  # about this many steps of the current axis
# Labelled in this order, each where it fits beside those already labelled: decades, then
# the fives between them, then the twos.
MANTISSAS = (1, 5, 2)


@dataclass(frozen=True)
class Tick:
    """A grid line of one axis: its value, where it falls (a fraction of the axis, 0 to 1)
    and its label (None where the label does not fit; the line is still drawn)."""

    value: float
    at: float
    label: str | None


def nice_step(span: float, count: int = TICK_COUNT) -> float:
    """A round step (1, 2 or 5 times a power of ten) that cuts `span` in about `count` steps."""
    raw = span / count if span > 0 else 1.0
    magnitude = 10 ** math.floor(math.log10(raw))
    return next(m * magnitude for m in (1, 2, 5, 10) if m * magnitude >= raw)


def linear_ticks(largest: float, count: int = TICK_COUNT) -> list[Tick]:
    """Ticks from zero to a round number at or above `largest`, all labelled."""
    step = nice_step(largest, count)
    steps = max(math.ceil(largest / step - 1e-9), 1)
    return [Tick(i * step, i / steps, f"{i * step:g}") for i in range(steps + 1)]


@dataclass(frozen=True)
class SwitchOnAxes:
    """Where a switch-on's times [s] and currents [A] fall on its plot.

    Attributes
    ----------
    start, end : float
        The time axis's left and right edges [s] (logarithmic).
    current_ticks : list of Tick
        The current axis's ticks from zero to its top [A].
    """

    start: float
    end: float
    current_ticks: list[Tick]

    @property
    def top(self) -> float:
        """The current at the top of the frame [A]."""
        return self.current_ticks[-1].value

    def x(self, seconds: float) -> float:
        """Fraction of the width at which a time falls (times before the start at 0)."""
        seconds = max(float(seconds), self.start)
        return math.log(seconds / self.start) / math.log(self.end / self.start)

    def y(self, amperes: float) -> float:
        """Fraction of the height at which a current falls (above 1: above the frame)."""
        return float(amperes) / self.top

    def time_ticks(
        self,
        room: float,
        label_width: Callable[[str], float],
        spill: tuple[float, float],
        gap: float = 0.0,
    ) -> list[Tick]:
        """The 1, 2 and 5 ticks of each decade within the axis, labelled where they fit.

        Parameters
        ----------
        room : float
            Width of the plot [px or pt].
        label_width : callable
            Width of a label's text [px or pt].
        spill : tuple of float
            How far a label may run past the left and the right edge [px or pt].
        gap : float, default 0.0
            Least room between two labels [px or pt].

        Returns
        -------
        list of Tick
            In time order; decades are labelled first, then fives, then twos, each only where
            it overlaps no label already placed nor runs past the room allowed.
        """
        ticks = [
            value
            for power in range(
                math.floor(math.log10(self.start)), math.ceil(math.log10(self.end)) + 1
            )
            for mantissa in MANTISSAS
            if self.start * (1 - 1e-9)
            <= (value := round(mantissa * 10.0**power, 12))
            <= self.end * (1 + 1e-9)
        ]
        taken: list[tuple[float, float]] = []
        labels: dict[float, str] = {}
        for value in sorted(ticks, key=lambda v: MANTISSAS.index(_mantissa(v))):
            label = seconds_label(value)
            middle, half = self.x(value) * room, label_width(label) / 2
            left, right = middle - half, middle + half
            if left < -spill[0] or right > room + spill[1]:
                continue
            if any(
                left - gap < other_right and other_left < right + gap
                for other_left, other_right in taken
            ):
                continue
            taken.append((left, right))
            labels[value] = label
        return [Tick(value, self.x(value), labels.get(value)) for value in sorted(ticks)]


def _mantissa(value: float) -> int:
    """1, 2 or 5: the leading digit of a tick's value."""
    return round(value / 10 ** math.floor(math.log10(value) + 1e-9))


def seconds_label(value: float) -> str:
    """A time axis label: "0.01 s", "0.5 s", "1 s", "20 s"."""
    return f"{value:g} s"


def axes_of(switch_on: dict, moments: list[dict]) -> SwitchOnAxes:
    """The axes of a switch-on block's plot, from its drawable moments.

    Parameters
    ----------
    switch_on : dict
        The block (``shop.bench.switch_on``); an old certificate's block, with no key added
        since, reads the same.
    moments : list of dict
        Its moments with a time [s] and an RMS current [A] (``switch_on_look.moments_of``).

    Returns
    -------
    SwitchOnAxes
        Time from ``FIRST_MOMENT_MARGIN`` before the first moment (the end of the first half
        cycle) to ``followed_for``, at least ``LEAST_DECADES`` decades; current from zero to
        a round number ``HEADROOM`` or more above the largest RMS current or the steady
        current, whichever is larger. Peak currents do not widen it.
    """
    times = [float(m["time"]) for m in moments if float(m["time"]) > 0]
    end = float(switch_on.get("followed_for") or max(times, default=0.0))
    start = min(times, default=end / 10**LEAST_DECADES) / FIRST_MOMENT_MARGIN
    if not start > 0:
        start, end = 1e-3, 1e-2  # nothing followed: an empty axis of one decade
    end = max(end, start * 10**LEAST_DECADES)
    currents = [float(m["current"]) for m in moments]
    if switch_on.get("steady_current") is not None:
        currents.append(float(switch_on["steady_current"]))
    largest = max(currents + [LEAST_CURRENT]) * HEADROOM
    return SwitchOnAxes(start, end, linear_ticks(largest))


def clipped_runs(points: list[tuple[float, float]]) -> list[list[tuple[float, float]]]:
    """A line through `points` (fractions of the plot) cut where it leaves the top.

    Parameters
    ----------
    points : list of (float, float)
        (x, y) fractions of the plot's width and height, in drawing order.

    Returns
    -------
    list of list of (float, float)
        The stretches of the line inside the frame (y at most 1), each ending or beginning
        where a segment crosses the top, in drawing order.
    """
    runs: list[list[tuple[float, float]]] = []
    previous = None
    for point in points:
        inside = point[1] <= 1.0
        if previous is None:
            if inside:
                runs.append([point])
        elif inside or previous[1] <= 1.0:
            (x0, y0), (x1, y1) = previous, point
            if not inside or previous[1] > 1.0:
                crossing = (x0 + (x1 - x0) * (1.0 - y0) / (y1 - y0), 1.0)
                if inside:
                    runs.append([crossing])
                else:
                    runs[-1].append(crossing)
            if inside:
                runs[-1].append(point)
        previous = point
    return runs


def peaks_clipped(switch_on: dict, moments: list[dict], axes: SwitchOnAxes) -> bool:
    """Whether any peak current (or the inrush peak) lies above the frame."""
    peaks = [m.get("peak_current") for m in moments] + [switch_on.get("inrush_peak_current")]
    return any(peak is not None and axes.y(peak) > 1.0 for peak in peaks)
