"""Every field at the longest the API allows still makes a certificate and a receipt."""

from __future__ import annotations

import io

import pypdf
import pytest

from reports.pdf.styles import MARGIN
from shop.intake.models import Customer, Job, RepairStep, Unit
from shop.intake.serializers import MAX_PARTS_PER_STEP
from tests.reports.test_pdf_pixels import CLEAR_LEVEL, SCALE, rasterise

STEPS = 2  # no limit on steps: two at their longest show that steps follow steps
PART_LENGTH = Customer._meta.get_field("name").max_length  # the part serializer's 200 too
PART_NOTE_LENGTH = 500


def filler(prefix: str, length: int) -> str:
    """`length` characters of numbered words ("k0001 k0002 ..."), each findable on its own."""
    words = []
    number = 1
    while sum(len(w) + 1 for w in words) < length:
        words.append(f"{prefix}{number:04d}")
        number += 1
    return " ".join(words)[:length]


def unbroken(prefix: str, length: int) -> str:
    """One word of `length` characters with no space to break it at."""
    return (prefix + "x" * length)[:length]


def squashed(pdf: bytes) -> str:
    """All pages' text without any whitespace, so that wrapped words join up again."""
    pages = pypdf.PdfReader(io.BytesIO(pdf)).pages
    return "".join("".join(page.extract_text().split()) for page in pages)


def assert_in_order(words_text: str, text: str) -> None:
    """Each word of `words_text` appears in `text` in order (page furniture may come between)."""
    position = 0
    for word in words_text.split():
        found = text.find(word, position)
        assert found >= 0, f"{word!r} missing after position {position}"
        position = found + len(word)


def assert_inside_the_margins(pdf: bytes, program: str, tmp_path) -> None:
    """No ink in the side margins: a long word wrapped rather than ran off the page."""
    pages = rasterise(pdf, program, tmp_path)
    assert len(pages) > 1
    margin = int(MARGIN * SCALE) - 1
    for page in pages:
        assert page[:, page.shape[1] - margin :].min() >= CLEAR_LEVEL
        assert page[:, :margin].min() >= CLEAR_LEVEL


def body_of(response) -> bytes:
    return b"".join(response.streaming_content) if response.streaming else response.content


def longest(model, field: str) -> int:
    return model._meta.get_field(field).max_length


@pytest.fixture
def longest_job(closed_test, staff):
    """The closed test's job with its customer, unit, complaint and steps at their limits."""
    job = closed_test.job
    unit = job.unit
    customer = unit.owner
    Customer.objects.filter(pk=customer.pk).update(name=filler("n", longest(Customer, "name")))
    Unit.objects.filter(pk=unit.pk).update(
        maker=unbroken("M", longest(Unit, "maker")),
        model_name=filler("m", longest(Unit, "model_name")),
        serial=unbroken("S", longest(Unit, "serial")),
    )
    Job.objects.filter(pk=job.pk).update(
        complaint=unbroken("K", 300) + " " + filler("k", longest(Job, "complaint") - 301),
        condition_at_intake=filler("c", longest(Job, "condition_at_intake")),
    )
    return job


def add_longest_steps(client, job) -> list[dict]:
    steps = []
    for step in range(STEPS):
        body = {
            "job": job.pk,
            "action": filler(f"a{step}x", longest(RepairStep, "action")),
            "minutes": 24 * 60,
            "parts": [
                {
                    "part": filler(f"p{step}x{index:03d}y", PART_LENGTH),
                    "quantity": "99999.999",
                    "note": filler(f"q{step}x{index:03d}y", PART_NOTE_LENGTH),
                    "note_for_customer": True,
                }
                for index in range(MAX_PARTS_PER_STEP)
            ],
        }
        response = client.post("/api/steps/", body, format="json")
        assert response.status_code == 201, response.content[:500]
        steps.append(body)
    return steps


def document_text(response, program: str, tmp_path) -> str:
    """The PDF answer's text, squashed, once its pages are checked to keep inside the margins."""
    assert response.status_code == 200
    assert_inside_the_margins(body_of(response), program, tmp_path)
    return squashed(body_of(response))


def job_fields(job: Job) -> tuple[str, ...]:
    job.refresh_from_db()
    unit = job.unit
    return (unit.owner.name, unit.maker, unit.model_name, unit.serial, job.complaint)


def test_a_certificate_with_every_field_at_its_longest_is_issued_and_says_it_all(
    longest_job, client_for, pdftoppm, tmp_path
):
    steps = add_longest_steps(client_for("technician"), longest_job)
    response = client_for("lead").post("/api/certificates/", {"job": longest_job.pk}, format="json")
    assert response.status_code == 201, response.content[:500]
    pdf = client_for("lead").get(f"/api/certificates/{response.json()['id']}/pdf/")
    text = document_text(pdf, pdftoppm, tmp_path)
    for words in job_fields(longest_job):
        assert_in_order(words, text)
    for step in steps:
        assert_in_order(step["action"], text)
        for part in step["parts"]:
            # A part row longer than the rest of a page is split across the page break with
            # its cells side by side, so the text runs part, note, part, note: each cell's
            # words are checked in order on their own.
            assert_in_order(part["part"], text)
            assert_in_order(part["note"], text)


def test_a_receipt_with_every_field_at_its_longest_says_it_all(
    longest_job, client_for, pdftoppm, tmp_path
):
    receipt = client_for("front_desk").get(f"/api/jobs/{longest_job.pk}/receipt.pdf")
    text = document_text(receipt, pdftoppm, tmp_path)
    for words in (*job_fields(longest_job), longest_job.condition_at_intake):
        assert_in_order(words, text)
