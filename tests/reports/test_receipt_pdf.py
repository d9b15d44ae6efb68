"""The intake receipt PDF: what the customer is told, byte-for-byte repeatable."""

from __future__ import annotations

import io
import json
from pathlib import Path

import pypdf
import pytest

from reports.pdf import render_receipt

DATA = Path(__file__).parent / "data"


def receipt_data() -> dict:
    return json.loads((DATA / "receipt.json").read_text())


def text_of(pdf: bytes) -> str:
    pages = pypdf.PdfReader(io.BytesIO(pdf)).pages
    return " ".join(" ".join(page.extract_text().split()) for page in pages)


@pytest.fixture(scope="module")
def example_pdf() -> bytes:
    return render_receipt(receipt_data())


@pytest.fixture(scope="module")
def example_text(example_pdf) -> str:
    return text_of(example_pdf)


def test_receipt_names_the_job_and_its_dates(example_text):
    assert "Job 2026-0002" in example_text
    assert "Received 29 November 2026" in example_text
    assert "12 December 2026" in example_text


def test_receipt_names_the_unit_and_its_serial(example_text):
    assert "Halvorsen Mantel Five (1949)" in example_text
    assert "H5-1187" in example_text
    assert "Transformerless (hot chassis)" in example_text


def test_receipt_holds_the_complaint_and_the_condition_at_intake(example_text):
    assert "Dead; smells of burnt wax." in example_text
    assert "Series-string valve set; back cover missing." in example_text


def test_receipt_holds_each_next_step_the_terms_and_the_caution(example_text):
    data = receipt_data()
    for step in data["next_steps"]:
        assert step in example_text
    assert data["terms"] in example_text
    assert data["caution"] in example_text


def test_receipt_names_the_customer_and_the_shop(example_text):
    assert "Piers Vantongeren" in example_text
    assert "555-0178" in example_text
    assert "Lantern Row Repair Bench" in example_text


def test_a_live_chassis_unit_gets_the_live_chassis_warning(example_text):
    assert "Live chassis. The chassis of this unit may be at mains potential" in example_text


def test_a_unit_whose_chassis_is_not_live_gets_no_warning():
    data = receipt_data()
    data["unit"]["chassis_may_be_live"] = False
    assert "Live chassis" not in text_of(render_receipt(data))


def test_a_given_live_chassis_note_is_printed_as_given():
    data = receipt_data()
    data["live_chassis_note"] = "Do not plug this unit in at home."
    assert "Live chassis. Do not plug this unit in at home." in text_of(render_receipt(data))


def test_a_missing_estimate_says_one_will_follow(example_text):
    assert "not yet given" in example_text


def test_the_same_data_renders_identical_bytes(example_pdf):
    assert render_receipt(receipt_data()) == example_pdf


def test_receipt_metadata_names_title_subject_and_author(example_pdf):
    metadata = pypdf.PdfReader(io.BytesIO(example_pdf)).metadata
    assert metadata.title == "Intake receipt, job 2026-0002"
    assert "H5-1187" in metadata.subject
    assert metadata.author == "Lantern Row Repair Bench"


def test_receipt_pages_say_n_of_m(example_text):
    assert "Page 1 of 1" in example_text


def test_receipt_paper_size_comes_from_the_data():
    data = receipt_data()
    data["paper_size"] = "Letter"
    page = pypdf.PdfReader(io.BytesIO(render_receipt(data))).pages[0]
    assert (float(page.mediabox.width), float(page.mediabox.height)) == (612, 792)
