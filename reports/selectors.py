"""Reads for certificates and receipts; verification never reveals more than it must."""

from __future__ import annotations

import hashlib
import hmac
import json

from django.conf import settings
from django.db.models import QuerySet

from shop.core.errors import Conflict, Gone
from shop.core.stored_files import orphan_files
from shop.intake.models import Evidence, Job

from .canonical import sha256_hex
from .models import Certificate, CertificateStatus, certificate_status
from .signing import certificate_signature_problem

# Compared against when no certificate has the number: as long as a real code (24 letters in
# groups of 5), and made of a character no verifier can type.
UNKNOWN_NUMBER_CODE = "\x00" * 24
NEXT_STEPS = (
    "A technician inspects the unit and tells you what is wrong and what the repair will cost.",
    "Nothing is repaired without your approval.",
    "We tell you when the unit is ready to collect.",
)
POWER_UP_CAUTION = (
    "Before it meets full mains, the unit will be powered up under controlled conditions: "
    "through a current-limiting series lamp, on an isolated bench, by trained staff."
)


def certificate_list() -> QuerySet[Certificate]:
    return Certificate.objects.select_related(
        "job", "issued_by", "supersedes", "superseded_by"
    ).prefetch_related("events", "tests")


def snapshot_of(certificate: Certificate) -> dict:
    return json.loads(certificate.snapshot)


def snapshot_intact(certificate: Certificate) -> bool:
    """Whether the stored snapshot still hashes to the SHA-256 recorded at issue."""
    return hmac.compare_digest(sha256_hex(certificate.snapshot), certificate.sha256)


def _pdf_bytes(certificate: Certificate) -> bytes | None:
    try:
        with certificate.pdf.open("rb") as stored:
            return stored.read()
    except (FileNotFoundError, ValueError):
        return None


def pdf_intact(certificate: Certificate) -> bool:
    """Whether the PDF stored at issue is still there, byte for byte."""
    content = _pdf_bytes(certificate)
    return content is not None and hmac.compare_digest(
        hashlib.sha256(content).hexdigest(), certificate.pdf_sha256
    )


def certificate_problem(certificate: Certificate) -> str | None:
    """What no longer matches what was issued (snapshot, signature, stored PDF), or None."""
    if not snapshot_intact(certificate):
        return "its snapshot no longer hashes to the SHA-256 recorded at issue"
    signature = certificate_signature_problem(certificate)
    if signature:
        return f"{signature} (RECORD_SIGNING_KEY)"
    if not pdf_intact(certificate):
        return "its stored PDF is missing or changed"
    return None


def certificate_intact(certificate: Certificate) -> bool:
    """Snapshot, signature and stored PDF all as issued."""
    return certificate_problem(certificate) is None


def orphan_stored_files() -> list[str]:
    """Stored certificate PDFs and evidence files that no record points at (left by a write
    that died before its record was committed)."""
    found = []
    for model, field, folder in (
        (Certificate, "pdf", "certificates"),
        (Evidence, "file", "evidence"),
    ):
        storage = model._meta.get_field(field).storage
        names = model.objects.values_list(field, flat=True).iterator(chunk_size=2000)
        found += orphan_files(storage, folder, names)
    return found


def stored_pdf(certificate: Certificate) -> bytes:
    """The PDF as issued; refused if the stored file is missing or was changed."""
    content = _pdf_bytes(certificate)
    if content is None or not hmac.compare_digest(
        hashlib.sha256(content).hexdigest(), certificate.pdf_sha256
    ):
        raise Conflict(
            f"The stored PDF of certificate {certificate.number} is missing or no longer "
            "matches what was issued. Do not rely on it; a lead should supersede it.",
            code="pdf_altered",
        )
    return content


NAMEPLATE_NOT_LEGIBLE = "unknown (nameplate not legible)"
# Codes are base32 (A-Z, 2-7): a typed 0, 1 or 8 can only mean O, I or B.
CODE_LOOKALIKES = str.maketrans({"0": "O", "1": "I", "8": "B"})


def normalise_code(code: str) -> str:
    """A verification code as typed -> its plain letters: no dashes or spaces, upper case."""
    kept = "".join(ch for ch in (code or "") if ch not in "- \t")
    return kept.upper().translate(CODE_LOOKALIKES)


