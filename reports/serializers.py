"""JSON shapes of certificates and the requests that issue, supersede and revoke them."""

from __future__ import annotations

from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from shop.bench.models import PowerUpTest
from shop.intake.models import Job

from .models import Certificate, CertificateEvent, certificate_status
from .selectors import certificate_intact, snapshot_of


class CertificateEventSerializer(serializers.ModelSerializer):
    """A supersede or revoke: who, when, why."""

    by = serializers.CharField(source="by.username", read_only=True)
    replacement = serializers.CharField(
        source="replacement.number", default=None, read_only=True, allow_null=True
    )

    class Meta:
        model = CertificateEvent
        fields = ["kind", "by", "at", "reason", "replacement"]
        read_only_fields = fields


class CertificateSerializer(serializers.ModelSerializer):
    """An issued certificate; `snapshot` is exactly what it states (and what its PDF shows)."""

    job_number = serializers.CharField(source="job.number", read_only=True)
    issued_by = serializers.CharField(source="issued_by.username", read_only=True)
    supersedes = serializers.CharField(
        source="supersedes.number", default=None, read_only=True, allow_null=True
    )
    superseded_by = serializers.CharField(
        source="superseded_by.number", default=None, read_only=True, allow_null=True
    )
    status = serializers.SerializerMethodField()
    intact = serializers.SerializerMethodField()
    snapshot = serializers.SerializerMethodField()
    events = CertificateEventSerializer(many=True, read_only=True)
    tests = serializers.PrimaryKeyRelatedField(many=True, read_only=True)

    class Meta:
        model = Certificate
        fields = [
            "id",
            "number",
            "job",
            "job_number",
            "tests",
            "issued_by",
            "issued_at",
            "status",
            "intact",
            "sha256",
            "verification_code",
            "supersedes",
            "superseded_by",
            "events",
            "snapshot",
        ]
        read_only_fields = fields

    @extend_schema_field(serializers.ChoiceField(["valid", "superseded", "revoked"]))
    def get_status(self, certificate: Certificate) -> str:
        return certificate_status(certificate)

    def get_intact(self, certificate: Certificate) -> bool:
        return certificate_intact(certificate)

    @extend_schema_field(serializers.DictField())
    def get_snapshot(self, certificate: Certificate) -> dict:
        return snapshot_of(certificate)


def optional_reason(help_text: str) -> serializers.CharField:
    """A stated reason a request may carry (blank when none is needed)."""
    return serializers.CharField(
        required=False, allow_blank=True, default="", max_length=2000, help_text=help_text
    )


class IssueSerializer(serializers.Serializer):
    """Issue a certificate for a job: its closed tests (all unless named). A job's valid
    certificate is superseded by the new one."""

    job = serializers.PrimaryKeyRelatedField(queryset=Job.objects.all())
    tests = serializers.PrimaryKeyRelatedField(
        queryset=PowerUpTest.objects.all(), many=True, required=False
    )
    calibration_override = optional_reason(
        "Why an out-of-calibration meter is acceptable here (printed)."
    )
    left_out_reason = optional_reason(
        "Why closed tests not named in `tests` are left out (printed beside them)."
    )


class SupersedeSerializer(serializers.Serializer):
    """Replace a certificate with a corrected one for the same job."""

    reason = serializers.CharField(max_length=2000)
    tests = serializers.PrimaryKeyRelatedField(
        queryset=PowerUpTest.objects.all(), many=True, required=False
    )
    calibration_override = optional_reason(
        "Why an out-of-calibration meter is acceptable here (printed)."
    )
    left_out_reason = optional_reason(
        "Why closed tests not named in `tests` are left out (printed beside them)."
    )


class RevokeSerializer(serializers.Serializer):
    """Withdraw a certificate."""

    reason = serializers.CharField(max_length=2000)


class VerificationSerializer(serializers.Serializer):
    """What anyone holding the number and code may learn."""

    number = serializers.CharField()
    status = serializers.ChoiceField(["valid", "superseded", "revoked", "tampered"])
    intact = serializers.BooleanField()
    issued_at = serializers.DateTimeField()
    unit = serializers.CharField(required=False)
    outcomes = serializers.ListField(child=serializers.CharField(), required=False)
    statement = serializers.CharField(required=False)
    superseded_by = serializers.CharField(required=False, allow_null=True)
    supersedes = serializers.CharField(required=False, allow_null=True)
    message = serializers.CharField(required=False)
