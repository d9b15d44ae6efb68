"""Service benchmark: closing tests, a prediction, the readings plot and a CSV import.

Run with ``python bench/service_bench.py`` (``make bench``; ``--quick`` for fewer repeats).
Uses the Django test client on a throwaway in-memory SQLite database. Each figure is printed
beside a baseline measured the same way in the same run (the ratio is the figure to compare):

- closing a 25-reading test and a 50-point prediction beside a bare authenticated DRF GET,
  with the share of the time spent inside shop.physics;
- closing a 25-reading test of the nameplate (composite) model beside the same close of a
  plain resistance;
- closing a test of 10,000 readings (the most a test holds): time, and the peak memory the
  close allocates (tracemalloc) at 2,500 and 10,000 readings, to show it flat per reading;
- an open test's plot.svg at 10,000 readings, first drawn and then from the cache;
- a 10,000-row CSV import beside ``csv.reader`` and a float parse of the same file.
"""

import os
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
os.environ.setdefault("DJANGO_SETTINGS_MODULE", "shop.settings.test")

import django  # noqa: E402

django.setup()

from django.conf import settings  # noqa: E402
from django.test.utils import setup_test_environment  # noqa: E402
from django.urls import path  # noqa: E402
from rest_framework.response import Response  # noqa: E402
from rest_framework.test import APIClient  # noqa: E402
from rest_framework.views import APIView  # noqa: E402

REPEATS = 41
QUICK_REPEATS = 5
READINGS = 25
LARGE_READINGS = 10_000  # MAX_READINGS_PER_TEST
CSV_ROWS = 10_000
SWEEP_POINTS = 50
PHYSICS_MODULE_PREFIX = "shop.physics"


class BareView(APIView):
    """Authenticated, no database work: the floor any endpoint stands on."""

    def get(self, request):
        return Response({"ok": True})


urlpatterns = [path("bare/", BareView.as_view())]


def percentiles(samples: list[float]) -> tuple[float, float]:
    ordered = sorted(samples)
    return statistics.median(ordered), ordered[int(round(0.95 * (len(ordered) - 1)))]


def timed(call, repeats=REPEATS) -> list[float]:
    samples = []
    for _ in range(repeats):
        start = time.perf_counter()
        call()
        samples.append((time.perf_counter() - start) * 1000)
    return samples


class PhysicsClock:
    """Counts wall time spent in shop.physics frames reached from the service (a profiler)."""

    def __init__(self):
        import cProfile

        self.profile = cProfile.Profile()

    def share(self, call) -> float:
        import pstats

        self.profile.enable()
        start = time.perf_counter()
        call()
        total = time.perf_counter() - start
        self.profile.disable()
        stats = pstats.Stats(self.profile)
        physics = sum(
            entry[3]
            for key, entry in stats.stats.items()
            if PHYSICS_MODULE_PREFIX.replace(".", "/") in key[0]
            and not any(PHYSICS_MODULE_PREFIX.replace(".", "/") in caller[0] for caller in entry[4])
        )
        self.profile = type(self.profile)()
        return min(physics / total, 1.0) if total else 0.0


def ramp(count: int) -> list[dict]:
    """`count` readings from 5 V to 120 V source, the unit at 85 % of it."""
    return [
        {
            "source_voltage": 5.0 + 115.0 * i / max(count - 1, 1),
            "load_voltage": (5.0 + 115.0 * i / max(count - 1, 1)) * 0.85,
            "glow_seen": "dark",
        }
        for i in range(count)
    ]


def peak_traced_mb(call) -> float:
    """Peak memory allocated while `call` runs [MB], numpy's arrays included (tracemalloc)."""
    import tracemalloc

    tracemalloc.start()
    tracemalloc.reset_peak()
    try:
        call()
        return tracemalloc.get_traced_memory()[1] / 1e6
    finally:
        tracemalloc.stop()


def row(name, value, unit, baseline_name, baseline, aim):
    ratio = value / baseline if baseline else float("inf")
    print(
        f"  {name:<44} {value:9.1f} {unit:<3} {baseline_name} {baseline:9.1f} {unit:<3}"
        f" ratio {ratio:6.2f}x  (aim: {aim})"
    )


