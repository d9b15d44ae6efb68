"""Pure-physics model of a series-lamp current limiter: lamps, circuit, judgement and advice.

numpy and scipy only: nothing here imports Django, so the bench scripts, the prediction
endpoint and the tests all use the same library.
"""

from shop.physics.advice import LampAdvice, advise_lamp, lamp_label
from shop.physics.circuit import SeriesResult, solve_bypassed, solve_series
from shop.physics.glow import DRAPER_POINT, GLOW_CLASSES, glow_class, glow_colour, luminance
from shop.physics.judgement import (
    BEHAVIOURS,
    OUTCOMES,
    Reading,
    ReadingJudgement,
    Reason,
    Verdict,
    judge,
)
from shop.physics.lamp import Lamp, LampBank, LampCurve, LampFit
from shop.physics.loads import Load, ResistiveLoad
from shop.physics.materials import data_fingerprint

# The version of the physics: bump it when a prediction for the same input changes, so that
# stored verdicts say which physics judged them (with data_fingerprint() for the data files).
PHYSICS_VERSION = "1.0.0"

__all__ = [
    "BEHAVIOURS",
    "DRAPER_POINT",
    "GLOW_CLASSES",
    "OUTCOMES",
    "PHYSICS_VERSION",
    "Lamp",
    "LampAdvice",
    "LampBank",
    "LampCurve",
    "LampFit",
    "Load",
    "Reading",
    "ReadingJudgement",
    "Reason",
    "ResistiveLoad",
    "SeriesResult",
    "Verdict",
    "advise_lamp",
    "data_fingerprint",
    "glow_class",
    "glow_colour",
    "judge",
    "lamp_label",
    "luminance",
    "solve_bypassed",
    "solve_series",
]
