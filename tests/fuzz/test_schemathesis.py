"""Schemathesis against the service's own OpenAPI schema, in-process, as every role.

Every operation of the schema gets positive cases (schema-valid, steered towards records that
exist so they reach the services) and negative cases (schema-violating), as the lead, a
technician and the front desk. The run fails on any 5xx and on any answer the schema does not
document (status code, content type, headers or body). It prints how many answers of each
status every operation got, and fails unless each one got some 2xx.

It runs once per CI run: on the SQLite pass, when DATABASE_URL is unset (the PostgreSQL pass
sets it). The seed is fixed, so two runs on the same code send the same requests.
"""

from __future__ import annotations

from collections import Counter, defaultdict
from datetime import date, timedelta

import schemathesis
from django.contrib.auth.models import User
from django.db import transaction
from hypothesis import HealthCheck, Phase, given, seed, settings
from hypothesis import strategies as st
from hypothesis.errors import Unsatisfiable
from schemathesis import GenerationMode
from schemathesis.checks import not_a_server_error
from schemathesis.core.failures import FailureGroup
from schemathesis.specs.openapi import checks as openapi_checks

from reports.models import Certificate
from shop.bench.models import Instrument, Lamp, LampBank, PowerUpTest, Rig
from shop.bench.models import TestStatus as PowerUpStatus
from shop.intake.models import (
    RECORDABLE_METHODS,
    Customer,
    Evidence,
    Job,
    JobState,
    RepairStep,
    Unit,
)
from shop.intake.workflow import allowed_targets

from .conftest import CERTIFIABLE_STATES, in_process_app, once_per_ci_run
from .content import evidence_files, plausible_readings, readings_csv_files

pytestmark = once_per_ci_run

FUZZ_SEED = 70_2026
SCHEMA_PATH = "/api/schema/?format=json"
POSITIVE, NEGATIVE = GenerationMode.POSITIVE, GenerationMode.NEGATIVE
# Examples per operation for each role and mode. The lead may do everything, so the lead's
# schema-valid cases reach deepest; the other roles mostly prove their refusals are documented.
EXAMPLES = {
    ("lead", POSITIVE): 20,
    ("lead", NEGATIVE): 8,
    ("technician", POSITIVE): 6,
    ("technician", NEGATIVE): 3,
    ("front_desk", POSITIVE): 6,
    ("front_desk", NEGATIVE): 3,
}
MIN_REQUESTS = 2000
# What "conforming" means here: no server error; status code, content type, headers and body
# as the schema documents them.
CHECKS = [
    not_a_server_error,
    openapi_checks.status_code_conformance,
    openapi_checks.content_type_conformance,
    openapi_checks.response_headers_conformance,
    openapi_checks.response_schema_conformance,
]
# How often a generated id or reference is swapped for one that exists (in tenths).
STEER_TENTHS = {POSITIVE: 8, NEGATIVE: 5}
DEMO_PASSWORD = "bench-demo-2026"
# Body and query fields that name another record, and the pool their ids come from.
REFERENCES = {
    "job": "jobs",
    "unit": "units",
    "owner": "customers",
    "customer": "customers",
    "rig": "rigs",
    "rig_id": "rigs",
    "lamp": "lamps",
    "lamp_id": "lamps",
    "bank": "lamp-banks",
    "bank_id": "lamp-banks",
    "instrument": "instruments",
    "source_meter": "instruments",
    "load_meter": "instruments",
    "current_meter": "instruments",
    "assigned_technician": "technicians",
    "technician": "technicians",
    "corrects": "steps",
}
LIST_REFERENCES = {"lamps": "lamps", "tests": "powerups"}
# Operations on an open test: steered to the seeded open tests.
LAMP_WRITES = {"POST /api/lamps/", "PUT /api/lamps/{id}/", "PATCH /api/lamps/{id}/"}
OPEN_TEST_OPERATIONS = {
    "PUT /api/powerups/{id}/",
    "PATCH /api/powerups/{id}/",
    "POST /api/powerups/{id}/close/",
    "POST /api/powerups/{id}/readings/",
    "POST /api/powerups/{id}/readings/import/",
}

# The customer's answer to an estimate: steered to jobs awaiting it, with a method the desk
# may record and no estimate of the fuzzer's own (it must equal the job's).
ANSWER_OPERATIONS = {"POST /api/jobs/{id}/approve/", "POST /api/jobs/{id}/decline/"}


def _ids(queryset) -> list:
    return list(queryset.order_by("pk").values_list("pk", flat=True))


