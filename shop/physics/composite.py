"""Units made of several loads on one supply: a valve set's transformer, heaters and rectifier."""

import numpy as np
from scipy.interpolate import CubicSpline

from shop.physics.loads import ScalableLoad, factor_repr

# Members share the unit's supply: their rated voltages must agree to this fraction.
RATED_VOLTAGE_AGREEMENT = 0.01
# The impedance is tabulated at terminal voltages from 0 to a million times the rated voltage,
# as multiples of it: densely where a bench puts units (a core saturates, a heater warms),
# sparsely far below and above, where every member is linear.
VOLTAGE_TABLE_SEGMENTS = ((1e-10, 1e-3, 300), (1e-3, 20.0, 4000), (20.0, 1e6, 300))


class CompositeLoad(ScalableLoad):
    """Several loads in parallel on the unit's supply, drawing the sum of their currents.

    Use it for a unit built of parts that each have their own model: a valve set is a
    transformer's magnetising branch, the heaters referred to the primary and the rectifier
    with its reservoir; an amplifier adds its output stage's idle draw as a resistance.
    :func:`shop.physics.nameplate.unit_load_from_nameplate` builds one from a nameplate.

    Parameters
    ----------
    members : sequence of loads
        Each a load with one draw (scalar parameters) and an ``admittance(voltage,
        frequency)`` (``ResistiveLoad``, ``HeaterLoad``, ``TransformerLoad`` or another
        ``CompositeLoad``), or one ``RectifierLoad``, all rated at the same voltage. With a
        rectifier the composite is solved in the time domain (:mod:`shop.physics.waveform`).
        A constant-power input is refused: it has no unique draw at a given current
        (declare it alone).

    Notes
    -----
    At a terminal voltage :math:`V` the members' current phasors add:
    :math:`I(V) = V \\sum_k Y_k(V)`. Every member's current magnitude rises with its
    voltage, and their real and reactive parts do too, so :math:`|I(V)|` rises and the
    impedance at a current, :math:`Z(I) = 1 / \\sum_k Y_k(V(I))`, is well defined. It is
    tabulated once per frequency on the terminal voltages of ``VOLTAGE_TABLE_SEGMENTS`` and
    interpolated (cubic splines of :math:`\\log |Z|` and of its angle against :math:`\\log I`),
    which agrees with the members' own admittances to about a part in 1e6.

    Members whose windings are shared in the real unit (the primary winding of
    a transformer feeding heaters and a rectifier) each carry their own share here; that
    misses the small extra drop of the shared winding.
    """

    def __init__(self, members, draw_factor=1.0):
        super().__init__(draw_factor)
        members = tuple(members)
        if not members:
            raise ValueError("members must hold at least one load")
        for position, member in enumerate(members):
            if getattr(member, "constant_power", False):
                raise ValueError(
                    f"members[{position}] is a constant-power input: declare it alone, it has "
                    "no unique draw at a given current inside a composite"
                )
            if not hasattr(member, "rated_voltage") or not (
                hasattr(member, "admittance") or getattr(member, "waveform", False)
            ):
                raise ValueError(
                    f"members[{position}] must be a load with admittance() and rated_voltage "
                    f"(got {type(member).__name__})"
                )
            if np.ndim(member.rated_power) != 0:
                raise ValueError(f"members[{position}] must be one load, not an array of them")
        if sum(bool(getattr(member, "waveform", False)) for member in members) > 1:
            raise ValueError("members may hold one rectifier at most")
        voltages = np.array([float(member.rated_voltage) for member in members])
        if np.ptp(voltages) > RATED_VOLTAGE_AGREEMENT * voltages.max():
            raise ValueError(
                "members must share the unit's supply: their rated voltages differ "
                f"({', '.join(f'{v:g} V' for v in voltages)}); refer each to the primary"
            )
        self.members = members
        self.rated_voltage = float(voltages.max())
        self._tables = {}

    @property
    def waveform(self):
        """Whether a member rectifies, so that the unit is solved in the time domain."""
        return any(getattr(member, "waveform", False) for member in self.members)

    def _admittance_of_one(self, voltage, frequency):
        if self.waveform:
            raise ValueError(
                "a unit with a rectifier has no admittance: it draws its current in peaks and "
                "is solved in the time domain (shop.physics.waveform)"
            )
        voltage = np.asarray(voltage, dtype=float)
        return sum(member.admittance(voltage, frequency) for member in self.members)

    def _table(self, frequency):
        if frequency not in self._tables:
            multiples = np.unique(
                np.concatenate([np.geomspace(*segment) for segment in VOLTAGE_TABLE_SEGMENTS])
            )
            voltage = np.concatenate([[0.0], self.rated_voltage * multiples])
            admittance = self._admittance_of_one(voltage, frequency)
            current = voltage * np.abs(admittance)
            if not (np.diff(current) > 0).all():
                raise ValueError(
                    "the members' total current does not rise with the voltage: a member "
                    "draws less as its volts rise, which a composite cannot hold"
                )
            impedance = 1.0 / admittance
            log_current = np.log(current[1:])
            # log |Z| and its angle as the two columns of one spline: one call per impedance.
            spline = CubicSpline(
                log_current,
                np.column_stack(
                    [np.log(np.abs(impedance[1:])), np.unwrap(np.angle(impedance[1:]))]
                ),
            )
            self._tables[frequency] = (impedance[0], log_current, np.exp(log_current[0]), spline)
        return self._tables[frequency]

    def _impedance_of_one(self, current, frequency):
        current = np.asarray(current, dtype=float)
        at_zero, log_current, smallest, spline = self._table(frequency)
        with np.errstate(divide="ignore"):
            where = np.clip(np.log(current), log_current[0], log_current[-1])
        value = spline(where)
        impedance = np.exp(value[..., 0] + 1j * value[..., 1])
        return np.where(current < smallest, at_zero, impedance)

    def _rated_power_of_one(self):
        return float(sum(member.rated_power for member in self.members))

    def _description(self):
        described = [member.describe() for member in self.members]
        summary = "; ".join(item["summary"] for item in described)
        if len(described) > 1:
            summary = f"{len(described)} parts on one supply: {summary}"
        assumptions = []
        for item in described:
            assumptions.extend(item.get("assumptions", []))
        return {
            "model": "composite",
            "summary": summary,
            "parameters": {
                "members": [
                    {key: item[key] for key in ("model", "summary", "parameters") if key in item}
                    for item in described
                ],
                "rated_voltage": {"value": self.rated_voltage, "unit": "V"},
                "rated_power": {"value": self._rated_power_of_one(), "unit": "W"},
            },
            "assumptions": assumptions,
        }

    def __repr__(self):
        members = ", ".join(repr(member) for member in self.members)
        return f"CompositeLoad([{members}], draw_factor={factor_repr(self.draw_factor)})"
