"""Optimistic concurrency: integer versions, ETag on reads, If-Match honoured on writes."""

from __future__ import annotations

import re

from django.db import models

from .errors import ApplicationError, PreconditionFailed

IF_MATCH_PATTERN = re.compile(r'^\s*(?:W/)?"v(\d+)"\s*$')


class Versioned(models.Model):
    """Abstract base: a version bumped by every update, in the same UPDATE statement."""

    version = models.PositiveIntegerField(default=1, editable=False)

    class Meta:
        abstract = True


def etag_for(version: int) -> str:
    """The ETag header value for a record at `version`."""
    return f'"v{version}"'


def expected_version(request) -> int | None:
    """The version a client's If-Match header names, or None when it sent none (or `*`)."""
    header = request.headers.get("If-Match")
    if header is None or header.strip() in {"", "*"}:
        return None
    match = IF_MATCH_PATTERN.match(header)
    if not match:
        raise ApplicationError(
            'If-Match must be the ETag you read from this record, for example "v3".',
            field="If-Match",
            code="invalid_if_match",
        )
    return int(match.group(1))


def check_version(instance, expected: int | None) -> None:
    """Refuse with 412 when the client's version is stale; call with the row locked."""
    if expected is not None and instance.version != expected:
        raise PreconditionFailed(
            f"This record changed since you read it (you sent v{expected}, it is now "
            f"v{instance.version}). Read it again and repeat your change.",
            field="If-Match",
            extra={"current_version": instance.version},
        )


def versioned_update(instance, *, expected: int | None, changes: dict, extra_fields=()):
    """Apply `changes` to a locked copy of `instance`, validate, and bump its version.

    Must run inside `transaction.atomic()`. Returns the fresh row.
    """
    model = type(instance)
    locked = model.objects.select_for_update().get(pk=instance.pk)
    check_version(locked, expected)
    for name, value in changes.items():
        setattr(locked, name, value)
    locked.full_clean()
    locked.version = models.F("version") + 1
    update_fields = [*changes, *extra_fields, "version"]
    if any(f.name == "updated_at" for f in model._meta.fields):
        update_fields.append("updated_at")
    locked.save(update_fields=update_fields)
    locked.refresh_from_db()
    return locked
