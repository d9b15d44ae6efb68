"""Switching a healthy unit on through the lamp, as a bounded series with a sentence in words.

``shop.physics.transient.switch_on`` follows the switch-on half cycle by half cycle; this
module turns one column of it into JSON for the prediction, the plot and the certificate: the
lamp's RMS and peak current and glow over time, thinned to at most ``MAX_POINTS`` moments,
and the behaviour in plain words.
"""

from __future__ import annotations

import json
import math
import threading
from collections import OrderedDict

import numpy as np

from shop.physics.glow import GLOW_CLASSES
from shop.physics.heater import HeaterLoad
from shop.physics.loads import ResistiveLoad
from shop.physics.rectifier import RectifierLoad
from shop.physics.transformer import TransformerLoad
from shop.physics.transient import follow_time, switch_on

from .declared_load import physics_load
from .physics_inputs import physics_limiter

# How long a switch-on is followed unless a caller says: shop.physics.transient.follow_time
# of the unit (half a second for a lamp, tens of seconds for a valve set's heaters, 2 s for a
# switch-mode input). The series grows with the time followed: the
# answer, the plot and the certificate keep at most this many moments of it.
MAX_POINTS = 200
ROUND_DIGITS = 4
# Distinct switch-ons remembered per process: more than a shop's rigs, lamps and unit kinds
# in use on a day (each answer is a few kilobytes of JSON).
REMEMBERED = 128
_remembered: OrderedDict[str, str] = OrderedDict()
_lock = threading.Lock()
BRIGHT_GLOWS = ("bright",)

# Behaviour codes of shop.physics.transient and shop.physics.switch_mode_start, in words.
# "{peak}" and "{steady}" are glow class names. A code not listed here is said by
# `behaviour_sentence`'s fallback, never refused.
CYCLING_WORDS = (
    "Cycles: a switch-mode unit restarting; the lamp pulses as the unit starts, drops out "
    "and tries again."
)
BEHAVIOUR_WORDS = {
    "flash_then_dims": "Flash at switch-on, then dims: the lamp glows up to {peak} and falls "
    "back towards {steady} {cause}.",
    "cycling": CYCLING_WORDS,
    "cycles": CYCLING_WORDS,
    "does_not_start": "Does not start: the unit never draws its running current through this lamp.",
}
# What brings the current down after a flash, by what the unit holds (the first that applies):
# heaters warm (their resistance rises), a reservoir charges, a transformer's core inrush
# dies away, and with only resistances the lamp's own filament heats.
HEATERS_WARM = "as the unit's heaters warm"
RESERVOIR_CHARGES = "as the unit's reservoir charges"
CORE_SETTLES = "as the transformer's inrush dies away"
LAMP_HEATS = "as the lamp's filament heats"
UNIT_SETTLES = "as the unit settles"
STEADY_DIM = "No flash: the lamp warms to a steady {steady} glow and stays there."
STEADY_DARK = "No flash: the lamp stays dark."
# A healthy unit that keeps the lamp bright looks like the fault the lamp is there to show.
STEADY_BRIGHT = (
    "Stays bright: a fault looks like this, yet a healthy unit of this declared load does it "
    "through this lamp; a larger lamp would tell them apart."
)


def _finite(value: float, digits: int = ROUND_DIGITS) -> float | None:
    """A rounded float, or None for NaN and infinity (JSON has neither)."""
    value = float(value)
    return round(value, digits) if math.isfinite(value) else None


def _glow_rank(name: str) -> int:
    """Position in GLOW_CLASSES, dark first; -1 for a class this code does not know."""
    return GLOW_CLASSES.index(name) if name in GLOW_CLASSES else -1


def settling_cause(load) -> str:
    """What brings the lamp's current down after a flash, in words, for a physics load.

    Parameters
    ----------
    load : load
        The unit as ``shop.physics`` models it (a composite is read member by member).

    Returns
    -------
    str
        ``HEATERS_WARM`` where it holds a heater or a valve rectifier, else
        ``RESERVOIR_CHARGES`` where it holds a reservoir (a rectifier or a switch-mode
        input), else ``CORE_SETTLES`` where it holds a transformer, else ``LAMP_HEATS``
        where it is only resistances, else ``UNIT_SETTLES``.
    """
    held = _held(load)
    for part, words in (
        ("heaters", HEATERS_WARM),
        ("reservoir", RESERVOIR_CHARGES),
        ("core", CORE_SETTLES),
    ):
        if part in held:
            return words
    return LAMP_HEATS if held == {"resistance"} else UNIT_SETTLES


