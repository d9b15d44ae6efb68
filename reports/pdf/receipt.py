"""The intake receipt as PDF: what the shop received, in what state, and what happens next."""

from __future__ import annotations

from reportlab.lib.units import mm
from reportlab.platypus import KeepTogether, Paragraph, Spacer

from . import formatting as fmt
from .formatting import text
from .layout import (
    boxed,
    build_pdf,
    content_width,
    key_value_table,
    live_chassis_box,
    numbered,
    shop_header,
    signature_lines,
)
from .styles import INK, STYLES

TITLE = "Intake receipt"
SUBTITLE = "What we received from you, in what state, and what happens next."
FOOTER = "Intake receipt, job {number}"
LABEL_WIDTH = 32 * mm


def render_receipt(data: dict) -> bytes:
    """The intake receipt PDF for `data` (schema receipt/1). Reads nothing else."""
    paper = data["paper_size"]
    width = content_width(paper)
    job = data["job"]
    unit = data["unit"]
    customer = data["customer"]
    header = shop_header(
        data["shop"],
        [
            f"<b>Job {text(job['number'])}</b>",
            f"Received {fmt.day(job.get('received_on'))}",
        ],
        width,
    )
    job_rows = [
        ("Customer", text(customer.get("name"))),
        # A copy made for someone who may not read the customer's contact details has none.
        *([("Phone", text(customer.get("phone")))] if "phone" in customer else []),
        ("Received", fmt.day(job.get("received_on"))),
        (
            "Ready by (expected)",
            fmt.day(job["promised_on"]) if job.get("promised_on") else "to be agreed",
        ),
        (
            "Estimate",
            text(job["estimate"])
            if job.get("estimate") is not None
            else "not yet given; we contact you with one",
        ),
    ]
    unit_rows = [
        ("Unit", f"<b>{text(fmt.unit_name(unit))}</b>"),
        ("Category", text(unit.get("category"))),
        ("Serial number", text(unit.get("serial"))),
        ("Nameplate", text(fmt.rating(unit))),
        ("Construction", text(unit.get("construction"))),
        ("Complaint", text(job.get("complaint"))),
        ("Condition at intake", text(data.get("condition"))),
    ]
    story = [
        header,
        Paragraph(TITLE, STYLES["title"]),
        Paragraph(SUBTITLE, STYLES["subtitle"]),
        key_value_table(job_rows, width, LABEL_WIDTH),
        Paragraph("The unit", STYLES["heading"]),
        key_value_table(unit_rows, width, LABEL_WIDTH),
        Spacer(1, 8),
    ]
    if unit.get("chassis_may_be_live") or data.get("live_chassis_note"):
        story += [live_chassis_box(data.get("live_chassis_note"), width), Spacer(1, 6)]
    story += [
        boxed([Paragraph(f"<b>Caution.</b> {text(data['caution'])}", STYLES["body"])], width, INK),
        Paragraph("What happens next", STYLES["heading"]),
        *numbered([text(step) for step in data["next_steps"]]),
        Paragraph("Terms", STYLES["heading"]),
        Paragraph(text(data.get("terms")), STYLES["body"]),
        KeepTogether(
            [
                Spacer(1, 6),
                signature_lines(
                    ["Received for the shop by", f"Customer: {text(customer.get('name'))}"], width
                ),
            ]
        ),
    ]
    return build_pdf(
        story,
        paper_size=paper,
        title=f"{TITLE}, job {job['number']}",
        subject=f"{TITLE} for {fmt.unit_name(unit)}, serial {unit.get('serial') or 'none'}.",
        author=data["shop"]["name"],
        footer=FOOTER.format(number=job["number"]),
    )
