"""Helpers shared by every app's services: recorded creation and updates, field allow-lists."""

from __future__ import annotations

from .audit import audit_record
from .errors import ApplicationError
from .versioning import versioned_update


def create_validated(model, fields: dict, *, actor, action: str):
    """Build, `full_clean` and save a row, and record it in the audit trail.

    Call inside the caller's transaction, so a rolled-back write leaves no audit event.
    """
    instance = model(**fields)
    instance.full_clean()
    instance.save()
    audit_record(actor=actor, action=action, instance=instance, changes=fields)
    return instance


def update_versioned(instance, *, expected: int | None, changes: dict, actor, action: str):
    """`versioned_update` plus its audit event; inside the caller's transaction."""
    updated = versioned_update(instance, expected=expected, changes=changes)
    audit_record(actor=actor, action=action, instance=updated, changes=changes)
    return updated


def only_fields(fields: dict, allowed: tuple[str, ...]) -> dict:
    """Refuse fields a service does not take (state, version, ...), naming the first."""
    unknown = sorted(set(fields) - set(allowed))
    if unknown:
        raise ApplicationError(f"Unknown field(s): {', '.join(unknown)}.", field=unknown[0])
    return fields