def _held(load) -> set[str]:
    """The parts of a load that shape its switch-on: heaters, reservoir, core, resistance."""
    members = getattr(load, "members", None)
    if members is not None:
        return set().union(*(_held(member) for member in members))
    if getattr(load, "constant_power", False):
        return {"reservoir"}  # a switch-mode input: bridge, reservoir, converter
    if isinstance(load, HeaterLoad):
        return {"heaters"}
    if isinstance(load, RectifierLoad):
        # A valve rectifier warms like a heater before it conducts.
        return {"heaters" if load.warm_up_time > 0 else "reservoir"}
    if isinstance(load, TransformerLoad):
        return {"core"}
    if isinstance(load, ResistiveLoad):
        return {"resistance"}
    return {"unknown"}


def behaviour_sentence(
    behaviour: str, glow: list[str], steady_glow: str | None, cause: str = UNIT_SETTLES
) -> str:
    """The switch-on behaviour in plain words, for any behaviour code.

    Parameters
    ----------
    behaviour : str
        The transient's behaviour code ("flash_then_dims", "steady", "cycling", ...).
    glow : list of str
        Glow class over time (any non-empty selection of moments that holds the brightest).
    steady_glow : str or None
        Glow class at the steady state; None (or "") where the unit has none through this
        lamp.
    cause : str, default UNIT_SETTLES
        What brings the current down after a flash (:func:`settling_cause`), said after
        "falls back towards ...".

    Returns
    -------
    str
        One sentence; a code without words of its own is said as its words with the glow
        it reaches, so a new behaviour of the physics never breaks an answer.
    """
    settled = f"{steady_glow} at steady state" if steady_glow else "never steady"
    steady_glow = steady_glow or "its steady glow"
    peak = max(glow, key=_glow_rank) if glow else steady_glow
    if behaviour == "steady":
        if steady_glow in BRIGHT_GLOWS:
            return STEADY_BRIGHT
        if peak == GLOW_CLASSES[0] and steady_glow == GLOW_CLASSES[0]:
            return STEADY_DARK
        return STEADY_DIM.format(steady=steady_glow)
    if behaviour in BEHAVIOUR_WORDS:
        return BEHAVIOUR_WORDS[behaviour].format(peak=peak, steady=steady_glow, cause=cause)
    words = behaviour.replace("_", " ").strip() or "not described"
    return f"Switch-on behaviour: {words}; the lamp glows up to {peak} and is {settled}."


def _spread(candidates: np.ndarray, room: int) -> np.ndarray:
    """At most `room` of the sorted `candidates`, evenly spread, first and last kept."""
    if room <= 0:
        return candidates[:0]
    if candidates.size <= room:
        return candidates
    positions = np.floor(np.linspace(0, candidates.size - 1, room) + 0.5).astype(int)
    return candidates[np.unique(positions)]


def thinned_indices(glow, keep=(), limit: int = MAX_POINTS) -> np.ndarray:
    """Which moments of a series to keep: at most `limit`, glow changes first.

    Parameters
    ----------
    glow : sequence of str
        Glow class of each moment, in time order.
    keep : iterable of int
        Moments that must stay (the inrush half cycle, the settling point); the first and the
        last moment always stay.
    limit : int, default MAX_POINTS
        Most moments kept.

    Returns
    -------
    numpy.ndarray of int
        Sorted indices into the series.

    Notes
    -----
    Each moment holds the half cycle ending at its time, so a stretch of one glow class runs
    from the previous moment's time to its own. Keeping the last moment of every stretch (the
    one before each change of class) keeps every stretch's ends exact whatever is dropped
    between them. Only if the glow changes more often than ``limit`` allows are changes
    dropped, evenly spread. The room left is filled with moments evenly spread by index.
    """
    glow = np.asarray(glow)
    count = glow.size
    if count <= limit:
        return np.arange(count)
    anchors = np.unique([0, count - 1, *(int(i) for i in keep if 0 <= int(i) < count)])
    ends_of_stretches = np.setdiff1d(np.flatnonzero(glow[1:] != glow[:-1]), anchors)
    kept = np.union1d(anchors, _spread(ends_of_stretches, limit - anchors.size))
    rest = np.setdiff1d(np.arange(count), kept)
    return np.union1d(kept, _spread(rest, limit - kept.size))


def _first_column(values, moments: int) -> np.ndarray:
    """One column of a transient figure over time (the first source voltage and draw)."""
    return np.asarray(values).reshape(moments, -1)[:, 0]