def id_pools() -> dict[str, list]:
    """Ids of what exists after seeding, by the first segment of the paths that name them."""
    lamps_by_rig = defaultdict(list)
    for lamp_id, rig_id in Lamp.objects.order_by("pk").values_list("pk", "rig_id"):
        lamps_by_rig[rig_id].append(lamp_id)
    return {
        "certificates": _ids(Certificate.objects),
        "customers": _ids(Customer.objects),
        "evidence": _ids(Evidence.objects),
        "instruments": _ids(Instrument.objects),
        "jobs": _ids(Job.objects),
        "lamp-banks": _ids(LampBank.objects),
        "lamps": _ids(Lamp.objects),
        "powerups": _ids(PowerUpTest.objects),
        "rigs": _ids(Rig.objects),
        "steps": _ids(RepairStep.objects),
        "units": _ids(Unit.objects),
        "technicians": _ids(User.objects.filter(groups__name="technician")),
        "open_tests": _ids(PowerUpTest.objects.filter(status=PowerUpStatus.OPEN)),
        "bench_jobs": _ids(Job.objects.exclude(state__in=[JobState.RETURNED, JobState.DECLINED])),
        "certifiable_jobs": _ids(
            Job.objects.filter(
                state__in=CERTIFIABLE_STATES, powerups__status=PowerUpStatus.CLOSED
            ).distinct()
        ),
        "awaiting_jobs": _ids(
            Job.objects.filter(state=JobState.AWAITING_APPROVAL).exclude(estimate=None)
        ),
        "lamps_by_rig": dict(lamps_by_rig),
        "rig_of_lamp": dict(Lamp.objects.values_list("pk", "rig_id")),
        "job_targets": {
            job.pk: allowed_targets(job.state, job.held_from) for job in Job.objects.all()
        },
        "verification": list(
            Certificate.objects.order_by("pk").values_list("number", "verification_code")
        ),
    }


declared_loads = st.fixed_dictionaries(
    {
        "kind": st.just("resistive"),
        "parameters": st.fixed_dictionaries(
            {
                "power": st.floats(5, 400).map(lambda watts: round(watts, 1)),
                "voltage": st.sampled_from([120, 230]),
            }
        ),
        "basis": st.sampled_from(["nameplate", "measured_idle", "estimate"]),
    }
)


class Steering:
    """Swaps generated ids and documents for live ones often enough to reach the services."""

    def __init__(self, draw, pools: dict, mode: GenerationMode):
        self.draw, self.pools, self.mode = draw, pools, mode

    def now(self, tenths: int | None = None) -> bool:
        tenths = STEER_TENTHS[self.mode] if tenths is None else tenths
        return self.draw(st.integers(0, 9)) < tenths

    def pick(self, pool: str):
        return self.draw(st.sampled_from(self.pools[pool])) if self.pools[pool] else None

    def references(self, values: dict) -> None:
        for name in list(values):
            if name in REFERENCES and self.pools[REFERENCES[name]] and self.now():
                values[name] = self.pick(REFERENCES[name])
            elif name in LIST_REFERENCES and self.now():
                pool = self.pools[LIST_REFERENCES[name]]
                values[name] = self.draw(st.lists(st.sampled_from(pool), max_size=3, unique=True))

    def limiter(self, body: dict, *, rig_key: str, lamp_key: str, bank_key: str) -> None:
        """A lamp of the rig chosen, and no bank (or the reverse, left as generated)."""
        rig = self.pick("rigs")
        body[rig_key] = rig
        body[lamp_key] = self.draw(st.sampled_from(self.pools["lamps_by_rig"][rig]))
        body.pop(bank_key, None)


def _steer_body(steer: Steering, case) -> object:
    label, body, path = case.operation.label, case.body, case.path_parameters or {}
    if label == "POST /api/evidence/" and isinstance(body, dict):
        body["file"] = steer.draw(evidence_files())
    if label == "POST /api/powerups/{id}/readings/import/" and isinstance(body, dict):
        body["file"] = steer.draw(readings_csv_files())
    if steer.mode is NEGATIVE or not isinstance(body, dict):
        if label == "POST /api/powerups/{id}/readings/" and steer.now(3):
            return steer.draw(plausible_readings())
        return body
    steer.references(body)
    if "declared_load" in body and steer.now():
        body["declared_load"] = steer.draw(declared_loads)
    if label == "POST /api/powerups/" and steer.now():
        steer.limiter(body, rig_key="rig", lamp_key="lamp", bank_key="bank")
        body["job"] = steer.pick("bench_jobs")
    elif label == "POST /api/predict/" and steer.now():
        steer.limiter(body, rig_key="rig_id", lamp_key="lamp_id", bank_key="bank_id")
        for key in ("lamp", "rig", "source_voltages"):
            body.pop(key, None)
    elif label == "POST /api/powerups/{id}/readings/" and steer.now():
        batch = st.lists(plausible_readings(), min_size=1, max_size=5)
        return steer.draw(st.one_of(plausible_readings(), st.builds(dict, readings=batch)))
    elif label == "POST /api/lamp-banks/" and steer.now():
        rig = steer.pick("rigs")
        body["rig"] = rig
        lamps = steer.pools["lamps_by_rig"][rig]
        body["lamps"] = steer.draw(st.lists(st.sampled_from(lamps), min_size=2, unique=True))
    elif label == "POST /api/certificates/" and steer.now():
        body["job"] = steer.pick("certifiable_jobs")
        body.pop("tests", None)
    elif label == "POST /api/certificates/{id}/supersede/" and steer.now():
        body.pop("tests", None)
    elif label in LAMP_WRITES and steer.now():
        body.update(
            technology=steer.draw(st.sampled_from(["tungsten", "halogen"])),
            rated_voltage=steer.draw(st.sampled_from([120, 230])),
            rated_power=steer.draw(st.integers(15, 200)),
        )
        body.pop("calibration_points", None)
        if "rig" in body and path.get("id") in steer.pools["rig_of_lamp"]:
            body["rig"] = steer.pools["rig_of_lamp"][path["id"]]
    elif label in ANSWER_OPERATIONS and steer.now():
        body["method"] = steer.draw(st.sampled_from([m.value for m in RECORDABLE_METHODS]))
        body.pop("estimate", None)
    elif label == "POST /api/jobs/{id}/transition/" and steer.now():
        targets = steer.pools["job_targets"].get(path.get("id"))
        if targets:
            body["to_state"] = steer.draw(st.sampled_from(targets))
    elif label == "POST /api/instruments/{id}/calibrations/" and steer.now():
        calibrated_on = steer.draw(st.dates(date(2015, 1, 1), date(2030, 1, 1)))
        body["calibrated_on"] = calibrated_on.isoformat()
        valid_for = timedelta(days=steer.draw(st.integers(1, 800)))
        body["due_on"] = (calibrated_on + valid_for).isoformat()
    elif label == "POST /api/auth/token/" and steer.now(4):
        body.update(username=steer.draw(st.sampled_from(["lena", "dana", "theo"])))
        body["password"] = DEMO_PASSWORD
    return body


