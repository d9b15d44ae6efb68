"""Request and answer shapes of the stateless prediction and of lamp advice."""

from __future__ import annotations

from rest_framework import serializers

from .declared_load import validated_document
from .models import Lamp, LampBank, LampFill, LampTechnology, Rig
from .prediction import MAX_SWEEP_POINTS
from .switch_on import MAX_POINTS as MAX_SWITCH_ON_POINTS


class LampSpecSerializer(serializers.Serializer):
    """A lamp given by its numbers (no record needed)."""

    technology = serializers.ChoiceField(choices=LampTechnology.choices)
    rated_voltage = serializers.FloatField(min_value=6, max_value=300)
    rated_power = serializers.FloatField(min_value=1, max_value=2000)
    fill = serializers.ChoiceField(choices=LampFill.choices, default=LampFill.GAS)
    cold_resistance = serializers.FloatField(required=False, min_value=0.01, max_value=10000)


class RigSpecSerializer(serializers.Serializer):
    """A rig given by its numbers."""

    mains_voltage = serializers.FloatField(min_value=90, max_value=260)
    mains_frequency = serializers.ChoiceField(choices=[50, 60])
    internal_resistance = serializers.FloatField(min_value=0, max_value=50, default=2.0)
    output_at_full_dial = serializers.FloatField(required=False, min_value=1, max_value=300)


class PredictionRequestSerializer(serializers.Serializer):
    """Lamp (numbers, `lamp_id` or `bank_id`), rig (numbers or `rig_id`), declared load, sweep."""

    lamp = LampSpecSerializer(required=False)
    lamp_id = serializers.PrimaryKeyRelatedField(queryset=Lamp.objects.all(), required=False)
    bank_id = serializers.PrimaryKeyRelatedField(queryset=LampBank.objects.all(), required=False)
    rig = RigSpecSerializer(required=False)
    rig_id = serializers.PrimaryKeyRelatedField(queryset=Rig.objects.all(), required=False)
    declared_load = serializers.JSONField()
    source_voltages = serializers.ListField(
        child=serializers.FloatField(min_value=0, max_value=300),
        required=False,
        min_length=1,
        max_length=MAX_SWEEP_POINTS,
    )
    points = serializers.IntegerField(
        required=False, min_value=2, max_value=MAX_SWEEP_POINTS, default=25
    )
    ambient_temperature = serializers.FloatField(
        required=False, min_value=250, max_value=330, default=300.0
    )

    def validate(self, attrs):
        limiters = [name for name in ("lamp", "lamp_id", "bank_id") if name in attrs]
        if len(limiters) != 1:
            raise serializers.ValidationError(
                {"lamp": "Give exactly one of lamp (numbers), lamp_id or bank_id."}
            )
        rigs = [name for name in ("rig", "rig_id") if name in attrs]
        if len(rigs) != 1:
            raise serializers.ValidationError({"rig": "Give exactly one of rig or rig_id."})
        attrs["declared_load"] = validated_document(attrs["declared_load"])
        return attrs


class FaultCapSerializer(serializers.Serializer):
    source_voltage = serializers.FloatField()
    current = serializers.FloatField()
    lamp_power = serializers.FloatField()
    glow = serializers.CharField()
    sentence = serializers.CharField()


class GlowMomentSerializer(serializers.Serializer):
    """The half cycle ending at `time` (or, where the model follows a slow warm-up in steps,
    the cycle at `time`): the lamp's glow and current then.

    A moment's glow holds from the previous moment's time to its own: the moments are thinned
    (see `SwitchOnSerializer`) keeping the last of every stretch of one glow.
    """

    time = serializers.FloatField(help_text="Since switch-on [s].")
    glow = serializers.CharField(help_text="Glow class of the lamp's hottest filament.")
    current = serializers.FloatField(allow_null=True, help_text="Lamp current, RMS [A].")
    peak_current = serializers.FloatField(
        allow_null=True, help_text="Largest instantaneous lamp current [A]."
    )


