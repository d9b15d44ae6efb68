"""The certificate PDF: what its text says, that it repeats byte for byte, and that it fits."""

from __future__ import annotations

import copy
import io
import json
import subprocess
import sys
from pathlib import Path

import pypdf
import pytest

from reports.pdf import render_certificate
from reports.pdf.formatting import amperes, band, draw, volts
from reports.pdf.styles import MARGIN

DATA = Path(__file__).parent / "data"
REPOSITORY = Path(__file__).resolve().parents[2]
LONG_MODEL_NAME = (
    "Grand concert radiogram with twin loudspeakers, record changer and short-wave bandspread "
    "tuning, export model for tropical climates, fitted with "
    "Extra-long-token-without-any-space-to-break-it-0123456789abcdef"
)
READING_STATUSES = ("in_band", "draw_above_band", "draw_below_band", "draw_high", "draw_near_zero")
# A point is 1/72 inch; text starting within half a point of the margin is inside it.
POSITION_TOLERANCE = 0.5


def certificate_snapshot() -> dict:
    """The example snapshot, fresh for each caller to change."""
    return json.loads((DATA / "certificate_snapshot.json").read_text())


def long_snapshot() -> dict:
    """A 200-character model name and 40 readings of every status, to push the layout."""
    snapshot = certificate_snapshot()
    snapshot["unit"]["model_name"] = LONG_MODEL_NAME
    test = snapshot["tests"][0]
    template = test["readings"][0]
    test["readings"] = [
        {
            **template,
            "sequence": index + 1,
            "source_voltage": 3.1 * (index + 1),
            "load_voltage": 2.7 * (index + 1),
            "status": READING_STATUSES[index % 5],
            "current": 0.0213 * (index + 1) if index % 2 else None,
            "inferred_draw": None
            if READING_STATUSES[index % 5] == "draw_high"
            else 0.5 + index / 20,
        }
        for index in range(40)
    ]
    return snapshot


def normalised(words: str) -> str:
    return " ".join(words.split())


def pages_of(pdf: bytes) -> list[str]:
    """Each page's extracted text with runs of whitespace made single spaces."""
    return [normalised(page.extract_text()) for page in pypdf.PdfReader(io.BytesIO(pdf)).pages]


@pytest.fixture(scope="module")
def example_pdf() -> bytes:
    return render_certificate(certificate_snapshot())


@pytest.fixture(scope="module")
def example_text(example_pdf) -> str:
    return " ".join(pages_of(example_pdf))


@pytest.fixture(scope="module")
def long_pdf() -> bytes:
    return render_certificate(long_snapshot())


def test_volts_print_to_a_tenth_of_a_volt():
    assert volts(28.14) == "28.1 V"
    assert volts(120) == "120.0 V"


def test_amperes_print_to_three_significant_figures():
    assert amperes(0.87) == "0.870 A"
    assert amperes(0.012345) == "0.0123 A"
    assert amperes(12.345) == "12.3 A"
    assert amperes(1234.5) == "1234 A"


def test_a_missing_current_prints_as_not_measured():
    assert amperes(None) == "not measured"


def test_draw_prints_as_a_multiple_of_the_declared_load():
    assert draw(1.0234, "in_band") == "1.02x"
    assert draw(25.34, "draw_high") == "25.3x"


def test_an_unbounded_draw_of_a_short_says_so():
    assert draw(None, "draw_high") == "unbounded (short)"


def test_a_draw_the_readings_cannot_tell_says_so():
    assert draw(None, "in_band") == "cannot be inferred"


def test_band_prints_both_ends_in_volts():
    assert band(26.94, 29.8) == "26.9\u201329.8 V"


def test_certificate_text_holds_its_number_and_issue_date(example_text):
    assert "C-2026-0001" in example_text
    assert "Issued 1 December 2026, 21:50 UTC" in example_text


def test_the_title_says_it_is_a_functional_check_not_a_safety_approval(example_pdf):
    first_page = pages_of(example_pdf)[0]
    assert "Power-up test certificate" in first_page
    assert "series-lamp current limiter" in first_page
    assert "Not an electrical safety approval" in first_page


def test_the_outcome_stands_beside_the_words_that_limit_it(example_pdf):
    first_page = pages_of(example_pdf)[0]
    after_outcome = first_page[first_page.index("In band at full") :][:120]
    assert "not an electrical safety approval" in after_outcome


def test_the_headline_states_what_was_found_not_a_bare_pass(example_pdf):
    first_page = pages_of(example_pdf)[0]
    assert "In band at full" in first_page
    assert "PASS" not in first_page