def _steer_path(steer: Steering, case) -> None:
    params = case.path_parameters or {}
    if "id" in params and steer.now():
        segment = case.operation.path.split("/")[2]
        label = case.operation.label
        pool = (
            "open_tests"
            if label in OPEN_TEST_OPERATIONS
            else "awaiting_jobs"
            if label in ANSWER_OPERATIONS
            else segment
        )
        if steer.pools.get(pool):
            params["id"] = steer.pick(pool)
    if "number" in params and steer.pools["verification"] and steer.now():
        number, code = steer.draw(st.sampled_from(steer.pools["verification"]))
        params["number"] = number
        if steer.now():
            case.query = {**(case.query or {}), "code": code}


@st.composite
def steered_cases(draw, operation, pools: dict, mode: GenerationMode):
    """A generated case of `operation`, its ids and documents steered towards live records."""
    case = draw(operation.as_strategy(generation_mode=mode))
    steer = Steering(draw, pools, mode)
    _steer_path(steer, case)
    if case.query and mode is POSITIVE:
        steer.references(case.query)
    if case.body is not None:
        case.body = _steer_body(steer, case)
    return case


def _fuzz_operation(operation, role: str, mode, token: str, pools, counts, failures) -> None:
    @settings(
        max_examples=EXAMPLES[(role, mode)],
        database=None,
        deadline=None,
        phases=[Phase.generate],
        suppress_health_check=list(HealthCheck),
    )
    @seed(FUZZ_SEED)
    @given(case=steered_cases(operation, pools, mode))
    def run(case):
        headers = {"Authorization": token}
        response = case.call(headers=headers)
        counts[operation.label][response.status_code] += 1
        try:
            case.validate_response(response, checks=CHECKS, headers=headers)
        except FailureGroup as failure:
            failures.append(f"{operation.label} as {role} ({mode.value}): {failure}")

    try:
        run()
    except Unsatisfiable:
        # Nothing in this operation can be made invalid (no parameters, no body).
        assert mode is NEGATIVE, operation.label


def _status_table(counts: dict[str, Counter]) -> str:
    lines = [f"{'operation':<46} answers by status"]
    for label in sorted(counts, key=lambda name: (name.split()[1], name.split()[0])):
        by_status = "  ".join(f"{code}:{n}" for code, n in sorted(counts[label].items()))
        lines.append(f"{label:<46} {by_status}")
    total = sum(sum(c.values()) for c in counts.values())
    lines.append(f"{total} requests over {len(counts)} operations")
    return "\n".join(lines)


def test_every_operation_answers_as_documented_for_every_role(role_tokens, capsys):
    counts: dict[str, Counter] = defaultdict(Counter)
    failures: list[str] = []
    with in_process_app() as app:
        schema = schemathesis.openapi.from_wsgi(SCHEMA_PATH, app)
        pools = id_pools()
        operations = [result.ok() for result in schema.get_all_operations()]
        for operation in operations:
            # Each operation starts from the same seeded shop: its writes are rolled back.
            with transaction.atomic():
                for role, mode in EXAMPLES:
                    _fuzz_operation(
                        operation, role, mode, role_tokens[role], pools, counts, failures
                    )
                transaction.set_rollback(True)
    with capsys.disabled():
        print("\n" + _status_table(counts))
    assert not failures, f"{len(failures)} non-conforming answers; first:\n" + "\n".join(
        failures[:5]
    )
    total = sum(sum(c.values()) for c in counts.values())
    assert total >= MIN_REQUESTS
    never_ok = [label for label, c in counts.items() if not any(200 <= code < 300 for code in c)]
    assert not never_ok, f"these operations never answered 2xx: {never_ok}"
    assert len(counts) == len(operations)