def certificate_pdf(certificate: Certificate) -> bytes:
    """The PDF to hand out; a revoked certificate's is refused, so nobody passes it on."""
    if certificate_status(certificate) == CertificateStatus.REVOKED:
        raise Gone(
            f"Certificate {certificate.number} was revoked; its PDF is no longer handed out. "
            "Its record and reason stay readable at the certificate's address.",
            field="certificate",
            code="certificate_revoked",
        )
    return stored_pdf(certificate)


def certificate_for_verification(number: str, code: str) -> Certificate | None:
    """The certificate only when both number and code match; None for any mismatch alike.

    The code may be typed without its dashes, with spaces or in lower case.
    """
    # A wrong code costs what an unknown number costs: one query for the code alone and one
    # comparison; the certificate itself (three more queries) is read only after a match.
    supplied = normalise_code(code).encode()
    found = Certificate.objects.filter(number=number.strip().upper()).values_list(
        "pk", "verification_code"
    )
    pk, stored = found.first() or (None, UNKNOWN_NUMBER_CODE)
    if not hmac.compare_digest(normalise_code(stored).encode(), supplied) or pk is None:
        return None
    return certificate_list().get(pk=pk)


def verification_answer(certificate: Certificate) -> dict:
    """What a verifier may learn: status, date, unit, outcome; never the customer's contact."""
    intact = certificate_intact(certificate)
    answer = {
        "number": certificate.number,
        "intact": intact,
        "issued_at": certificate.issued_at.isoformat(),
    }
    if not intact:
        answer["status"] = "tampered"
        answer["message"] = (
            "The stored record no longer matches what was issued. Do not rely "
            "on this certificate; contact the shop."
        )
        return answer
    snapshot = snapshot_of(certificate)
    unit = snapshot["unit"]
    status = certificate_status(certificate)
    answer.update(
        status=status,
        unit=" ".join(
            part
            for part in (
                unit["maker"],
                unit["model_name"],
                f"serial {unit['serial']}" if unit["serial"] else "",
            )
            if part
        ),
        outcomes=[test["outcome"] for test in snapshot["tests"]],
        statement=snapshot["statement"],
        superseded_by=getattr(getattr(certificate, "superseded_by", None), "number", None),
        supersedes=snapshot["certificate"]["supersedes"],
    )
    return answer


def receipt_data(job: Job, *, with_contact: bool) -> dict:
    """The intake receipt's content, read live from the job (receipts are not certificates).

    `with_contact`: print the customer's phone (for the front desk and leads, who may read it;
    a technician's copy leaves it out).
    """
    unit = job.unit
    customer = {"name": unit.owner.name}
    if with_contact:
        customer["phone"] = unit.owner.phone
    return {
        "schema": "receipt/1",
        "paper_size": settings.CERTIFICATE_PAPER_SIZE,
        "shop": {
            "name": settings.SHOP_NAME,
            "address": settings.SHOP_ADDRESS,
            "phone": settings.SHOP_PHONE,
        },
        "terms": settings.SHOP_TERMS,
        "job": {
            "number": job.number,
            "received_on": job.received_on.isoformat(),
            "promised_on": job.promised_on.isoformat() if job.promised_on else None,
            "complaint": job.complaint,
            "estimate": f"{job.estimate:.2f}" if job.estimate is not None else None,
        },
        "customer": customer,
        "unit": {
            "category": unit.get_category_display(),
            "maker": unit.maker,
            "model_name": unit.model_name,
            "serial": unit.serial,
            "year": unit.year,
            "rated_voltage": (
                f"{unit.rated_voltage.normalize():f} V"
                if unit.rated_voltage is not None
                else NAMEPLATE_NOT_LEGIBLE
            ),
            "rated_power": (
                f"{unit.rated_power.normalize():f} {unit.rated_power_unit}"
                if unit.rated_power is not None
                else NAMEPLATE_NOT_LEGIBLE
            ),
            "construction": unit.get_construction_display(),
            "chassis_may_be_live": unit.chassis_may_be_live,
        },
        "condition": job.condition_at_intake,
        "next_steps": list(NEXT_STEPS),
        "caution": POWER_UP_CAUTION,
    }
