"""The safety caveats every prediction answer and certificate carries."""

PRECEDENCE = (
    "Local electrical codes and licensed practice take precedence over anything this service says."
)

CAVEATS: tuple[tuple[str, str], ...] = (
    (
        "mains_can_kill",
        "Mains voltages can kill. Work only with training, on an isolated bench, "
        "with the one-hand rule, and with local codes and licensed practice taking precedence.",
    ),
    (
        "lamp_protects_unit_not_person",
        "The lamp protects the unit, not the person: a "
        "lamp-limited current through a body can still kill.",
    ),
    (
        "functional_check_only",
        "A limiter power-up is a functional check, not an electrical "
        "safety inspection or approval.",
    ),
    (
        "autotransformer_not_isolating",
        "A variable autotransformer does not isolate the unit from "
        "mains, and its output can sit at mains potential even with the dial at zero.",
    ),
    (
        "isolation_defeats_rcd",
        "An isolation transformer removes the earth-referenced path that "
        "residual-current (RCD/GFCI) protection relies on.",
    ),
    (
        "hot_chassis",
        "Transformerless (hot chassis) units and units fed by an autotransformer of "
        "their own may have the chassis at mains potential: test only through isolation, one unit "
        "per isolation transformer, never earth the isolated side, and never clip an earthed "
        "oscilloscope ground to such a chassis. Treat a unit of unknown construction as hot.",
    ),
    (
        "valve_amplifier_load",
        "A valve amplifier must have a load (speaker or dummy load) on its output when powered.",
    ),
    ("capacitors_hold_charge", "Capacitors can hold a lethal charge after switch-off."),
    (
        "lamp_only_in_circuit",
        "The lamp limits current only while it is in circuit; bypassing it "
        "removes that protection.",
    ),
)

LIVE_CHASSIS_NOTE = (
    "This unit's chassis may be at mains potential (transformerless, its own autotransformer, or "
    "construction unknown): it was to be tested only through an isolation transformer."
)


def caveats() -> list[dict[str, str]]:
    """The caveats as a list of {code, text}, with the precedence statement last."""
    return [{"code": code, "text": text} for code, text in CAVEATS] + [
        {"code": "local_codes_prevail", "text": PRECEDENCE}
    ]
