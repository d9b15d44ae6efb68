"""Contact details (email, phone) reach only the roles that may read them: not through
customer search, not on the intake receipt."""

from __future__ import annotations

import io
import string

import pypdf
import pytest

# The customer fixture: Orla Quennell, 555-0142, orla@example.org.
EMAIL = "orla@example.org"
PHONE = "555-0142"


def matches(client, query: str) -> int:
    response = client.get("/api/customers/", {"search": query})
    assert response.status_code == 200
    return response.json()["count"]


@pytest.mark.parametrize("role", ["front_desk", "lead"])
def test_the_desk_and_leads_find_a_customer_by_email_and_phone(customer, client_for, role):
    client = client_for(role)
    assert matches(client, EMAIL) == 1
    assert matches(client, PHONE) == 1


def test_a_technician_finds_a_customer_by_name_only(customer, client_for):
    client = client_for("technician")
    assert matches(client, "Quennell") == 1
    assert matches(client, EMAIL) == 0
    assert matches(client, PHONE) == 0
    assert matches(client, "example.org") == 0


def recovered_by_search(client, alphabet: str, known: str = "") -> str:
    """Grow a secret one character at a time from whether a search still matches: the way
    searching a hidden field leaks it."""
    while True:
        for character in alphabet:
            if matches(client, known + character):
                known += character
                break
        else:
            return known


def test_a_technician_cannot_recover_an_email_address_by_searching(customer, client_for):
    alphabet = string.ascii_lowercase + "@."
    desk = recovered_by_search(client_for("front_desk"), alphabet, known="orla@exa")
    assert desk == EMAIL  # the probe works where the field may be read
    # A technician's searches match the name alone: the address stays unknown.
    assert recovered_by_search(client_for("technician"), alphabet, known="orla@exa") == "orla@exa"
    assert matches(client_for("technician"), "orla@exa") == 0


def receipt_text(client, job) -> str:
    response = client.get(f"/api/jobs/{job.pk}/receipt.pdf")
    assert response.status_code == 200
    pages = pypdf.PdfReader(io.BytesIO(response.content)).pages
    return " ".join(" ".join(page.extract_text().split()) for page in pages)


@pytest.mark.parametrize("role", ["front_desk", "lead"])
def test_the_desk_and_leads_receipt_carries_the_phone(job, client_for, role):
    assert PHONE in receipt_text(client_for(role), job)


def test_a_technicians_receipt_has_no_contact_details(job, client_for):
    text = receipt_text(client_for("technician"), job)
    assert "Orla Quennell" in text
    assert PHONE not in text
    assert EMAIL not in text
    assert "Phone" not in text
