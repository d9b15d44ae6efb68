"""Room for a plot's labels: each goes to the first of its candidate places that is free.

Plain geometry, for the SVG plot and the certificate alike: a box is (x0, y0, x1, y1) with
x0 <= x1 and y0 <= y1 in the renderer's own units and direction ([px] with y down, or [pt]
with y up); a segment is (x0, y0, x1, y1).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Generic, TypeVar

Box = tuple[float, float, float, float]
Segment = tuple[float, float, float, float]
T = TypeVar("T")


def boxes_meet(a: Box, b: Box) -> bool:
    """Whether two boxes overlap (touching edges do not count)."""
    return a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]


def segment_meets(segment: Segment, box: Box) -> bool:
    """Whether a straight segment passes through a box (Liang-Barsky clipping).

    Notes
    -----
    The segment is :math:`p(t) = p_0 + t (p_1 - p_0)`, :math:`0 \\le t \\le 1`; each of the
    box's four edges bounds the range of :math:`t` inside it, and the segment meets the box
    where that range is not empty (Liang and Barsky, "A new concept and method for line
    clipping", ACM Transactions on Graphics 3(1), 1984).
    """
    x0, y0, x1, y1 = segment
    dx, dy = x1 - x0, y1 - y0
    low, high = 0.0, 1.0
    for step, room in (
        (-dx, x0 - box[0]),
        (dx, box[2] - x0),
        (-dy, y0 - box[1]),
        (dy, box[3] - y0),
    ):
        if step == 0:
            if room < 0:
                return False
            continue
        bound = room / step
        if step < 0:
            low = max(low, bound)
        else:
            high = min(high, bound)
        if low > high:
            return False
    return True


def polyline_segments(points: list[tuple[float, float]]) -> list[Segment]:
    """The segments between consecutive points of a line."""
    return [(*a, *b) for a, b in zip(points, points[1:])]


@dataclass
class LabelRoom(Generic[T]):
    """What a plot's labels must keep clear of, and the labels placed so far.

    Attributes
    ----------
    inside : Box
        Every label stays within this box (the plot's frame): the tick labels and the
        glow names lie outside it, so no label can cover them.
    boxes : list of Box
        Labels and marks already placed: never covered.
    lines : list of Segment
        Lines with a meaning of their own (the settling and steady lines): never crossed.
    soft : list of Segment
        Lines best left clear (the curves): crossed only where no free place is left.
    clearance : float
        How far a label keeps from a line's middle (half the widest line's stroke).
    """

    inside: Box
    boxes: list[Box] = field(default_factory=list)
    lines: list[Segment] = field(default_factory=list)
    soft: list[Segment] = field(default_factory=list)
    clearance: float = 0.0

    def _clear(self, box: Box, segments: list[Segment]) -> bool:
        c = self.clearance
        wider = (box[0] - c, box[1] - c, box[2] + c, box[3] + c)
        return not any(boxes_meet(box, other) for other in self.boxes) and not any(
            segment_meets(segment, wider) for segment in segments
        )

    def place(self, candidates: list[tuple[Box, T]]) -> T:
        """The first candidate clear of everything, else of all but the soft lines.

        Parameters
        ----------
        candidates : list of (Box, T)
            Places in order of preference: the box a label would cover, and what the
            renderer needs to draw it there.

        Returns
        -------
        T
            The chosen candidate's payload; its box is taken from then on. Where none is
            clear even of the hard lines and labels, the first inside the frame (or the
            first of all) is chosen.
        """
        inside = [
            (box, payload)
            for box, payload in candidates
            if self.inside[0] <= box[0]
            and box[2] <= self.inside[2]
            and self.inside[1] <= box[1]
            and box[3] <= self.inside[3]
        ]
        hard = self.lines
        box, payload = next(
            (c for c in inside if self._clear(c[0], hard + self.soft)),
            next((c for c in inside if self._clear(c[0], hard)), (inside or candidates)[0]),
        )
        self.boxes.append(box)
        return payload
