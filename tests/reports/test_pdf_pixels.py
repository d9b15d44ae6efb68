"""The PDFs as pixels (pdftoppm): pages have ink, the plot is drawn, margins stay clear."""

from __future__ import annotations

import io
import re
import shutil
import subprocess

import numpy as np
import pypdf
import pytest
from reportlab.lib import colors

from reports.pdf import render_certificate, render_receipt
from reports.pdf.plot import BAND_FILL
from reports.pdf.styles import MARGIN
from shop.bench.plot_svg import MARKERS
from tests.reports.test_certificate_pdf import certificate_snapshot, long_snapshot
from tests.reports.test_receipt_pdf import receipt_data

DPI = 100
SCALE = DPI / 72  # pixels per PDF point
INK_LEVEL = 200  # a channel below this on white paper is ink, not anti-aliasing haze
CLEAR_LEVEL = 245  # a margin pixel at or above this in every channel is blank paper
# A pixel within this many levels of a fill colour in every channel is taken as that fill:
# enough for rounding in the rasteriser, too little to take the light grey grid for the band.
COLOUR_TOLERANCE = 10
MIN_INK_SHARE = 0.002  # a page with a footer line and a heading already has more than this
MIN_BAND_PIXELS = 2000  # the example's band fills about 3000 pixels at 100 dpi
MIN_MARKER_PIXELS = 20  # its five hollow circles draw about 170


def read_ppm(data: bytes) -> np.ndarray:
    header = re.match(rb"P6\s+(\d+)\s+(\d+)\s+255\s", data)
    width, height = int(header.group(1)), int(header.group(2))
    pixels = np.frombuffer(data, dtype=np.uint8, offset=header.end())
    return pixels.reshape(height, width, 3)


def rasterise(pdf: bytes, program: str, tmp_path) -> list[np.ndarray]:
    """Every page as an RGB array (rows from the top), at DPI."""
    source = tmp_path / "document.pdf"
    source.write_bytes(pdf)
    subprocess.run([program, "-r", str(DPI), str(source), str(tmp_path / "page")], check=True)
    return [read_ppm(path.read_bytes()) for path in sorted(tmp_path.glob("page-*.ppm"))]


def ink_share(page: np.ndarray) -> float:
    return float((page.min(axis=2) < INK_LEVEL).mean())


def pixels_near(region: np.ndarray, colour) -> int:
    target = np.array([round(255 * c) for c in colour.rgb()])
    return int((np.abs(region.astype(int) - target).max(axis=2) <= COLOUR_TOLERANCE).sum())


def text_heights(page: pypdf.PageObject) -> dict[str, float]:
    """Where each line of text starts up the page [pt], by its first words."""
    heights = {}

    def record(text, cm, tm, font, size):
        if text.strip():
            heights.setdefault(text.strip()[:40], cm[5] + tm[4] * cm[1] + tm[5] * cm[3])

    page.extract_text(visitor_text=record)
    return heights


def test_every_certificate_page_has_ink(pdftoppm, tmp_path):
    pages = rasterise(render_certificate(long_snapshot()), pdftoppm, tmp_path)
    assert len(pages) > 1
    assert all(ink_share(page) > MIN_INK_SHARE for page in pages)


def test_every_receipt_page_has_ink(pdftoppm, tmp_path):
    pages = rasterise(render_receipt(receipt_data()), pdftoppm, tmp_path)
    assert pages
    assert all(ink_share(page) > MIN_INK_SHARE for page in pages)


def test_the_plot_has_its_band_and_reading_marks_drawn(pdftoppm, tmp_path):
    pdf = render_certificate(certificate_snapshot())
    reader = pypdf.PdfReader(io.BytesIO(pdf))
    pages = rasterise(pdf, pdftoppm, tmp_path)
    found = [(index, text_heights(page)) for index, page in enumerate(reader.pages)]
    index, heights = next(
        (index, heights) for index, heights in found if "Readings against a healthy unit" in heights
    )
    page_height = float(reader.pages[index].mediabox.height)
    top = round((page_height - heights["Readings against a healthy unit"]) * SCALE)
    bottom = round((page_height - heights["Fault-current cap:"]) * SCALE)
    plot = pages[index][top:bottom]
    assert pixels_near(plot, BAND_FILL) > MIN_BAND_PIXELS
    in_band_colour = colors.HexColor(MARKERS["in_band"][1])
    assert pixels_near(plot, in_band_colour) > MIN_MARKER_PIXELS


def test_no_ink_reaches_the_side_margins_with_long_names_and_forty_readings(pdftoppm, tmp_path):
    pages = rasterise(render_certificate(long_snapshot()), pdftoppm, tmp_path)
    for page in pages:
        width = page.shape[1]
        margin = int(MARGIN * SCALE) - 1
        assert page[:, width - margin :].min() >= CLEAR_LEVEL
        assert page[:, :margin].min() >= CLEAR_LEVEL


def test_the_qr_code_reads_back_as_the_verification_address(pdftoppm, tmp_path):
    zbarimg = shutil.which("zbarimg")
    if zbarimg is None:
        pytest.skip("zbarimg is missing (optional): apt-get install -y zbar-tools")
    snapshot = certificate_snapshot()
    source = tmp_path / "certificate.pdf"
    source.write_bytes(render_certificate(snapshot))
    subprocess.run([pdftoppm, "-r", "200", "-png", str(source), str(tmp_path / "page")], check=True)
    found = subprocess.run(
        [zbarimg, "--raw", "-q", *map(str, tmp_path.glob("page-*.png"))],
        capture_output=True,
        text=True,
    )
    assert found.stdout.split() == [snapshot["certificate"]["verification_url"]]
