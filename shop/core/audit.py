"""Write audit events; every service calls `audit_record` inside its own transaction."""

from __future__ import annotations

import hashlib
import json
from datetime import date, datetime
from decimal import Decimal

from django.db import models

from .models import AuditEvent

REPR_LENGTH = 200


def _plain(value):
    if isinstance(value, models.Model):
        return {"type": value._meta.label_lower, "id": value.pk}
    if isinstance(value, (Decimal, datetime, date)):
        return str(value)
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, set, frozenset)):
        return [_plain(v) for v in value]
    if isinstance(value, float) and value != value:
        return "NaN"
    if hasattr(value, "name") and hasattr(value, "size"):  # an uploaded file
        return {"file": str(value.name), "size": value.size}
    return value


def audit_record(*, actor, action: str, instance: models.Model, changes: dict) -> AuditEvent:
    """Record that `actor` did `action` to `instance`; `changes` is what the write set."""
    plain = _plain(changes)
    canonical = json.dumps(plain, sort_keys=True, separators=(",", ":"), default=str)
    return AuditEvent.objects.create(
        actor=actor if getattr(actor, "pk", None) else None,
        action=action,
        object_type=instance._meta.label_lower,
        object_id=str(instance.pk),
        object_repr=str(instance)[:REPR_LENGTH],
        changes=json.loads(canonical),
        digest=hashlib.sha256(canonical.encode()).hexdigest(),
    )
