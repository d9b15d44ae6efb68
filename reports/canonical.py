"""Canonical JSON: sorted keys, no spaces, floats to a fixed number of significant digits."""

from __future__ import annotations

import hashlib
import json
import math

SIGNIFICANT_DIGITS = 6


def _fixed(value):
    if isinstance(value, bool) or value is None:
        return value
    if isinstance(value, float):
        if not math.isfinite(value):
            raise ValueError("a snapshot cannot hold NaN or infinity")
        return float(f"{value:.{SIGNIFICANT_DIGITS}g}")
    if isinstance(value, dict):
        return {str(key): _fixed(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [_fixed(item) for item in value]
    return value


def canonical_json(document: dict) -> str:
    """The one text form of `document`: equal documents give equal text, hence equal hashes."""
    return json.dumps(_fixed(document), sort_keys=True, separators=(",", ":"), ensure_ascii=False)


def sha256_hex(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()
