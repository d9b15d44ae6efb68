"""The switch-on on the certificate: in new snapshots, drawn and said; old snapshots unchanged."""

from __future__ import annotations

import io
import json

import pypdf

from reports import services
from reports.pdf import render_certificate
from reports.pdf.styles import MARGIN
from reports.selectors import certificate_intact
from shop.bench.switch_on import MAX_POINTS
from shop.physics.glow import GLOW_CLASSES
from tests.reports.test_certificate_pdf import (
    POSITION_TOLERANCE,
    certificate_snapshot,
    normalised,
    pages_of,
)

HEADING = "Switching on a healthy unit"


def issued(closed_test, staff):
    certificate = services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    with certificate.pdf.open("rb") as stored:
        pdf = stored.read()
    return certificate, json.loads(certificate.snapshot), pdf


def test_a_new_certificate_carries_the_thinned_switch_on_and_prints_its_sentence(
    closed_test, staff
):
    certificate, snapshot, pdf = issued(closed_test, staff)
    switch_on = snapshot["tests"][0]["switch_on"]
    # The fixture's readings go up to 120 V: the switch-on is shown at what the unit saw.
    assert switch_on["source_voltage"] == 120.0
    assert 0 < len(switch_on["glow_over_time"]) <= MAX_POINTS
    assert {m["glow"] for m in switch_on["glow_over_time"]} <= set(GLOW_CLASSES)
    text = " ".join(pages_of(pdf))
    assert HEADING in text
    assert f"At switch-on: {normalised(switch_on['behaviour_words'])}" in text
    assert "at 120.0 V from the source" in text
    assert certificate_intact(certificate)


def with_switch_on(block) -> dict:
    snapshot = certificate_snapshot()
    snapshot["tests"][0]["switch_on"] = block
    return snapshot


def test_an_old_snapshot_without_the_switch_on_still_renders_without_it():
    snapshot = certificate_snapshot()
    assert "switch_on" not in snapshot["tests"][0]
    text = " ".join(pages_of(render_certificate(snapshot)))
    assert HEADING not in text
    assert "Readings against a healthy unit" in text
    assert "at most 0.870 A at 132.0 V" in text


def test_a_switch_on_the_model_could_not_follow_is_said_in_a_line():
    text = " ".join(pages_of(render_certificate(with_switch_on(None))))
    assert "The model cannot follow this unit's switch-on, so none is drawn." in text


def long_block(behaviour: str, words: str | None) -> dict:
    """200 moments over 30 s of a unit whose glow changes often, as a later model may give."""
    moments = [
        {
            "time": round(0.15 * (i + 1), 4),
            "glow": GLOW_CLASSES[(i // 3) % len(GLOW_CLASSES)],
            "current": 0.3 + 0.1 * ((i // 3) % 2),
            "peak_current": 0.5 + 0.1 * ((i // 3) % 2) + (1.0 if i == 0 else 0.0),
        }
        for i in range(MAX_POINTS)
    ]
    block = {
        "source_voltage": 120.0,
        "inrush_peak_current": 1.6,
        "steady_current": 0.35,
        "settle_time": None,
        "followed_for": 30.0,
        "behaviour": behaviour,
        "steady_glow": "dull",
        "glow_over_time": moments,
    }
    if words is not None:
        block["behaviour_words"] = words
    return block


def test_a_long_crowded_switch_on_renders_with_its_inrush_and_says_names_were_left_out():
    pdf = render_certificate(
        with_switch_on(long_block("cycles", "Cycles: a switch-mode unit restarting."))
    )
    text = " ".join(pages_of(pdf))
    assert "At switch-on: Cycles: a switch-mode unit restarting." in text
    assert "inrush peak 1.60 A (instantaneous) at 0.150 s" in text
    assert "Not within 10 % of the steady current in the 30.00 s followed." in text
    assert "stretches too short to name are told by their colour" in text
    assert render_certificate(with_switch_on(long_block("cycles", "Cycles."))) != pdf


def test_a_behaviour_without_words_is_printed_as_its_code_in_words():
    text = " ".join(pages_of(render_certificate(with_switch_on(long_block("hiccups", None)))))
    assert "At switch-on: Switch-on behaviour: hiccups." in text


def test_no_text_of_the_switch_on_starts_outside_the_margins():
    pdf = render_certificate(with_switch_on(long_block("cycles", "Cycles.")))
    reader = pypdf.PdfReader(io.BytesIO(pdf))
    page = next(page for page in reader.pages if HEADING in normalised(page.extract_text()))
    limit = float(page.mediabox.width) - MARGIN + POSITION_TOLERANCE
    starts = []

    def record(text, cm, tm, font, size):
        if text.strip():
            starts.append((cm[4] + tm[4] * cm[0] + tm[5] * cm[2], text))

    page.extract_text(visitor_text=record)
    assert any("lamp glow" in text for _, text in starts)  # the drawing's words are read too
    assert [t for x, t in starts if x > limit or x < MARGIN - POSITION_TOLERANCE] == []