def large_figures(client, lead, body, repeats):
    """Closing, plotting and importing at the largest sizes a test allows."""
    import csv
    import io

    from django.core.cache import cache
    from django.core.files.uploadedfile import SimpleUploadedFile

    from shop.bench.csv_import import parse_readings
    from shop.bench.models import Reading

    def open_with(count: int) -> int:
        test_id = client.post("/api/powerups/", body, format="json").json()["id"]
        Reading.objects.bulk_create(
            [
                Reading(test_id=test_id, sequence=i + 1, **reading)
                for i, reading in enumerate(ramp(count))
            ]
        )
        return test_id

    def close(test_id):
        response = client.post(f"/api/powerups/{test_id}/close/", {}, format="json")
        assert response.status_code == 200, response.content

    def plot(test_id):
        response = client.get(f"/api/powerups/{test_id}/plot.svg")
        assert response.status_code == 200, response.content

    figures = {}
    for count in (LARGE_READINGS // 4, LARGE_READINGS):
        test_id = open_with(count)
        figures[f"peak_{count}"] = peak_traced_mb(lambda test_id=test_id: close(test_id))
    figures["close_large"] = statistics.median(
        timed(lambda: close(open_with(LARGE_READINGS)), repeats=1)[0]
        for _ in range(max(1, repeats // 5))
    )
    test_id = open_with(LARGE_READINGS)
    cache.clear()
    figures["plot_first"] = timed(lambda: plot(test_id), repeats=1)[0]
    figures["plot_cached"] = statistics.median(timed(lambda: plot(test_id), repeats=repeats))

    text = "source_v,load_v,current_a,glow,behaviour,held_s,bypassed\n" + "".join(
        f"{(i % 120) + 1},{((i % 120) + 1) * 0.8:.2f},0.2,dark,,5,no\n" for i in range(CSV_ROWS)
    )

    def bare_parse():
        rows = csv.reader(io.StringIO(text))
        next(rows)
        return [(float(r[0]), float(r[1]), float(r[2]) if r[2] else None, r[3]) for r in rows]

    def shop_parse():
        return parse_readings(SimpleUploadedFile("readings.csv", text.encode()))

    def endpoint():
        test_id = client.post("/api/powerups/", body, format="json").json()["id"]
        upload = SimpleUploadedFile("readings.csv", text.encode(), content_type="text/csv")
        response = client.post(
            f"/api/powerups/{test_id}/readings/import/", {"file": upload}, format="multipart"
        )
        assert response.status_code == 201, response.content

    figures["csv_bare"] = statistics.median(timed(bare_parse, repeats=repeats))
    figures["csv_parse"] = statistics.median(timed(shop_parse, repeats=repeats))
    figures["csv_endpoint"] = timed(endpoint, repeats=1)[0]
    return figures


def main(argv=None) -> int:
    import argparse

    from django.db import connection

    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help=f"{QUICK_REPEATS} repeats")
    repeats = QUICK_REPEATS if parser.parse_args(argv).quick else REPEATS

    import shop.urls
    from shop.bench import services
    from shop.intake import services as intake

    setup_test_environment()
    settings.ALLOWED_HOSTS = ["testserver"]
    shop.urls.urlpatterns += urlpatterns
    old_name = connection.creation.create_test_db(verbosity=0)
    try:
        from django.contrib.auth.models import Group, User

        lead = User.objects.create_user("bench_lead", password="x")
        lead.groups.add(Group.objects.get_or_create(name="lead")[0])
        client = APIClient()
        client.force_authenticate(lead)
        customer = intake.customer_create(actor=lead, name="Benchmark customer")
        unit = intake.unit_create(
            actor=lead,
            owner=customer,
            category="radio",
            maker="Bench",
            rated_voltage=120,
            rated_power=60,
        )
        rig = services.rig_create(
            actor=lead,
            name="Bench rig",
            mains_voltage=120,
            mains_frequency=60,
            source_kind="fixed_mains",
            source_current_rating=5,
            isolation_transformer=True,
            internal_resistance=2,
        )
        lamp = services.lamp_create(
            actor=lead,
            rig=rig,
            label="60 W",
            technology="tungsten",
            rated_voltage=120,
            rated_power=60,
        )
        job = intake.job_create(actor=lead, unit=unit, complaint="bench")
        readings = [
            {
                "source_voltage": 5.0 + 4.6 * i,
                "load_voltage": (5.0 + 4.6 * i) * 0.85,
                "glow_seen": "dark",
            }
            for i in range(READINGS)
        ]
        body = {"job": job.pk, "rig": rig.pk, "lamp": lamp.pk}

        resistive_body = {
            **body,
            "declared_load": {
                "kind": "resistive",
                "parameters": {"power": 60, "voltage": 120},
                "basis": "nameplate",
            },
        }

        def open_with_readings(resistive=False) -> int:
            test_id = client.post(
                "/api/powerups/", resistive_body if resistive else body, format="json"
            ).json()["id"]
            client.post(f"/api/powerups/{test_id}/readings/", {"readings": readings}, format="json")
            return test_id

        def closer(resistive=False):
            test_id = open_with_readings(resistive)

            def close():
                response = client.post(f"/api/powerups/{test_id}/close/", {}, format="json")
                assert response.status_code == 200, response.content

            return close

        prediction = {
            "lamp_id": lamp.pk,
            "rig": {"mains_voltage": 120, "mains_frequency": 60},
            "declared_load": {
                "kind": "resistive",
                "parameters": {"resistance": 240},
                "basis": "estimate",
            },
            "points": SWEEP_POINTS,
        }

        def predict_once():
            response = client.post("/api/predict/", prediction, format="json")
            assert response.status_code == 200, response.content

        def bare_once():
            assert client.get("/bare/").status_code == 200

        for call in (bare_once, predict_once):
            call()
        bare = timed(bare_once, repeats)
        close = [timed(closer(), repeats=1)[0] for _ in range(repeats)]
        close_resistive = [timed(closer(resistive=True), repeats=1)[0] for _ in range(repeats)]
        predict = timed(predict_once, repeats)
        clock = PhysicsClock()
        predict_share = statistics.median(clock.share(predict_once) for _ in range(5))
        close_share = statistics.median(clock.share(closer()) for _ in range(5))
        large = large_figures(client, lead, body, repeats)
    finally:
        connection.creation.destroy_test_db(old_name, verbosity=0)

    bare_median, bare_p95 = percentiles(bare)
    print("Service benchmark (in-process Django test client, in-memory SQLite)")
    print(
        f"  bare authenticated DRF GET            median {bare_median:7.2f} ms  "
        f"p95 {bare_p95:7.2f} ms  (baseline)"
    )
    for name, samples, share in (
        (f"close a test of {READINGS} readings", close, close_share),
        (f"POST /api/predict/, {SWEEP_POINTS}-point sweep", predict, predict_share),
    ):
        median, p95 = percentiles(samples)
        print(
            f"  {name:<37} median {median:7.2f} ms  p95 {p95:7.2f} ms  "
            f"ratio to bare {median / bare_median:6.1f}x  physics share {share:5.1%} (cProfile)  "
            f"(aim: median < 30 ms, physics < 1/3)"
        )
    print("Beside a baseline of the same kind (medians)")
    row(
        f"close, {READINGS} readings, nameplate (composite)",
        statistics.median(close),
        "ms",
        "resistive close",
        statistics.median(close_resistive),
        "< 1.3x",
    )
    peak_small, peak_large = large[f"peak_{LARGE_READINGS // 4}"], large[f"peak_{LARGE_READINGS}"]
    print(
        f"  close, {LARGE_READINGS} readings                        "
        f"{large['close_large'] / 1000:9.2f} s    (aim < 3 s)"
    )
    print(
        f"  close, peak memory allocated (tracemalloc)   {LARGE_READINGS // 4} readings "
        f"{peak_small:7.1f} MB, {LARGE_READINGS} readings {peak_large:7.1f} MB "
        f"({1000 * peak_large / LARGE_READINGS:.1f} kB a reading; aim < 300 MB, flat a reading)"
    )
    print(
        f"  open test plot.svg, {LARGE_READINGS} readings         first "
        f"{large['plot_first'] / 1000:7.2f} s, cached {large['plot_cached']:7.1f} ms  "
        "(aim: cached < 500 ms)"
    )
    row(
        f"CSV parse, {CSV_ROWS} rows (parse_readings)",
        large["csv_parse"],
        "ms",
        "csv.reader+float",
        large["csv_bare"],
        "< 10x",
    )
    row(
        f"CSV import endpoint, {CSV_ROWS} rows (stored)",
        large["csv_endpoint"],
        "ms",
        "csv.reader+float",
        large["csv_bare"],
        "< 10x",
    )
    return 0


if __name__ == "__main__":
    sys.exit(main())