class SwitchOnSerializer(serializers.Serializer):
    """Switching a healthy unit on at the crest of full source."""

    source_voltage = serializers.FloatField(help_text="[V RMS]")
    inrush_peak_current = serializers.FloatField(allow_null=True, help_text="[A], instantaneous")
    steady_current = serializers.FloatField(
        allow_null=True,
        help_text="[A RMS]; null where the unit has no steady operating point through the lamp.",
    )
    settle_time = serializers.FloatField(
        allow_null=True,
        help_text="Until the current stays within 10 % of steady [s]; null if "
        "it has not settled in the time followed.",
    )
    followed_for = serializers.FloatField(
        help_text="Time followed [s]: as long as the unit is worth following (half a second "
        "for a lamp or a resistance, tens of seconds for a valve set's heaters, 2 s for a "
        "switch-mode input)."
    )
    behaviour = serializers.CharField(
        help_text="steady, flash_then_dims, cycling (a switch-mode unit restarting) or "
        "does_not_start; models may add others: behaviour_words says any of them in words."
    )
    behaviour_words = serializers.CharField(help_text="The behaviour as one sentence.")
    steady_glow = serializers.CharField(
        allow_null=True,
        help_text="Glow class once settled; null where the unit has no steady state.",
    )
    glow_over_time = GlowMomentSerializer(
        many=True,
        help_text=f"At most {MAX_SWITCH_ON_POINTS} moments, in time order: every moment while "
        "they fit, else the first, the last, the inrush, the settling point, the last of "
        "every stretch of one glow, and moments evenly spread between.",
    )


class CaveatSerializer(serializers.Serializer):
    code = serializers.CharField()
    text = serializers.CharField()


class PredictionSerializer(serializers.Serializer):
    """Curves of a healthy unit over the sweep, its band, the fault cap and the caveats."""

    source_voltage = serializers.ListField(child=serializers.FloatField())
    load_voltage = serializers.ListField(child=serializers.FloatField(allow_null=True))
    load_voltage_low = serializers.ListField(child=serializers.FloatField(allow_null=True))
    load_voltage_high = serializers.ListField(child=serializers.FloatField(allow_null=True))
    current = serializers.ListField(child=serializers.FloatField(allow_null=True))
    lamp_voltage = serializers.ListField(child=serializers.FloatField(allow_null=True))
    lamp_power = serializers.ListField(child=serializers.FloatField(allow_null=True))
    load_power = serializers.ListField(child=serializers.FloatField(allow_null=True))
    filament_temperature = serializers.ListField(child=serializers.FloatField(allow_null=True))
    glow = serializers.ListField(child=serializers.CharField())
    state = serializers.ListField(
        child=serializers.CharField(),
        help_text="steady, off (below a switch-mode unit's start voltage) or "
        "no_operating_point (it cannot draw its power through this lamp; figures are null).",
    )
    cannot_run = serializers.BooleanField()
    sensitivity = serializers.ListField(child=serializers.FloatField(allow_null=True))
    fault_current_cap = FaultCapSerializer()
    tolerances = serializers.DictField(child=serializers.FloatField())
    model = serializers.DictField()
    advice = serializers.ListField(child=serializers.DictField(), required=False)
    warnings = serializers.ListField(child=serializers.CharField())
    switch_on = SwitchOnSerializer(allow_null=True)
    caveats = CaveatSerializer(many=True)


class AdviceEntrySerializer(serializers.Serializer):
    rank = serializers.IntegerField()
    label = serializers.CharField()
    lamp_id = serializers.IntegerField(allow_null=True)
    bank_id = serializers.IntegerField(allow_null=True)
    suitability = serializers.CharField()
    fault_current = serializers.FloatField(allow_null=True)
    load_voltage = serializers.FloatField(allow_null=True)
    load_fraction = serializers.FloatField(allow_null=True)
    sensitivity = serializers.FloatField(allow_null=True)
    meter_uncertainty = serializers.FloatField(allow_null=True)
    sensitivity_needed = serializers.FloatField(
        allow_null=True,
        help_text="How far a doubling of draw must move the unit's volts to leave a healthy "
        "unit's band (lamp spread, load tolerance, both meters) [V].",
    )
    lamp_glow = serializers.CharField()
    reason = serializers.CharField()


class AdviceSerializer(serializers.Serializer):
    """Lamps of a rig ranked for a unit's declared load."""

    unit = serializers.IntegerField()
    rig = serializers.IntegerField()
    source_voltage = serializers.FloatField()
    declared_load = serializers.DictField()
    advice = AdviceEntrySerializer(many=True)
    caveats = CaveatSerializer(many=True)
