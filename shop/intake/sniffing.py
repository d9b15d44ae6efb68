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
    "image/heic": ".heic",
    "image/heif": ".heif",
    "video/mp4": ".mp4",
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
    ".heic": "image/heic",
    ".heif": "image/heif",
    ".mp4": "video/mp4",
    ".m4v": "video/mp4",
    ".csv": "text/csv",
    ".txt": "text/plain",
    ".log": "text/plain",
}
# ISO base media files (phone photos and videos) name their kind by "brands" in their first
# box, `ftyp` (ISO/IEC 14496-12): HEIF stills (ISO/IEC 23008-12) and MP4 video (ISO/IEC
# 14496-14). Brand lists from memory of those standards; QuickTime (.mov, brand "qt  ") and
# AVIF are not among them.
ISO_BRANDS = {
    b"heic": "image/heic",
    b"heix": "image/heic",
    b"heim": "image/heic",
    b"heis": "image/heic",
    b"mif1": "image/heif",
    b"msf1": "image/heif",
    b"isom": "video/mp4",
    b"iso2": "video/mp4",
    b"iso4": "video/mp4",
    b"iso5": "video/mp4",
    b"iso6": "video/mp4",
    b"mp41": "video/mp4",
    b"mp42": "video/mp4",
    b"avc1": "video/mp4",
    b"M4V ": "video/mp4",
}
# Names that may stand for one another: a phone's .heic file is often branded plain HEIF.
INTERCHANGEABLE = ({"text/csv", "text/plain"}, {"image/heic", "image/heif"})
# Kinds by the size limit they fall under (settings.EVIDENCE_MAX_BYTES_BY_KIND).
SIZE_KIND = {
    "image/jpeg": "image",
    "image/png": "image",
    "image/gif": "image",
    "image/webp": "image",
    "image/heic": "image",
    "image/heif": "image",
    "video/mp4": "video",
    "application/pdf": "document",
    "text/csv": "text",
    "text/plain": "text",
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


def _iso_media_type(head: bytes) -> str | None:
    """The evidence kind an ISO base media file's `ftyp` box names, major brand first."""
    if len(head) < 16 or head[4:8] != b"ftyp":
        return None
    box_size = int.from_bytes(head[:4], "big")
    if box_size < 16 or box_size % 4:
        return None
    end = min(box_size, len(head))
    brands = [head[8:12]] + [head[i : i + 4] for i in range(16, end - 3, 4)]
    for brand in brands:
        if brand in ISO_BRANDS:
            return ISO_BRANDS[brand]
    return None


def sniff(head: bytes, label: str = "") -> Sniffed:
    """Classify an upload from its first bytes; raise UnacceptableFile when it is not allowed.

    `label` is the client's file name, used only to notice a mismatch between what the name
    claims and what the content is.
    """
    if not head:
        raise UnacceptableFile("The file is empty.")
    detected = _iso_media_type(head)
    if detected is None:
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
            f"The content is {kind}; accepted kinds are photos (JPEG, PNG, GIF, WebP, "
            "HEIC/HEIF), MP4 video, PDF, CSV and plain text."
        )
    claimed = CLAIMED_BY_EXTENSION.get(PurePath(label).suffix.lower())
    alike = any({claimed, content_type} <= group for group in INTERCHANGEABLE)
    if claimed and claimed != content_type and not alike:
        raise UnacceptableFile(
            f"The name says {claimed} but the content is {content_type}. Upload the real file "
            "or give it its proper name."
        )
    return Sniffed(content_type, ALLOWED_TYPES[content_type])
