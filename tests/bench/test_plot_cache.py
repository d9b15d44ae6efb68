"""The readings plot is drawn once per set of inputs; any edit that changes them redraws it."""

from __future__ import annotations

import pytest
from django.core.cache import cache

from shop.bench import judging, services


@pytest.fixture(autouse=True)
def _empty_cache():
    """Another test's plot of the same inputs (ids repeat after a rollback) is not drawn here."""
    cache.clear()


@pytest.fixture
def judged(monkeypatch):
    """Counts the judgements the plot asks for."""
    calls = []
    judge = judging.judge_inputs

    def counting(inputs):
        calls.append(len(inputs["readings"]))
        return judge(inputs)

    monkeypatch.setattr(judging, "judge_inputs", counting)
    return calls


def add(client, test, *volts):
    body = {
        "readings": [
            {"source_voltage": v, "load_voltage": 0.8 * v, "glow_seen": "dark"} for v in volts
        ]
    }
    response = client.post(f"/api/powerups/{test.pk}/readings/", body, format="json")
    assert response.status_code == 201, response.content


def plot(client, test) -> bytes:
    response = client.get(f"/api/powerups/{test.pk}/plot.svg")
    assert response.status_code == 200
    return response.content


def test_an_open_tests_plot_is_judged_once_per_reading_set(open_test, client_for, judged):
    client = client_for("technician")
    add(client, open_test, 20.0, 40.0)
    first = plot(client, open_test)
    assert plot(client, open_test) == first
    assert judged == [2]
    add(client, open_test, 60.0)
    third = plot(client, open_test)
    assert judged == [2, 3]
    assert third != first


def test_editing_the_rig_redraws_the_plot(open_test, client_for, judged, staff):
    client = client_for("technician")
    add(client, open_test, 20.0, 40.0)
    before = plot(client, open_test)
    rig = open_test.rig
    services.rig_update(
        rig=rig, expected_version=rig.version, actor=staff["lead"], internal_resistance=6
    )
    after = plot(client, open_test)
    assert judged == [2, 2]
    assert after != before


def test_closing_the_test_draws_from_its_stored_verdict(open_test, client_for, judged):
    client = client_for("technician")
    add(client, open_test, 20.0, 40.0)
    plot(client, open_test)
    response = client.post(f"/api/powerups/{open_test.pk}/close/", {}, format="json")
    assert response.status_code == 200, response.content
    plot(client, open_test)
    plot(client, open_test)
    # Once for the open plot, once to close; the closed plot reads the stored verdict.
    assert judged == [2, 2]
