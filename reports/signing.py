"""A certificate's signature: the keyed hash of its number, snapshot and stored PDF."""

from __future__ import annotations

from shop.core.signing import record_sign, record_signature_problem

from .canonical import sha256_hex

PURPOSE = "certificate"


def _message(*, number: str, snapshot: str, pdf_sha256: str) -> bytes:
    # The snapshot is hashed here, not read from the row's own sha256 column, which anyone
    # who can edit the row can recompute.
    return f"{number}\n{sha256_hex(snapshot)}\n{pdf_sha256}".encode()


def certificate_sign(*, number: str, snapshot: str, pdf_sha256: str) -> str:
    """The signature of a certificate about to be issued."""
    return record_sign(
        purpose=PURPOSE,
        message=_message(number=number, snapshot=snapshot, pdf_sha256=pdf_sha256),
    )


def certificate_signature_problem(certificate) -> str | None:
    """Why the certificate's signature does not vouch for its row, or None when it does."""
    return record_signature_problem(
        purpose=PURPOSE,
        message=_message(
            number=certificate.number,
            snapshot=certificate.snapshot,
            pdf_sha256=certificate.pdf_sha256,
        ),
        signature=certificate.signature,
    )
