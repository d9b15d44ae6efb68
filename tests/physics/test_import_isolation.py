"""shop.physics stands alone: importing it loads neither Django nor colour-science."""

import subprocess
import sys
from pathlib import Path

import shop.physics

ROOT = Path(__file__).resolve().parents[2]
PROBE = (
    "import sys, shop.physics; "
    "print(' '.join(sorted(name for name in sys.modules "
    "if name.split('.')[0] in ('django', 'rest_framework', 'colour'))))"
)


def _modules_loaded_by_importing_shop_physics():
    completed = subprocess.run(
        [sys.executable, "-c", PROBE],
        cwd=ROOT,
        capture_output=True,
        text=True,
        check=True,
        env={"PYTHONPATH": str(ROOT)},
    )
    return completed.stdout.split()


def test_importing_shop_physics_loads_no_django_module():
    assert [
        name
        for name in _modules_loaded_by_importing_shop_physics()
        if name.split(".")[0] in ("django", "rest_framework")
    ] == []


def test_importing_shop_physics_loads_no_colour_science():
    assert [
        name
        for name in _modules_loaded_by_importing_shop_physics()
        if name.split(".")[0] == "colour"
    ] == []


def test_the_probe_sees_modules_it_is_asked_about():
    # Guard against a probe that can never fail: importing Django is seen.
    completed = subprocess.run(
        [sys.executable, "-c", "import django; " + PROBE],
        cwd=ROOT,
        capture_output=True,
        text=True,
        check=True,
        env={"PYTHONPATH": str(ROOT)},
    )
    assert "django" in completed.stdout.split()


def test_shop_physics_answers_every_public_name_of_issue_3():
    for name in (
        "Lamp",
        "LampBank",
        "ResistiveLoad",
        "solve_series",
        "glow_class",
        "glow_colour",
        "Reading",
        "judge",
        "advise_lamp",
        "data_fingerprint",
    ):
        assert hasattr(shop.physics, name), name
    assert set(shop.physics.__all__) <= set(dir(shop.physics))


def test_shop_physics_answers_every_public_name_of_issue_6():
    for name in (
        "TransformerLoad",
        "HeaterLoad",
        "RectifierLoad",
        "ConstantPowerLoad",
        "CompositeLoad",
        "unit_load_from_nameplate",
    ):
        assert hasattr(shop.physics, name), name


def test_the_physics_version_says_predictions_changed_with_the_unit_models():
    # 1.1 added unit models and figures; resistive predictions were unchanged, so minor. 1.2:
    # readings timed during a warm-up are judged against it, and a switch-mode unit of 75 W
    # or less built from its nameplate is a capacitor input. 1.3: the source is read where
    # the reading says (before the rig or at its output), each reading is judged with its own
    # meter, a doubling must leave the healthy band to count, and lamp advice starts near the
    # unit's draw.
    assert shop.physics.PHYSICS_VERSION == "1.3.0"
