"""The demo shop loads through the services: staff in every role and jobs in every state."""

from __future__ import annotations

from io import StringIO

from django.contrib.auth.models import User
from django.core.management import call_command

from shop.bench.models import PowerUpTest, Verdict
from shop.core.roles import ROLES
from shop.intake.models import Customer, Job, JobState, RepairStep, Unit


def test_demo_shop_loads_every_state_and_role(db):
    out = StringIO()
    call_command("demo_load", stdout=out)
    assert (Customer.objects.count(), Unit.objects.count(), Job.objects.count()) == (8, 12, 12)
    assert set(Job.objects.values_list("state", flat=True)) == set(JobState.values)
    assert RepairStep.objects.count() >= 12
    for role in ROLES:
        assert User.objects.filter(groups__name=role).exists()
    assert User.objects.filter(groups__name="technician").count() == 3
    assert "password" in out.getvalue()
    assert Unit.objects.filter(construction="transformerless").exists()


def test_demo_bench_has_closed_tests_in_every_outcome(db):
    call_command("demo_load", stdout=StringIO())
    assert PowerUpTest.objects.filter(status="closed").count() == 9
    assert set(Verdict.objects.values_list("outcome", flat=True)) == {
        "pass",
        "marginal",
        "fail",
        "inconclusive",
    }


def test_loading_twice_adds_nothing(db):
    call_command("demo_load", stdout=StringIO())
    call_command("demo_load", stdout=StringIO())
    assert Job.objects.count() == 12


def test_demo_valve_radio_and_switch_mode_unit_are_judged_through_their_own_models(db):
    import json

    from reports.models import Certificate
    from shop.bench.declared_load import physics_load

    call_command("demo_load", stdout=StringIO())
    radio = PowerUpTest.objects.get(job__unit__model_name="Console 7")
    adapter = PowerUpTest.objects.get(job__unit__construction="switch_mode")
    assert radio.declared_load["kind"] == adapter.declared_load["kind"] == "nameplate"
    assert "rectifier" in physics_load(radio.declared_load).describe()["summary"]
    assert radio.verdict.outcome == adapter.verdict.outcome == "pass"
    sample = json.loads(Certificate.objects.get(job=radio.job).snapshot)
    assert "rectifier" in sample["tests"][0]["declared_load"]["summary"]
    assert sample["tests"][0]["declared_load"]["assumptions"]


def test_demo_amplifiers_are_judged_through_their_nameplate_models_with_output_loaded(db):
    from shop.bench.declared_load import physics_load

    call_command("demo_load", stdout=StringIO())
    valve = PowerUpTest.objects.get(job__unit__model_name="Wren 18 monoblock")
    solid = PowerUpTest.objects.get(job__unit__model_name="MP-400 integrated amplifier")
    for test in (valve, solid):
        assert test.declared_load["kind"] == "nameplate"
        assert test.declared_load["configuration"]["dummy_load_on_output"] is True
        described = physics_load(test.declared_load).describe()
        assert "Dummy load on the output" in " ".join(described["assumptions"])
    assert "heater" in physics_load(valve.declared_load).describe()["summary"]
    assert "heater" not in physics_load(solid.declared_load).describe()["summary"]
    # The monoblock draws 1.45x its model (fixtures/demo/bench.json): more than a healthy unit,
    # short of a fault; the solid-state amplifier is healthy.
    assert (valve.verdict.outcome, solid.verdict.outcome) == ("marginal", "pass")


def test_demo_guitar_amplifier_with_valves_pulled_is_modelled_so_and_fails(db):
    from shop.bench.declared_load import physics_load

    call_command("demo_load", stdout=StringIO())
    guitar = PowerUpTest.objects.get(job__unit__model_name="Roost 30")
    assert guitar.declared_load["configuration"]["valves_pulled"] is True
    assumptions = " ".join(physics_load(guitar.declared_load).describe()["assumptions"])
    assert "pulled" in assumptions
    # It draws three times its model (fixtures/demo/bench.json): a fault.
    assert guitar.verdict.outcome == "fail"
