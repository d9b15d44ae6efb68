"""Report benchmark: rendering a certificate PDF with 25 readings, once and 100 in a row.

Run with ``python bench/report_bench.py`` (``make bench``; ``--quick``: fewer repeats). Each
figure is printed beside a
baseline measured in the same run: a plain one-page reportlab document in the same fonts
(a title and twenty paragraphs, invariant mode, no tables, drawings or page count). The plot's
share is the median time to build the plot and draw it on a scratch canvas, over the median
time of a whole certificate; writing its drawing into the file is left in the rest.
Exits non-zero if two renderings of one snapshot differ.
"""

import copy
import io
import json
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import reportlab  # noqa: E402
from reportlab.graphics import renderPDF  # noqa: E402
from reportlab.pdfgen.canvas import Canvas  # noqa: E402
from reportlab.platypus import Paragraph, SimpleDocTemplate  # noqa: E402

from reports.pdf import render_certificate  # noqa: E402
from reports.pdf.certificate import PLOT_HEIGHT, QR_SIZE, qr_code  # noqa: E402
from reports.pdf.layout import content_width  # noqa: E402
from reports.pdf.plot import readings_plot  # noqa: E402
from reports.pdf.styles import MARGIN, STYLES  # noqa: E402

EXAMPLE = Path(__file__).resolve().parent.parent / "tests/reports/data/certificate_snapshot.json"
READINGS = 25
IN_A_ROW = 100
REPEATS = 41
AIM_MS = 150.0  # aim: under 150 ms a certificate, alone and 100 in a row


def snapshot_with_readings(count: int) -> dict:
    """The example certificate with `count` readings spread over the source range."""
    snapshot = json.loads(EXAMPLE.read_text())
    test = snapshot["tests"][0]
    template = test["readings"][0]
    test["readings"] = [
        {
            **copy.deepcopy(template),
            "sequence": index + 1,
            "source_voltage": round(5 + 4.6 * index, 1),
            "load_voltage": round(4.3 + 3.9 * index, 1),
            "band_low": round(4.0 + 3.7 * index, 1),
            "band_high": round(4.6 + 4.1 * index, 1),
        }
        for index in range(count)
    ]
    return snapshot


def plain_document() -> bytes:
    """The baseline: one page of Helvetica paragraphs, as reportlab lays out the simplest PDF."""
    buffer = io.BytesIO()
    document = SimpleDocTemplate(
        buffer,
        leftMargin=MARGIN,
        rightMargin=MARGIN,
        topMargin=MARGIN,
        bottomMargin=MARGIN,
        title="Baseline",
        invariant=1,
    )
    words = "A functional check of the unit under a series-lamp current limiter. " * 4
    document.build(
        [Paragraph("Baseline document", STYLES["title"])]
        + [Paragraph(words, STYLES["body"]) for _ in range(20)]
    )
    return buffer.getvalue()


def plot_alone(test: dict, width: float) -> None:
    canvas = Canvas(io.BytesIO(), invariant=1)
    renderPDF.draw(readings_plot(test, width, PLOT_HEIGHT), canvas, 0, 0)


def timed(call, repeats: int | None = None) -> list[float]:
    samples = []
    for _ in range(REPEATS if repeats is None else repeats):
        start = time.perf_counter()
        call()
        samples.append((time.perf_counter() - start) * 1000)
    return samples


def percentiles(samples: list[float]) -> tuple[float, float]:
    ordered = sorted(samples)
    return statistics.median(ordered), ordered[round(0.95 * (len(ordered) - 1))]


def qr_alone(url: str) -> None:
    canvas = Canvas(io.BytesIO())
    renderPDF.draw(qr_code(url, QR_SIZE), canvas, 0, 0)


def main(argv=None) -> int:
    global REPEATS, IN_A_ROW
    if "--quick" in (sys.argv[1:] if argv is None else argv):
        REPEATS, IN_A_ROW = 7, 10
    snapshot = snapshot_with_readings(READINGS)
    width = content_width(snapshot["paper_size"])
    first = render_certificate(snapshot)
    if render_certificate(copy.deepcopy(snapshot)) != first:
        print("DETERMINISM CHECK FAILED: one snapshot rendered two different files")
        return 1
    plain_document()

    baseline_median, baseline_p95 = percentiles(timed(plain_document))
    one_median, one_p95 = percentiles(timed(lambda: render_certificate(snapshot)))
    plot_median, _ = percentiles(timed(lambda: plot_alone(snapshot["tests"][0], width)))
    url = snapshot["certificate"]["verification_url"]
    qr_median, _ = percentiles(timed(lambda: qr_alone(url)))
    start = time.perf_counter()
    for _ in range(IN_A_ROW):
        render_certificate(snapshot)
    row_each = (time.perf_counter() - start) * 1000 / IN_A_ROW

    print(
        f"Report benchmark (reportlab {reportlab.Version}, Python {sys.version.split()[0]}); "
        f"certificate of {READINGS} readings, {len(first) / 1024:.0f} KiB"
    )
    print(
        f"  {'plain one-page document':<36} median {baseline_median:7.2f} ms  "
        f"p95 {baseline_p95:7.2f} ms  (baseline)"
    )
    print(
        f"  {'one certificate':<36} median {one_median:7.2f} ms  p95 {one_p95:7.2f} ms  "
        f"ratio to baseline {one_median / baseline_median:5.1f}x  (aim: < {AIM_MS:g} ms)"
    )
    print(
        f"  {f'{IN_A_ROW} certificates in a row, each':<36} mean   {row_each:7.2f} ms  "
        f"{'':16}ratio to baseline {row_each / baseline_median:5.1f}x  (aim: < {AIM_MS:g} ms)"
    )
    print(
        f"  {'the plot, built and drawn alone':<36} median {plot_median:7.2f} ms  "
        f"{'':16}share of a certificate {plot_median / one_median:5.1%}"
    )
    print(
        f"  {'the QR code, built and drawn alone':<36} median {qr_median:7.2f} ms  "
        f"{'':16}share of a certificate {qr_median / one_median:5.1%}"
    )
    ratio = one_median / baseline_median
    print(f"  (aim: one certificate < 5x the plain page; measured {ratio:.1f}x)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
