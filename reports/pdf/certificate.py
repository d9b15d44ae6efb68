"""The power-up test certificate as PDF, rendered from its snapshot alone."""

from __future__ import annotations

import itertools

from reportlab.graphics.barcode.qr import QrCodeWidget
from reportlab.graphics.shapes import Drawing, Path
from reportlab.lib.units import mm
from reportlab.platypus import CondPageBreak, KeepTogether, Paragraph, Spacer, Table, TableStyle

from shop.bench import switch_on_look as look

from ..outcomes import OUTCOME_HEADLINES
from . import formatting as fmt
from .formatting import text
from .layout import (
    boxed,
    build_pdf,
    content_width,
    data_table,
    key_value_table,
    live_chassis_box,
    numbered,
    shop_header,
    signature_lines,
)
from .plot import readings_plot, status_words
from .styles import INK, OUTCOME_COLOURS, STYLES, WARNING
from .switch_on_plot import switch_on_plot

TITLE = "Power-up test certificate"
SCOPE = (
    "A functional check of the unit under a series-lamp current limiter. "
    "Not an electrical safety approval."
)
OUTCOME_SCOPE = "Functional check under a current limiter; not an electrical safety approval."
FOOTER = "Certificate {number}: power-up test under a current limiter, not a safety approval"
PLOT_HEIGHT = 64 * mm
SWITCH_ON_HEIGHT = 50 * mm
QR_SIZE = 30 * mm
LABEL_WIDTH = 24 * mm
# Fractions of the text width for the readings table: #, source, unit, current, glow, band,
# draw, status.
READING_COLUMNS = (0.04, 0.09, 0.09, 0.115, 0.13, 0.13, 0.13, 0.275)
READING_HEADER = [
    "#",
    "Source voltage",
    "Voltage at the unit",
    "Current",
    "Glow seen",
    "Predicted healthy band",
    "Inferred draw (x declared load)",
    "Status",
]
INSTRUMENT_COLUMNS = (0.22, 0.15, 0.12, 0.19, 0.14, 0.18)
INSTRUMENT_HEADER = [
    "Instrument",
    "Used as",
    "Response",
    "Accuracy",
    "Calibration due",
    "Calibration state",
]
WORK_COLUMNS = (0.14, 0.58, 0.18, 0.10)
WORK_HEADER = ["Date", "Work done", "By", "Time"]
PARTS_COLUMNS = (0.14, 0.12, 0.40, 0.34)
PARTS_HEADER = ["Step of", "Quantity", "Part", "Note"]


def render_certificate(snapshot: dict) -> bytes:
    """The certificate PDF for a snapshot (the dict of reports.snapshot, schema certificate/1).

    Reads nothing but `snapshot`; the same snapshot gives the same bytes.
    """
    paper = snapshot["paper_size"]
    width = content_width(paper)
    certificate = snapshot["certificate"]
    unit = snapshot["unit"]
    tests = snapshot["tests"]
    # Snapshots store UTC; they print in the shop's zone (UTC for those from before).
    zone = snapshot.get("time_zone", "UTC")
    story = [
        _header(snapshot, width, zone),
        Paragraph(TITLE, STYLES["title"]),
        Paragraph(SCOPE, STYLES["subtitle"]),
    ]
    if certificate.get("supersedes"):
        story.append(
            Paragraph(
                f"This certificate supersedes certificate {text(certificate['supersedes'])}.",
                STYLES["body"],
            )
        )
    if unit.get("chassis_may_be_live") or snapshot.get("live_chassis_note"):
        story += [live_chassis_box(snapshot.get("live_chassis_note"), width), Spacer(1, 6)]
    if unit.get("changed_since_tested"):
        story.append(
            Paragraph(
                "<b>The unit record changed after it was tested.</b> This certificate states the "
                "facts the tests were judged with. "
                + " ".join(text(line) for line in unit["changed_since_tested"]),
                STYLES["warning"],
            )
        )
    story.append(Paragraph("Outcome", STYLES["heading"]))
    for index, test in enumerate(tests, start=1):
        story += [_outcome(test, index, len(tests), width, zone), Spacer(1, 4)]
    story += _unit_and_job(snapshot, width)
    if snapshot["job"].get("ready_override"):
        story.append(
            _override("Released as ready without a passed test", snapshot["job"]["ready_override"])
        )
    for left in snapshot.get("left_out_tests", []):
        story.append(
            Paragraph(
                f"<b>Not covered:</b> power-up test {text(left['id'])} ({text(left['outcome'])}): "
                f"{text(left['reason'])}",
                STYLES["warning"],
            )
        )
    story += _work_done(snapshot["work_done"], width)
    for index, test in enumerate(tests, start=1):
        story += _test(test, index, len(tests), width, zone)
    story += _caveats(snapshot, width)
    story.append(_sign_off(snapshot, width))
    return build_pdf(
        story,
        paper_size=paper,
        title=f"{TITLE} {certificate['number']}",
        subject=f"{SCOPE} Unit: {fmt.unit_name(unit)}.",
        author=snapshot["shop"]["name"],
        footer=FOOTER.format(number=certificate["number"]),
    )