def switch_on_block(**inputs) -> dict:
    """A healthy unit's switch-on as JSON: :func:`computed_block`, remembered per process.

    Takes the keyword arguments of :func:`computed_block`. The physics takes a few tenths of
    a second for a unit with a transformer or a rectifier, and the same test's plot is asked
    again and again and its certificate built from the same inputs: the last ``REMEMBERED``
    distinct answers are kept (a refusal is not), and each caller gets its own copy.
    """
    key = json.dumps(inputs, sort_keys=True, default=repr)
    with _lock:
        answer = _remembered.get(key)
        if answer is not None:
            _remembered.move_to_end(key)
    if answer is None:
        answer = json.dumps(computed_block(**inputs))
        with _lock:
            _remembered[key] = answer
            while len(_remembered) > REMEMBERED:
                _remembered.popitem(last=False)
    return json.loads(answer)


def forget() -> None:
    """Drop every remembered switch-on (for tests that change the physics under it)."""
    with _lock:
        _remembered.clear()


def computed_block(
    *,
    limiter: list[dict],
    declared_load: dict,
    source_voltage: float,
    source_resistance: float,
    frequency: float,
    ambient_temperature: float = 300.0,
    duration: float | None = None,
) -> dict:
    """Switching the healthy unit on at the crest of `source_voltage`, thinned, as JSON data.

    Parameters
    ----------
    limiter : list of dict
        The lamp or lamps (``physics_inputs.limiter_parameters``).
    declared_load : dict
        The validated declared-load document.
    source_voltage : float
        RMS source voltage switched on [V].
    source_resistance : float
        The rig's windings [ohm].
    frequency : float
        Source frequency [Hz].
    ambient_temperature : float, default 300.0
        The bench's ambient [K].
    duration : float, optional
        How long to follow it [s]; by default as long as the unit is worth following
        (``shop.physics.transient.follow_time``: half a second for a lamp or resistance, tens
        of seconds for a valve set's heaters, 2 s for a switch-mode input).

    Returns
    -------
    dict
        ``source_voltage`` [V]; ``inrush_peak_current`` (instantaneous) and
        ``steady_current`` (RMS, null without a steady operating point) [A];
        ``settle_time`` [s] (null if not within 10 % of steady in the time followed);
        ``followed_for`` [s]; ``behaviour`` (the physics' code), ``behaviour_words``;
        ``steady_glow`` (null without a steady state); ``glow_over_time``: at most
        ``MAX_POINTS`` moments of ``time`` [s], ``glow``, ``current`` (RMS over the half
        cycle ending then; over the cycle then where the physics follows a slow warm-up in
        steps) and ``peak_current`` [A].

    Raises
    ------
    ValueError
        Whatever the physics refuses (a unit it cannot follow in time).
    """
    load = physics_load(declared_load)
    transient = switch_on(
        physics_limiter(limiter, ambient_temperature),
        load,
        source_voltage,
        source_resistance=source_resistance,
        frequency=frequency,
        duration=follow_time(load) if duration is None else duration,
    )
    times = np.asarray(transient.time, dtype=float)
    moments = times.size
    current = _first_column(transient.current, moments)
    peak = _first_column(transient.peak_current, moments)
    glow = [str(name) for name in _first_column(transient.glow, moments)]
    settle = float(np.ravel(transient.settle_time)[0])
    keep = [int(np.argmax(peak))] if moments else []
    if math.isfinite(settle) and moments:
        keep.append(int(transient.at(settle)))
    kept = thinned_indices(glow, keep) if moments else []
    steady_glow = str(np.ravel(transient.steady_glow)[0]) or None  # "": no steady state
    behaviour = str(np.ravel(transient.behaviour)[0])
    return {
        "source_voltage": float(source_voltage),
        "inrush_peak_current": _finite(np.ravel(transient.inrush_peak)[0]),
        "steady_current": _finite(np.ravel(transient.steady_current)[0]),
        "settle_time": _finite(settle),
        "followed_for": round(float(times[-1]), ROUND_DIGITS) if moments else 0.0,
        "behaviour": behaviour,
        "behaviour_words": behaviour_sentence(behaviour, glow, steady_glow, settling_cause(load)),
        "steady_glow": steady_glow,
        "glow_over_time": [
            {
                "time": round(float(times[i]), ROUND_DIGITS),
                "glow": glow[i],
                "current": _finite(current[i]),
                "peak_current": _finite(peak[i]),
            }
            for i in kept
        ],
    }
