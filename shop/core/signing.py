"""Keyed signatures (HMAC-SHA256) of records, from a key kept outside the database and backups.

A signature reads `hmac-sha256:<key id>:<hex digest>`. The key id names the key that signed
(the first hex digits of a hash of the key, never the key), so that after a key rotation the
records signed with an earlier key still verify while its value stays in
RECORD_SIGNING_OLD_KEYS.
"""

from __future__ import annotations

import hashlib
import hmac

from django.conf import settings

SCHEME = "hmac-sha256"
KEY_ID_HEX = 12


def key_id(key: str) -> str:
    """The public name of a signing key: it identifies the key without revealing it."""
    return hashlib.sha256(b"bench-record-signing-key-id\0" + key.encode()).hexdigest()[:KEY_ID_HEX]


def _digest(key: str, purpose: str, message: bytes) -> str:
    # The purpose is part of the message, so one kind of record's signature never fits another.
    return hmac.new(key.encode(), purpose.encode() + b"\0" + message, hashlib.sha256).hexdigest()


def _keys() -> dict[str, str]:
    keys = [settings.RECORD_SIGNING_KEY, *settings.RECORD_SIGNING_OLD_KEYS]
    return {key_id(key): key for key in keys if key}


def record_sign(*, purpose: str, message: bytes) -> str:
    """Sign `message` for `purpose` with the current RECORD_SIGNING_KEY."""
    key = settings.RECORD_SIGNING_KEY
    return f"{SCHEME}:{key_id(key)}:{_digest(key, purpose, message)}"


def record_signature_problem(*, purpose: str, message: bytes, signature: str) -> str | None:
    """Why `signature` does not vouch for `message`, or None when it does."""
    scheme, _, rest = (signature or "").partition(":")
    signer, _, digest = rest.partition(":")
    if scheme != SCHEME or not signer or not digest:
        return "it carries no signature"
    key = _keys().get(signer)
    if key is None:
        return (
            f"it was signed with key {signer}, which this server does not hold (set "
            "RECORD_SIGNING_KEY, or list a former key in RECORD_SIGNING_OLD_KEYS)"
        )
    if not hmac.compare_digest(_digest(key, purpose, message), digest):
        return "its signature does not match its content"
    return None