def _header(snapshot: dict, width: float, zone: str) -> Table:
    certificate = snapshot["certificate"]
    return shop_header(
        snapshot["shop"],
        [
            f"<b>Certificate {text(certificate['number'])}</b>",
            f"Issued {fmt.moment(certificate['issued_at'], zone)}",
            f"by {text(certificate.get('issued_by'))}",
        ],
        width,
    )


def _test_name(test: dict, index: int, count: int, zone: str) -> str:
    name = "Power-up test" if count == 1 else f"Power-up test {index} of {count}"
    return f"{name}, {fmt.day(test.get('closed_at'), zone)}"


def _headline(test: dict) -> str:
    """What was found, in words; snapshots issued before headlines were stored get theirs
    from the outcome."""
    return test.get("headline") or OUTCOME_HEADLINES[test["outcome"]]


def _outcome(test: dict, index: int, count: int, width: float, zone: str) -> Table:
    colour = OUTCOME_COLOURS.get(test["outcome"], WARNING)
    left = [
        Paragraph(
            f'<font color="{colour.hexval()}">{text(_headline(test))}</font>',
            STYLES["outcome"],
        ),
        Paragraph(OUTCOME_SCOPE, STYLES["muted"]),
    ]
    right = [
        Paragraph(
            f"<b>{text(_test_name(test, index, count, zone))}.</b> {text(test['outcome_words'])}",
            STYLES["body"],
        )
    ]
    right += [
        Paragraph(text(_sentence(reason["message"])), STYLES["list"], bulletText="\u2022")
        for reason in test["reasons"]
    ]
    inner = Table([[left, right]], colWidths=[width * 0.24, width * 0.76 - 14])
    inner.setStyle(
        TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0)])
    )
    return boxed([inner], width, colour)


def _sentence(words: str) -> str:
    """The judgement's reason with a capital first letter, as it stands alone in a list."""
    return words[:1].upper() + words[1:]


def _unit_and_job(snapshot: dict, width: float) -> list:
    """The unit, then the customer and job, one under the other so that a long value (a
    4,000-character complaint) can run on to the next page."""
    unit = snapshot["unit"]
    job = snapshot["job"]
    unit_rows = [
        ("Unit", f"<b>{text(fmt.unit_name(unit))}</b>"),
        ("Category", text(unit.get("category"))),
        ("Serial number", text(unit.get("serial"))),
        ("Nameplate", text(fmt.rating(unit))),
        ("Fuse", text(unit.get("fuse"))),
        ("Construction", text(unit.get("construction"))),
        ("Protection class", text(unit.get("protection_class"))),
        ("Mains cord", text(unit.get("cord"))),
    ]
    job_rows = [
        ("Customer", text(snapshot["customer"]["name"])),
        ("Job", text(job["number"])),
        ("Received", fmt.day(job.get("received_on"))),
        ("Complaint", text(job.get("complaint"))),
    ]
    return [
        Paragraph("The unit", STYLES["subheading"]),
        key_value_table(unit_rows, width, LABEL_WIDTH),
        Paragraph("Customer and job", STYLES["subheading"]),
        key_value_table(job_rows, width, LABEL_WIDTH),
    ]


def _part_rows(steps: list[dict]) -> list[list]:
    """One row per part used, in step order: a step with a hundred parts splits between them."""
    return [
        [
            Paragraph(fmt.day(step.get("performed_at")), STYLES["cell"]),
            Paragraph(text(part.get("quantity")), STYLES["cell"]),
            Paragraph(text(part.get("part")), STYLES["cell"]),
            Paragraph(text(part["note"]) if part.get("note") else "", STYLES["cell"]),
        ]
        for step in steps
        for part in step.get("parts") or []
    ]


