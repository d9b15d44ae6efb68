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


class ApiToken(models.Model):
    """An API token, kept only as the SHA-256 of its key: the key itself is shown once.

    `password_stamp` is the owner's session hash when the token was issued (Django's
    `get_session_auth_hash`, keyed by SECRET_KEY): a password change alters it, which ends the
    token as it ends the owner's browser sessions.
    """

    key_sha256 = models.CharField(max_length=64, unique=True)
    user = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="api_tokens"
    )
    created = models.DateTimeField(default=timezone.now)
    password_stamp = models.CharField(max_length=128)

    class Meta:
        ordering = ["-created", "-id"]

    def __str__(self) -> str:
        return f"token of {self.user_id} issued {self.created:%Y-%m-%d %H:%M}"
