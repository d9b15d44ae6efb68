"""PDF rendering of certificates and receipts: pure functions from a snapshot dict to bytes."""

from .certificate import render_certificate
from .receipt import render_receipt

__all__ = ["render_certificate", "render_receipt"]