def _work_done(steps: list[dict], width: float) -> list:
    heading = Paragraph("Work done", STYLES["heading"])
    if not steps:
        return [heading, Paragraph("No repair steps were recorded for this job.", STYLES["body"])]
    rows = [
        [
            Paragraph(fmt.day(step.get("performed_at")), STYLES["cell"]),
            Paragraph(text(step.get("action")), STYLES["cell"]),
            Paragraph(text(step.get("technician")), STYLES["cell"]),
            f"{step['minutes']} min" if step.get("minutes") is not None else "",
        ]
        for step in steps
    ]
    flowables = [heading, data_table(WORK_HEADER, rows, [width * f for f in WORK_COLUMNS])]
    parts = _part_rows(steps)
    flowables.append(Paragraph("Parts used", STYLES["subheading"]))
    if parts:
        flowables.append(data_table(PARTS_HEADER, parts, [width * f for f in PARTS_COLUMNS]))
    else:
        flowables.append(Paragraph("No parts were recorded.", STYLES["body"]))
    return flowables


def _override(label: str, override) -> Paragraph:
    if isinstance(override, dict):
        words = text(override.get("reason"))
        if override.get("instruments"):
            words += f" (instruments: {text(', '.join(override['instruments']))})"
        who = f" by {text(override['by'])}" if override.get("by") else ""
    else:
        words, who = text(override), ""
    return Paragraph(f"<b>{label}{who}:</b> {words}", STYLES["warning"])


def _totals(load: dict) -> str:
    """The model's total draw beside the nameplate's figure (snapshots that carry both)."""
    if not load.get("model_total_power"):
        return ""
    return (
        f"; the model draws {text(load['model_total_power'])} in all "
        f"(nameplate: {text(load.get('nameplate_power'))})"
    )


def _percent(fraction: float) -> str:
    return f"{fraction * 100:.3g} %"


def _band_words(tolerances: dict | None) -> str:
    """What the healthy band allows for, in numbers (snapshots that carry the tolerances)."""
    if not tolerances:
        return ""
    return (
        f" The band allows {_percent(tolerances['load'])} either way on the declared load, "
        f"{_percent(tolerances['lamp_power'])} spread of the lamp's rated power and the "
        f"voltmeter's accuracy ({_percent(tolerances['meter_relative'])} of the reading + "
        f"{tolerances['meter_absolute']:g} V)."
    )


