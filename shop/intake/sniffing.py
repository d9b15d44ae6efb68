"""What an uploaded file really is, judged from its bytes, never its name or the client header."""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from pathlib import PurePath

import puremagic

# Binary kinds accepted as evidence: MIME type -> stored extension.
BINARY_TYPES = {
    "image/jpeg": ".jpg",
    "image/png": ".png",
    "image/gif": ".gif",
    "image/webp": ".webp",
    "application/pdf": ".pdf",
}
TEXT_TYPES = {"text/csv": ".csv", "text/plain": ".txt"}
ALLOWED_TYPES = {**BINARY_TYPES, **TEXT_TYPES}

# What a client's file-name extension claims, to catch a file dressed up as something else.
CLAIMED_BY_EXTENSION = {
    ".jpg": "image/jpeg",
    ".jpeg": "image/jpeg",
    ".png": "image/png",
    ".gif": "image/gif",
    ".webp": "image/webp",
    ".pdf": "application/pdf",
    ".csv": "text/csv",
    ".txt": "text/plain",
    ".log": "text/plain",
}
# Markup and scripts are refused even though they are text: a browser may run them.
MARKUP_PREFIXES = (b"<!doctype", b"<html", b"<svg", b"<?xml", b"<script", b"<body", b"<head")
SNIFF_BYTES = 8192


class UnacceptableFile(ValueError):
    """The upload is not a kind of file the shop keeps as evidence; the message says why."""


@dataclass(frozen=True)
class Sniffed:
    content_type: str
    extension: str


def _looks_like_text(head: bytes) -> bool:
    if b"\x00" in head:
        return False
    try:
        head.decode("utf-8")
    except UnicodeDecodeError as exc:
        # A multi-byte character cut at the sniffing boundary is still text.
        return exc.start >= len(head) - 3
    return True


def _is_csv(head: bytes) -> bool:
    text = head.decode("utf-8", errors="ignore")
    lines = [line for line in text.splitlines() if line.strip()][:20]
    if len(lines) < 2:
        return False
    try:
        dialect = csv.Sniffer().sniff("\n".join(lines), delimiters=",;\t")
    except csv.Error:
        return False
    widths = {len(row) for row in csv.reader(io.StringIO("\n".join(lines[:-1])), dialect)}
    return len(widths) == 1 and widths.pop() >= 2


def sniff(head: bytes, label: str = "") -> Sniffed:
    """Classify an upload from its first bytes; raise UnacceptableFile when it is not allowed.

    `label` is the client's file name, used only to notice a mismatch between what the name
    claims and what the content is.
    """
    if not head:
        raise UnacceptableFile("The file is empty.")
    try:
        detected = puremagic.from_string(head, mime=True) or None
    except puremagic.PureError:
        detected = None
    if detected in BINARY_TYPES:
        content_type = detected
    elif detected is None and _looks_like_text(head):
        if head.lstrip().lower().startswith(MARKUP_PREFIXES):
            raise UnacceptableFile("Web pages, SVG and other markup are not accepted as evidence.")
        content_type = "text/csv" if _is_csv(head) else "text/plain"
    else:
        kind = detected or "an unrecognised binary format"
        raise UnacceptableFile(
            f"The content is {kind}; accepted kinds are photos (JPEG, PNG, GIF, WebP), PDF, "
            "CSV and plain text."
        )
    claimed = CLAIMED_BY_EXTENSION.get(PurePath(label).suffix.lower())
    text_pair = {claimed, content_type} <= set(TEXT_TYPES)
    if claimed and claimed != content_type and not text_pair:
        raise UnacceptableFile(
            f"The name says {claimed} but the content is {content_type}. Upload the real file "
            "or give it its proper name."
        )
    return Sniffed(content_type, ALLOWED_TYPES[content_type])
