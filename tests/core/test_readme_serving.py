"""The README's serving command gives a big close the time it needs."""

import re
from pathlib import Path

README = Path(__file__).resolve().parents[2] / "README.md"
GUNICORN_DEFAULT_TIMEOUT = 30  # [s], gunicorn's documented default for --timeout


def test_the_gunicorn_command_sets_a_timeout_longer_than_gunicorns_default():
    commands = [line for line in README.read_text().splitlines() if "bin/gunicorn " in line]
    assert commands, "the README shows how to serve the shop with gunicorn"
    for command in commands:
        timeout = re.search(r"--timeout[ =](\d+)", command)
        assert timeout, command
        assert int(timeout.group(1)) >= 4 * GUNICORN_DEFAULT_TIMEOUT, command
