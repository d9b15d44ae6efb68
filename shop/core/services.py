"""Helpers shared by every app's services: validated creation and field allow-lists."""

from __future__ import annotations

from .errors import ApplicationError


def create_validated(model, fields: dict):
    """Build, `full_clean` and save a row; call inside the caller's transaction."""
    instance = model(**fields)
    instance.full_clean()
    instance.save()
    return instance


def only_fields(fields: dict, allowed: tuple[str, ...]) -> dict:
    """Refuse fields a service does not take (state, version, ...), naming the first."""
    unknown = sorted(set(fields) - set(allowed))
    if unknown:
        raise ApplicationError(f"Unknown field(s): {', '.join(unknown)}.", field=unknown[0])
    return fields
