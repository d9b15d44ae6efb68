"""Issued documents: certificates as immutable snapshots, and their append-only status events."""

from __future__ import annotations

import uuid

from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import models
from django.utils import timezone

from shop.bench.models import PowerUpTest
from shop.core.immutability import AppendOnly
from shop.core.numbering import YearCounter
from shop.intake.models import Job


def certificate_pdf_path(instance: Certificate, filename: str) -> str:
    """A generated key; storage never overwrites, so an issued PDF cannot be replaced."""
    return f"certificates/{instance.number}-{uuid.uuid4().hex}.pdf"


class CertificateNumberCounter(YearCounter):
    """The last certificate number handed out in a year."""


class CertificateStatus(models.TextChoices):
    VALID = "valid", "Valid"
    SUPERSEDED = "superseded", "Superseded by a later certificate"
    REVOKED = "revoked", "Revoked"


class Certificate(AppendOnly):
    """A power-up test certificate: the canonical JSON of everything it states, and its hash.

    The row never changes once written; its status lives in CertificateEvent rows.
    """

    number = models.CharField(max_length=20, unique=True)
    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="certificates")
    tests = models.ManyToManyField(PowerUpTest, related_name="certificates")
    issued_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    issued_at = models.DateTimeField(default=timezone.now)
    snapshot = models.TextField(help_text="Canonical JSON of everything the certificate states.")
    sha256 = models.CharField(max_length=64)
    verification_code = models.CharField(max_length=40, unique=True)
    pdf = models.FileField(upload_to=certificate_pdf_path, max_length=255, editable=False)
    pdf_sha256 = models.CharField(max_length=64, editable=False)
    signature = models.CharField(
        max_length=100,
        editable=False,
        help_text=(
            "HMAC-SHA256 of number, snapshot and PDF under RECORD_SIGNING_KEY (reports.signing)."
        ),
    )
    supersedes = models.OneToOneField(
        "self", on_delete=models.PROTECT, null=True, blank=True, related_name="superseded_by"
    )

    class Meta:
        ordering = ["-issued_at", "-id"]

    def __str__(self) -> str:
        return self.number


class CertificateEventKind(models.TextChoices):
    SUPERSEDED = "superseded", "Superseded"
    REVOKED = "revoked", "Revoked"


class CertificateEvent(AppendOnly):
    """A change of a certificate's status: who, when, why (and its replacement, if any)."""

    certificate = models.ForeignKey(Certificate, on_delete=models.PROTECT, related_name="events")
    kind = models.CharField(max_length=12, choices=CertificateEventKind.choices)
    by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    at = models.DateTimeField(default=timezone.now)
    reason = models.TextField(max_length=2000)
    replacement = models.ForeignKey(
        Certificate, on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )

    class Meta:
        ordering = ["at", "id"]
        constraints = [
            models.UniqueConstraint(fields=["certificate", "kind"], name="one_event_of_a_kind")
        ]

    def __str__(self) -> str:
        return f"{self.certificate}: {self.kind}"

    def clean(self) -> None:
        if self.kind == CertificateEventKind.SUPERSEDED and self.replacement is None:
            raise ValidationError({"replacement": "A superseded certificate names its successor."})


def certificate_status(certificate: Certificate) -> str:
    """valid, superseded or revoked, from the certificate's events (prefetch `events`)."""
    kinds = {event.kind for event in certificate.events.all()}
    if CertificateEventKind.REVOKED in kinds:
        return CertificateStatus.REVOKED
    if CertificateEventKind.SUPERSEDED in kinds:
        return CertificateStatus.SUPERSEDED
    return CertificateStatus.VALID