def test_certificate_text_holds_the_outcome_words_and_every_reason(example_text):
    test = certificate_snapshot()["tests"][0]
    assert normalised(test["outcome_words"]) in example_text
    for reason in test["reasons"]:
        message = normalised(reason["message"])
        assert message[0].upper() + message[1:] in example_text


def test_certificate_text_holds_every_readings_source_and_unit_volts(example_text):
    for reading in certificate_snapshot()["tests"][0]["readings"]:
        assert f"{reading['source_voltage']:.1f} V {reading['load_voltage']:.1f} V" in example_text


def test_certificate_text_holds_every_caveat_and_the_statement(example_text):
    snapshot = certificate_snapshot()
    for caveat in snapshot["caveats"]:
        assert normalised(caveat["text"]) in example_text
    assert normalised(snapshot["statement"]) in example_text


def test_the_last_caveat_says_local_codes_prevail(example_text):
    assert "Local electrical codes and licensed practice take precedence" in example_text


def test_certificate_text_names_each_instrument_and_its_calibration_due_date(example_text):
    assert "Corvid TM-9 C9-1142" in example_text
    assert "2 October 2027" in example_text  # calibration_due 2027-10-02 in the example
    assert "in calibration" in example_text


def test_certificate_text_describes_the_unit_customer_and_set_up(example_text):
    for words in (
        "Brightwave Console 7 (1954)",
        "BW7-40211",
        "120 V, 65 W, 60 Hz",
        "Isolating power transformer",
        "Class 0",
        "2-wire",
        "Orla Quennell",
        "Loud hum, no stations after warm-up.",
        "Replaced reservoir and smoothing",
        "2 47 uF 450 V electrolytic reservoir and smoothing",
        "Variable autotransformer, 132 V at full dial",
        "Isolation transformer, 500 VA",
        "one 60 W 120 V gas-filled tungsten lamp",
        "a resistance drawing 65 W at 120 V",
    ):
        assert words in example_text


def test_the_fault_current_cap_is_stated_with_units(example_text):
    assert "at most 0.870 A at 132.0 V" in example_text


def test_the_verification_code_and_address_are_printed(example_text):
    certificate = certificate_snapshot()["certificate"]
    assert certificate["verification_code"] in example_text
    assert certificate["verification_url"] in example_text.replace(" ", "")


def test_the_technician_has_a_signature_line(example_text):
    assert "Technician: Theo Vasquez-Lind" in example_text


def test_the_same_snapshot_renders_identical_bytes(example_pdf):
    assert render_certificate(certificate_snapshot()) == example_pdf


def test_the_metadata_names_title_subject_and_author(example_pdf):
    metadata = pypdf.PdfReader(io.BytesIO(example_pdf)).metadata
    assert metadata.title == "Power-up test certificate C-2026-0001"
    assert "not an electrical safety approval" in metadata.subject.lower()
    assert "Brightwave Console 7" in metadata.subject
    assert metadata.author == "Lantern Row Repair Bench"


def test_every_page_says_n_of_m(example_pdf):
    pages = pages_of(example_pdf)
    for number, page in enumerate(pages, start=1):
        assert f"Page {number} of {len(pages)}" in page


def test_the_paper_size_comes_from_the_snapshot():
    snapshot = certificate_snapshot()
    snapshot["paper_size"] = "Letter"
    page = pypdf.PdfReader(io.BytesIO(render_certificate(snapshot))).pages[0]
    assert (float(page.mediabox.width), float(page.mediabox.height)) == (612, 792)


def test_a4_is_a4(example_pdf):
    page = pypdf.PdfReader(io.BytesIO(example_pdf)).pages[0]
    assert (round(float(page.mediabox.width)), round(float(page.mediabox.height))) == (595, 842)


def test_an_unknown_paper_size_is_refused_by_name():
    snapshot = certificate_snapshot()
    snapshot["paper_size"] = "B5"
    with pytest.raises(ValueError, match="paper_size"):
        render_certificate(snapshot)


def test_an_unknown_reading_status_is_refused_by_name():
    snapshot = certificate_snapshot()
    snapshot["tests"][0]["readings"][0]["status"] = "fine"
    with pytest.raises(ValueError, match="status"):
        render_certificate(snapshot)


def test_forty_readings_continue_on_the_next_page_with_the_header_repeated(long_pdf):
    readings = long_snapshot()["tests"][0]["readings"]
    rows = [
        f"{r['sequence']} {r['source_voltage']:.1f} V {r['load_voltage']:.1f} V" for r in readings
    ]
    pages = pages_of(long_pdf)
    table_pages = [page for page in pages if any(row in page for row in rows)]
    assert len(table_pages) >= 2
    for page in table_pages:
        assert "Predicted healthy band Inferred draw (x declared load) Status" in page
    everything = " ".join(pages)
    assert all(row in everything for row in rows)


