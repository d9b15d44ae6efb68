"""The audit trail: one append-only event for every write, in the write's own transaction."""

from __future__ import annotations

from django.conf import settings
from django.db import models
from django.utils import timezone

from .immutability import AppendOnly


class AuditEvent(AppendOnly):
    """Who did what to which record, when, with a digest of the change."""

    actor = models.ForeignKey(
        settings.AUTH_USER_MODEL,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="+",
    )
    at = models.DateTimeField(default=timezone.now, db_index=True)
    action = models.CharField(max_length=60, db_index=True)
    object_type = models.CharField(max_length=60)
    object_id = models.CharField(max_length=40)
    object_repr = models.CharField(max_length=200)
    changes = models.JSONField()
    digest = models.CharField(max_length=64, help_text="SHA-256 of the canonical change.")

    class Meta:
        ordering = ["-at", "-id"]
        indexes = [models.Index(fields=["object_type", "object_id"])]

    def __str__(self) -> str:
        return f"{self.at:%Y-%m-%d %H:%M} {self.action} {self.object_type}:{self.object_id}"
