"""Service benchmark: closing a 25-reading test and a 50-point prediction, in-process.

Run with ``python bench/service_bench.py`` (``make bench``). Uses the Django test client on a
throwaway in-memory SQLite database. Each figure is printed beside a bare authenticated DRF
endpoint served the same way in the same run (the ratio is the figure to compare), and the
share of the time spent inside shop.physics.
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
READINGS = 25
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


def main() -> int:
    from django.db import connection

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

        def open_with_readings() -> int:
            test_id = client.post("/api/powerups/", body, format="json").json()["id"]
            client.post(f"/api/powerups/{test_id}/readings/", {"readings": readings}, format="json")
            return test_id

        def closer():
            test_id = open_with_readings()

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
        bare = timed(bare_once)
        close = [timed(closer(), repeats=1)[0] for _ in range(REPEATS)]
        predict = timed(predict_once)
        clock = PhysicsClock()
        predict_share = statistics.median(clock.share(predict_once) for _ in range(5))
        close_share = statistics.median(clock.share(closer()) for _ in range(5))
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
    return 0


if __name__ == "__main__":
    sys.exit(main())