def test_the_long_model_name_is_printed_in_full(long_pdf):
    first_page = pages_of(long_pdf)[0]
    # Words wrap at spaces; the one token longer than a line is split across lines too.
    assert normalised(LONG_MODEL_NAME).replace(" ", "") in first_page.replace(" ", "")


def test_no_text_starts_beyond_the_right_margin(long_pdf):
    reader = pypdf.PdfReader(io.BytesIO(long_pdf))
    for page in reader.pages:
        limit = float(page.mediabox.width) - MARGIN + POSITION_TOLERANCE
        starts = []

        def record(text, cm, tm, font, size, starts=starts):
            if text.strip():
                starts.append((cm[4] + tm[4] * cm[0] + tm[5] * cm[2], text))

        page.extract_text(visitor_text=record)
        assert starts
        assert [text for x, text in starts if x > limit or x < MARGIN - POSITION_TOLERANCE] == []


def test_special_characters_print_as_typed():
    snapshot = certificate_snapshot()
    snapshot["job"]["complaint"] = "Hum <50 Hz> & a <b>buzz</b>"
    text = " ".join(pages_of(render_certificate(snapshot)))
    assert "Hum <50 Hz> & a <b>buzz</b>" in text


def test_measured_currents_and_unbounded_draws_are_printed():
    snapshot = certificate_snapshot()
    reading = snapshot["tests"][0]["readings"][0]
    reading.update(current=0.87, status="draw_high", inferred_draw=None)
    text = " ".join(pages_of(render_certificate(snapshot)))
    assert "0.870 A" in text
    assert "unbounded (short)" in text
    assert "draws far more than declared" in text


def test_a_live_chassis_unit_carries_its_note_on_the_first_page():
    snapshot = certificate_snapshot()
    snapshot["unit"]["chassis_may_be_live"] = True
    snapshot["live_chassis_note"] = "This unit's chassis may be at mains potential."
    first_page = pages_of(render_certificate(snapshot))[0]
    assert "Live chassis. This unit's chassis may be at mains potential." in first_page


def test_a_unit_whose_chassis_is_not_live_has_no_live_chassis_note(example_text):
    assert "Live chassis" not in example_text


def test_a_superseding_certificate_names_the_one_it_replaces():
    snapshot = certificate_snapshot()
    snapshot["certificate"]["supersedes"] = "C-2026-0000"
    first_page = pages_of(render_certificate(snapshot))[0]
    assert "This certificate supersedes certificate C-2026-0000." in first_page


def test_overrides_are_printed_with_who_and_why():
    snapshot = certificate_snapshot()
    test = snapshot["tests"][0]
    test["instruments"][0]["in_calibration"] = False
    test["calibration_override"] = {
        "reason": "Checked against the reference cell today",
        "by": "Lena Marrick",
        "instruments": ["Corvid TM-9 (test 1)"],
    }
    test["live_chassis_override"] = {
        "reason": "Isolated by the unit's own transformer",
        "by": "Lena Marrick",
    }
    text = " ".join(pages_of(render_certificate(snapshot)))
    assert "out of calibration" in text
    assert (
        "Calibration override by Lena Marrick: Checked against the reference cell today "
        "(instruments: Corvid TM-9 (test 1))"
    ) in text
    assert "Live-chassis override by Lena Marrick: Isolated by the unit's own transformer" in text


def test_every_test_of_a_certificate_has_its_outcome_printed():
    snapshot = certificate_snapshot()
    second = copy.deepcopy(snapshot["tests"][0])
    second.update(
        id=2,
        outcome="fail",
        outcome_words="Fail: the unit drew what a healthy unit does not; see the reasons.",
    )
    snapshot["tests"].append(second)
    first_page = pages_of(render_certificate(snapshot))[0]
    assert "Power-up test 1 of 2" in first_page
    assert "Far outside the band" in first_page
    assert "Fail: the unit drew what a healthy unit does not" in first_page


def test_rendering_loads_no_django():
    script = (
        "import json, sys; from reports.pdf import render_certificate; "
        f"render_certificate(json.load(open({str(DATA / 'certificate_snapshot.json')!r}))); "
        "print(sorted(m for m in sys.modules if m.split('.')[0] == 'django'))"
    )
    result = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, cwd=REPOSITORY, check=True
    )
    assert result.stdout.strip() == "[]"
