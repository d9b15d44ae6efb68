"""The switch-on on the certificate: in new snapshots, drawn and said; old snapshots unchanged."""

from __future__ import annotations

import io
import json

import pypdf
import pytest
from reportlab.graphics.shapes import Group, Polygon, PolyLine, String

from reports import services
from reports.pdf import render_certificate
from reports.pdf.styles import MARGIN
from reports.pdf.switch_on_plot import switch_on_plot
from reports.selectors import certificate_intact
from shop.bench.switch_on import MAX_POINTS
from shop.physics.glow import GLOW_CLASSES
from tests.bench.test_switch_on_plot import adapter_block
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
    assert "at 120 V from the source" in text
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


def strings_of(node) -> list[String]:
    """Every String in a drawing, however deep in its groups."""
    found = []
    for item in getattr(node, "contents", []):
        if isinstance(item, String):
            found.append(item)
        elif isinstance(item, Group):
            found.extend(strings_of(item))
    return found


def test_the_certificate_draws_time_on_a_log_axis_with_decade_ticks():
    drawing, _, _ = switch_on_plot(long_block("cycles", "Cycles."), 500, 140)
    words = [string.text for string in strings_of(drawing)]
    assert "Time since switch-on [s], log scale" in words
    # 0.15 s to the 30 s followed: the decades inside, and 2s and 5s where they fit.
    assert {"1 s", "10 s"} <= set(words)
    seconds = [w for w in words if w.endswith(" s") and w[0].isdigit()]
    assert set(seconds) <= {f"{m * 10.0**k:g} s" for m in (1, 2, 5) for k in range(-3, 3)}
    at = {s.text: s.x for s in strings_of(drawing) if s.text in ("1 s", "2 s", "10 s")}
    if "2 s" in at:
        decade = at["10 s"] - at["1 s"]
        assert at["2 s"] - at["1 s"] == pytest.approx(0.30103 * decade, rel=1e-3)


def test_the_adapters_current_axis_fits_its_rms_current_and_its_peaks_are_clipped():
    drawing, _, _ = switch_on_plot(adapter_block(), 500, 140)
    strings = strings_of(drawing)
    words = [s.text for s in strings]
    currents = [float(s.text) for s in strings if s.textAnchor == "end" and s.text[0].isdigit()]
    assert max(currents) == 0.5  # above the largest RMS current, 0.394 A, not the 3.43 A peak
    assert "peaks above the frame are clipped" in words
    assert "inrush peak 3.43 A (instantaneous) at 0.010 s" in words
    assert "inrush peak, above the frame" in words
    # The dotted peak line never leaves the frame: its top is where the 0.5 A tick is.
    top = next(s.y for s in strings if s.text == "0.5" and s.textAnchor == "end") + 2.5
    peak_ys = [
        y
        for item in drawing.contents
        if isinstance(item, PolyLine) and item.strokeDashArray == [1, 1.5]
        for y in item.points[1::2]
    ]
    assert peak_ys and max(peak_ys) == pytest.approx(top, abs=0.01)
    assert any(isinstance(item, Polygon) for item in drawing.contents)  # the inrush's triangle


def test_an_old_snapshots_switch_on_block_renders_on_the_new_axes():
    # Blocks issued before the log axis were followed for 0.5 s and hold the same keys.
    block = adapter_block()
    block["followed_for"] = 0.5
    block["glow_over_time"] = [m for m in block["glow_over_time"] if m["time"] <= 0.5]
    text = " ".join(pages_of(render_certificate(with_switch_on(block))))
    assert "log scale" in text
    assert "0.01 s" in text and "0.1 s" in text
