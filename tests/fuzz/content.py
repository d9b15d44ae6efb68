"""Hypothesis strategies for file bodies: real PNG, PDF, CSV and text evidence, junk, and CSVs of
readings both well-formed and broken in every way the importer names."""

from __future__ import annotations

import struct
import zlib

from hypothesis import strategies as st

from shop.bench.models import BehaviourSeen, GlowSeen

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
# The seeded open tests run on a 120 V rig; these bounds keep a reading physically possible there.
MAX_SOURCE_VOLTS = 125.0
MAX_CURRENT = 3.0


def _png_chunk(kind: bytes, data: bytes) -> bytes:
    return (
        struct.pack(">I", len(data))
        + kind
        + data
        + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF)
    )


def png_image(width: int, height: int, pixels: bytes) -> bytes:
    """A valid 8-bit greyscale PNG; `pixels` is repeated or cut to width x height bytes."""
    need = width * height
    body = (pixels * (need // max(len(pixels), 1) + 1))[:need] if pixels else bytes(need)
    rows = b"".join(b"\x00" + body[row * width : (row + 1) * width] for row in range(height))
    header = struct.pack(">IIBBBBB", width, height, 8, 0, 0, 0, 0)
    return (
        PNG_SIGNATURE
        + _png_chunk(b"IHDR", header)
        + _png_chunk(b"IDAT", zlib.compress(rows))
        + _png_chunk(b"IEND", b"")
    )


def pdf_document(text: str) -> bytes:
    """A one-page PDF with a correct cross-reference table, showing `text` (ASCII letters)."""
    safe = "".join(ch for ch in text if ch.isalnum() or ch == " ")[:80] or "scope capture"
    stream = f"BT /F1 12 Tf 72 720 Td ({safe}) Tj ET".encode()
    objects = [
        b"<< /Type /Catalog /Pages 2 0 R >>",
        b"<< /Type /Pages /Kids [3 0 R] /Count 1 >>",
        b"<< /Type /Page /Parent 2 0 R /MediaBox [0 0 612 792] /Contents 4 0 R "
        b"/Resources << /Font << /F1 5 0 R >> >> >>",
        b"<< /Length %d >>\nstream\n" % len(stream) + stream + b"\nendstream",
        b"<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica >>",
    ]
    out = bytearray(b"%PDF-1.4\n")
    offsets = []
    for number, body in enumerate(objects, start=1):
        offsets.append(len(out))
        out += b"%d 0 obj\n" % number + body + b"\nendobj\n"
    xref = len(out)
    out += b"xref\n0 %d\n0000000000 65535 f \n" % (len(objects) + 1)
    out += b"".join(b"%010d 00000 n \n" % offset for offset in offsets)
    out += b"trailer\n<< /Size %d /Root 1 0 R >>\nstartxref\n%d\n%%%%EOF\n" % (
        len(objects) + 1,
        xref,
    )
    return bytes(out)


@st.composite
def plausible_readings(draw) -> dict:
    """A power-up step a healthy or faulty unit could really show on the seeded 120 V rig."""
    source = draw(st.floats(0, MAX_SOURCE_VOLTS, allow_nan=False).map(lambda v: round(v, 1)))
    load = round(source * draw(st.floats(0, 1)), 1)
    reading = {
        "source_voltage": source,
        "load_voltage": load,
        "glow_seen": draw(st.sampled_from(GlowSeen.values)),
        "behaviour_seen": draw(st.sampled_from(BehaviourSeen.values)),
    }
    if draw(st.booleans()):
        reading["current"] = round(draw(st.floats(0, MAX_CURRENT)), 3)
    return reading


def _csv_row(reading: dict) -> str:
    return ",".join(
        str(reading.get(field, ""))
        for field in ("source_voltage", "load_voltage", "current", "glow_seen", "behaviour_seen")
    )


VALID_CSV_HEADER = "source_v,load_v,current_a,glow,behaviour"


@st.composite
def valid_readings_csv(draw) -> bytes:
    rows = draw(st.lists(plausible_readings(), min_size=1, max_size=12))
    text = "\n".join([VALID_CSV_HEADER, *(_csv_row(row) for row in rows)]) + "\n"
    return (b"\xef\xbb\xbf" if draw(st.booleans()) else b"") + text.encode()


BROKEN_CSVS = [
    b"",
    b"\n\n",
    b"source_v,load_v,glow\n",  # a header and no readings
    b"load_v,glow\n40,dark\n",  # neither source_v nor dial_pct
    b"source_v,glow\n40,dark\n",  # load_v missing
    b"source_v,load_v,glow,colour\n40,38,dark,red\n",  # unknown column
    b"source_v,load_v,glow\n40,38,dark,extra\n",  # more cells than columns
    b"source_v,load_v,glow\nforty,38,dark\n",
    b"source_v,load_v,glow\n40,38,purple\n",
    b"source_v,load_v,glow\nnan,38,dark\n",
    b"source_v,load_v,glow\ninf,38,dark\n",
    b"source_v,load_v,glow\n1e308,38,dark\n",
    b"source_v,load_v,glow\n-40,38,dark\n",
    b"source_v,load_v,glow\n40,400,dark\n",  # the unit cannot read more than the source
    b"source_v,load_v,glow,bypassed\n40,38,dark,perhaps\n",
    b"source_v,load_v,glow\n\xff\xfe4\x000\x00,38,dark\n",  # not UTF-8
    b"source_v;load_v;glow\n40;38;dark\n",  # semicolons: one unknown column
    b'source_v,load_v,glow\n"40,38,dark\n',  # an unclosed quote
    b"source_v,load_v,glow\n40\x00,38,dark\n",
    b"\xef\xbb\xbf\xef\xbb\xbfsource_v,load_v,glow\n40,38,dark\n",  # a doubled byte-order mark
]


def readings_csv_files() -> st.SearchStrategy[bytes]:
    """CSV bodies for the readings import: mostly valid, the rest broken (or plain junk)."""
    return st.one_of(
        valid_readings_csv(),
        valid_readings_csv(),
        st.sampled_from(BROKEN_CSVS),
        st.binary(max_size=512),
    )


def evidence_files() -> st.SearchStrategy[bytes]:
    """Evidence bodies: photos, PDFs, CSV logs and notes that are kept, and things refused."""
    png = st.builds(
        png_image, st.integers(1, 24), st.integers(1, 24), st.binary(min_size=1, max_size=64)
    )
    pdf = st.text(max_size=40).map(pdf_document)
    csv_log = valid_readings_csv()
    note = st.text(min_size=1, max_size=300).map(str.encode)
    markup = st.sampled_from([b"<!doctype html><p>hi</p>", b"<svg onload=alert(1)></svg>"])
    return st.one_of(png, pdf, csv_log, note, markup, st.binary(max_size=256))