def _set_up(test: dict, width: float, zone: str) -> list:
    rig = test["rig"]
    limiter = test["limiter"]
    load = test["declared_load"]
    rows = [
        ("Technician", text(test.get("technician"))),
        (
            "Test run",
            f"{fmt.moment(test['started_at'], zone)} to {fmt.moment(test['closed_at'], zone)}",
        ),
        ("Rig", text(rig.get("name"))),
        (
            "Mains",
            text(", ".join(v for v in (rig.get("mains_voltage"), rig.get("mains_frequency")) if v)),
        ),
        ("Source", text(rig.get("source"))),
        ("Isolation", text(rig.get("isolation"))),
        ("Rig resistance", text(rig.get("internal_resistance"))),
        ("Series lamp", f"{text(limiter.get('label'))}: {text(limiter.get('description'))}"),
        (
            "Declared load",
            f"{text(load.get('summary'))}; basis: {text(load.get('basis'))}; "
            f"unit as tested: {text(load.get('configuration'))}{_totals(load)}",
        ),
        *(
            [
                (
                    "Model used",
                    f"{text(load.get('model'))}; assumed: "
                    + "; ".join(text(a) for a in load.get("assumptions", [])),
                )
            ]
            if load.get("assumptions")
            else []
        ),
        ("Ambient", text(test.get("ambient_temperature"))),
    ]
    tested = test.get("unit_as_tested")
    if tested:
        rows.append(
            (
                "Unit as tested",
                text(
                    f"{tested['construction']}; {tested['protection_class']}; "
                    f"{tested['rated_voltage']}, {tested['rated_power']}, "
                    f"{tested['rated_frequency']}"
                    + (
                        f"; voltage selector at {tested['voltage_selector']}"
                        if tested.get("voltage_selector")
                        else ""
                    )
                ),
            )
        )
    instruments = [
        [
            Paragraph(text(meter.get("label")), STYLES["cell"]),
            Paragraph(text(meter.get("role")), STYLES["cell"]),
            Paragraph(text(meter.get("response")), STYLES["cell"]),
            Paragraph(text(meter.get("accuracy")), STYLES["cell"]),
            Paragraph(
                fmt.day(meter.get("calibration_due"))
                if meter.get("calibration_due")
                else "no due date recorded",
                STYLES["cell"],
            ),
            Paragraph(
                "in calibration" if meter.get("in_calibration") else "<b>out of calibration</b>",
                STYLES["cell"],
            ),
        ]
        for meter in test["instruments"]
    ]
    flowables = [
        Paragraph("Test set-up", STYLES["subheading"]),
        key_value_table(rows, width, LABEL_WIDTH),
        Paragraph("Instruments", STYLES["subheading"]),
    ]
    if instruments:
        flowables.append(
            data_table(INSTRUMENT_HEADER, instruments, [width * f for f in INSTRUMENT_COLUMNS])
        )
    else:
        flowables.append(Paragraph("No instruments were recorded for this test.", STYLES["body"]))
    for label, key in (
        ("Calibration override", "calibration_override"),
        ("Live-chassis override", "live_chassis_override"),
        ("Voltage override", "voltage_override"),
    ):
        if test.get(key):
            flowables.append(_override(label, test[key]))
    for warning in test.get("warnings", []):
        flowables.append(Paragraph(f"<b>Bench warning:</b> {text(warning)}", STYLES["warning"]))
    return flowables


def _plot(test: dict, width: float) -> KeepTogether:
    load = test["declared_load"].get("summary")
    explanation = (
        "Each mark is one reading: the voltage at the unit against the voltage of the source. "
        f"A healthy unit of the declared load ({text(load)}) would read inside the shaded band. "
        "A unit that draws more than declared reads lower, because the lamp then takes more of "
        "the voltage; one that draws less reads higher."
    ) + _band_words(test.get("band_tolerances"))
    flowables = [
        Paragraph("Readings against a healthy unit", STYLES["subheading"]),
        Paragraph(explanation, STYLES["small"]),
        Spacer(1, 4),
        readings_plot(test, width, PLOT_HEIGHT),
    ]
    cap = test.get("fault_cap")
    if cap:
        glow = f", and the lamp would glow {text(cap['glow'])}" if cap.get("glow") else ""
        flowables.append(
            Paragraph(
                f"<b>Fault-current cap:</b> through this lamp, a dead short in the unit would draw "
                f"at most {fmt.amperes(cap['current'])} at {fmt.volts(cap['source_voltage'])} "
                f"from the source{glow}.",
                STYLES["small"],
            )
        )
    return KeepTogether(flowables)


def _switch_on(test: dict, width: float) -> list:
    """A healthy unit's switch-on under the readings plot; nothing for a snapshot from before
    certificates carried it, a line where the model could not follow the unit."""
    if "switch_on" not in test:
        return []
    switch_on = test["switch_on"]
    heading = Paragraph("Switching on a healthy unit", STYLES["subheading"])
    if switch_on is None:
        return [
            heading,
            Paragraph(
                "The model cannot follow this unit's switch-on, so none is drawn.",
                STYLES["small"],
            ),
        ]
    drawing, stretches, unnamed = switch_on_plot(switch_on, width, SWITCH_ON_HEIGHT)
    explanation = (
        "Modelled, not measured: the lamp's current when a healthy unit of the declared load "
        f"is switched on at {look.volts(switch_on['source_voltage'])} from the source, at the "
        "crest of the wave, through this lamp. "
        f"{look.LINES_WORDS} {look.settling_sentence(switch_on)} "
        f"{look.crowded_sentence(stretches, unnamed)}"
    )
    return [
        KeepTogether(
            [
                heading,
                Paragraph(text(explanation.strip()), STYLES["small"]),
                Spacer(1, 4),
                drawing,
                Paragraph(
                    f"<b>At switch-on:</b> {text(look.behaviour_words(switch_on))}",
                    STYLES["small"],
                ),
            ]
        )
    ]


