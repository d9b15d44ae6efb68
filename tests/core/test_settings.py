"""Settings: secrets only from the environment, and a clean deploy check in production."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
CLEAN_ENV = {
    k: v
    for k, v in os.environ.items()
    if k
    not in {"DEBUG", "SECRET_KEY", "RECORD_SIGNING_KEY", "DJANGO_SETTINGS_MODULE", "ALLOWED_HOSTS"}
}


def manage(*args: str, **env: str) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "manage.py", *args],
        cwd=ROOT,
        env={**CLEAN_ENV, **env},
        capture_output=True,
        text=True,
        timeout=120,
    )


def test_production_refuses_to_start_without_a_secret_key():
    result = manage("check", DJANGO_SETTINGS_MODULE="shop.settings.production")
    assert result.returncode != 0
    assert "SECRET_KEY is not set" in result.stderr


def test_production_refuses_to_start_without_a_record_signing_key():
    result = manage(
        "check",
        DJANGO_SETTINGS_MODULE="shop.settings.production",
        SECRET_KEY="a-long-random-production-secret-" + "x7Kq2" * 10,
    )
    assert result.returncode != 0
    assert "RECORD_SIGNING_KEY is not set" in result.stderr


def test_deploy_check_is_clean_with_production_variables():
    result = manage(
        "check",
        "--deploy",
        "--fail-level",
        "WARNING",
        DJANGO_SETTINGS_MODULE="shop.settings.production",
        SECRET_KEY="a-long-random-production-secret-" + "x7Kq2" * 10,
        RECORD_SIGNING_KEY="a-long-random-record-signing-key-" + "p3Wz8" * 10,
        ALLOWED_HOSTS="bench.example.org",
    )
    assert result.returncode == 0, result.stdout + result.stderr
    assert "no issues" in result.stdout


def test_development_settings_start_without_a_secret():
    result = manage("check", DJANGO_SETTINGS_MODULE="shop.settings.dev")
    assert result.returncode == 0, result.stderr
