"""Pure-physics model of a series-lamp current limiter: lamps, circuit, judgement and advice.

numpy and scipy only: nothing here imports Django, so the bench scripts, the prediction
endpoint and the tests all use the same library.
"""

from shop.physics.advice import LampAdvice, advise_lamp, lamp_label
from shop.physics.circuit import (
    METER_RESPONSES,
    OPERATING_STATES,
    SeriesResult,
    meter_readings,
    solve_bypassed,
    solve_series,
)
from shop.physics.composite import CompositeLoad
from shop.physics.glow import DRAPER_POINT, GLOW_CLASSES, glow_class, glow_colour, luminance
from shop.physics.heater import HeaterLoad
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
from shop.physics.nameplate import unit_load_from_nameplate
from shop.physics.rectifier import RectifierLoad
from shop.physics.switch_mode import ConstantPowerLoad
from shop.physics.transformer import TransformerLoad
from shop.physics.transient import SwitchOnTransient, switch_on

# The version of the physics: bump it when a prediction for the same input changes, so that
# stored verdicts say which physics judged them (with data_fingerprint() for the data files).
PHYSICS_VERSION = "1.3.0"

__all__ = [
    "BEHAVIOURS",
    "DRAPER_POINT",
    "GLOW_CLASSES",
    "METER_RESPONSES",
    "OPERATING_STATES",
    "OUTCOMES",
    "PHYSICS_VERSION",
    "CompositeLoad",
    "ConstantPowerLoad",
    "HeaterLoad",
    "Lamp",
    "LampAdvice",
    "LampBank",
    "LampCurve",
    "LampFit",
    "Load",
    "Reading",
    "ReadingJudgement",
    "Reason",
    "RectifierLoad",
    "ResistiveLoad",
    "SeriesResult",
    "SwitchOnTransient",
    "TransformerLoad",
    "Verdict",
    "advise_lamp",
    "data_fingerprint",
    "glow_class",
    "glow_colour",
    "judge",
    "lamp_label",
    "luminance",
    "meter_readings",
    "solve_bypassed",
    "solve_series",
    "switch_on",
    "unit_load_from_nameplate",
]