def _readings(test: dict, width: float) -> list:
    rows = []
    for reading in test["readings"]:
        status = status_words(reading["status"])
        if reading.get("lamp_bypassed"):
            status += " (lamp bypassed)"
        rows.append(
            [
                str(reading["sequence"]),
                fmt.volts(reading["source_voltage"]),
                fmt.volts(reading["load_voltage"]),
                fmt.amperes(reading.get("current")),
                Paragraph(
                    text(fmt.glow(reading.get("glow_seen"), reading.get("behaviour_seen"))),
                    STYLES["cell"],
                ),
                fmt.band(reading["band_low"], reading["band_high"]),
                Paragraph(
                    fmt.draw(reading.get("inferred_draw"), reading["status"]), STYLES["cell"]
                ),
                Paragraph(text(status), STYLES["cell"]),
            ]
        )
    return [
        Paragraph("Readings", STYLES["subheading"]),
        data_table(READING_HEADER, rows, [width * f for f in READING_COLUMNS]),
    ]


def _test(test: dict, index: int, count: int, width: float, zone: str) -> list:
    return [
        CondPageBreak(60 * mm),
        Paragraph(text(_test_name(test, index, count, zone)), STYLES["heading"]),
        *_set_up(test, width, zone),
        Spacer(1, 6),
        _plot(test, width),
        *_switch_on(test, width),
        *_readings(test, width),
    ]


def _caveats(snapshot: dict, width: float) -> list:
    return [
        CondPageBreak(50 * mm),
        Paragraph("Safety caveats", STYLES["heading"]),
        Paragraph(
            "What this test does not prove, and what anyone who handles or powers this "
            "unit must know:",
            STYLES["body"],
        ),
        *numbered([text(caveat["text"]) for caveat in snapshot["caveats"]], "caveat"),
        Spacer(1, 4),
        boxed([Paragraph(f"<b>{text(snapshot['statement'])}</b>", STYLES["body"])], width, INK),
    ]


def qr_code(value: str, size: float) -> Drawing:
    """A QR code of `value`, `size` points square (quiet border included).

    Encoded by reportlab's QR encoder (error correction M), drawn as one path: each run of
    dark modules in a row is one rectangle of it. reportlab's own widget makes a shape per
    run, and rendering those shapes cost more than the encoding.
    """
    widget = QrCodeWidget(value, barLevel="M")
    code = widget.qr
    code.make()
    border = widget.barBorder
    box = size / (code.getModuleCount() + 2 * border)
    path = Path(fillColor=widget.barFillColor, strokeColor=None, strokeWidth=0)
    for row_number, row in enumerate(code.modules):
        top = size - (row_number + border) * box
        column = border
        for dark, run in itertools.groupby(map(bool, row)):
            length = len(list(run))
            if dark:
                left, right = column * box, (column + length) * box
                path.moveTo(left, top - box)
                path.lineTo(right, top - box)
                path.lineTo(right, top)
                path.lineTo(left, top)
                path.closePath()
            column += length
    drawing = Drawing(size, size)
    drawing.add(path)
    return drawing


def _sign_off(snapshot: dict, width: float) -> KeepTogether:
    certificate = snapshot["certificate"]
    technician = snapshot["signature"]["technician"]
    left_width = width - QR_SIZE - 8 * mm
    url = certificate["verification_url"]
    left = [
        signature_lines([f"Technician: {text(technician)}", "Date"], left_width),
        Spacer(1, 8),
        Paragraph(
            f"<b>Check this certificate</b> by scanning the code or visiting {text(url)}",
            STYLES["body"],
        ),
        Paragraph(
            f"Verification code: <b>{text(certificate['verification_code'])}</b>", STYLES["body"]
        ),
        Paragraph(
            "The check says whether this certificate is still valid or has been "
            "superseded or revoked.",
            STYLES["muted"],
        ),
    ]
    table = Table([[left, qr_code(url, QR_SIZE)]], colWidths=[left_width, QR_SIZE + 8 * mm])
    table.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LEFTPADDING", (0, 0), (-1, -1), 0),
                ("RIGHTPADDING", (0, 0), (-1, -1), 0),
                ("ALIGN", (1, 0), (1, 0), "RIGHT"),
            ]
        )
    )
    return KeepTogether([Paragraph("Sign-off and verification", STYLES["heading"]), table])
