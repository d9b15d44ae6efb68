"""Settings: secrets only from the environment, and a clean deploy check in production."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
CLEAN_ENV = {
    k: v
    for k, v in os.environ.items()
    if k
    not in {
        "DEBUG",
        "SECRET_KEY",
        "RECORD_SIGNING_KEY",
        "DJANGO_SETTINGS_MODULE",
        "ALLOWED_HOSTS",
        "SHOP_PUBLIC_URL",
    }
}
PRODUCTION_SECRET = "a-long-random-production-secret-" + "x7Kq2" * 10
RECORD_KEY = "a-long-random-record-signing-key-" + "p3Wz8" * 10


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
        SECRET_KEY=PRODUCTION_SECRET,
        ALLOWED_HOSTS="bench.example.org",
        SHOP_PUBLIC_URL="https://bench.example.org",
    )
    assert result.returncode != 0
    assert "RECORD_SIGNING_KEY is not set" in result.stderr


@pytest.mark.parametrize("public_url", [None, "   "], ids=["unset", "blank"])
def test_production_refuses_to_start_without_a_public_url(public_url):
    """Without it, certificates would print and QR-code a loopback verification address."""
    extra = {} if public_url is None else {"SHOP_PUBLIC_URL": public_url}
    result = manage(
        "check",
        DJANGO_SETTINGS_MODULE="shop.settings.production",
        SECRET_KEY=PRODUCTION_SECRET,
        RECORD_SIGNING_KEY=RECORD_KEY,
        ALLOWED_HOSTS="bench.example.org",
        **extra,
    )
    assert result.returncode != 0
    assert "SHOP_PUBLIC_URL is not set" in result.stderr


def test_a_fresh_clone_without_var_creates_the_sqlite_folder(tmp_path):
    """var/ is git-ignored: nothing but the settings creates it before `migrate` opens the file."""
    data_dir = tmp_path / "fresh-clone" / "var"
    env = {k: v for k, v in CLEAN_ENV.items() if k != "DATABASE_URL"}
    result = subprocess.run(
        [sys.executable, "manage.py", "migrate", "--no-input"],
        cwd=ROOT,
        env={**env, "DJANGO_SETTINGS_MODULE": "shop.settings.dev", "SHOP_DATA_DIR": str(data_dir)},
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert result.returncode == 0, result.stdout + result.stderr
    assert (data_dir / "shop.sqlite3").is_file()


def test_deploy_check_is_clean_with_production_variables():
    result = manage(
        "check",
        "--deploy",
        "--fail-level",
        "WARNING",
        DJANGO_SETTINGS_MODULE="shop.settings.production",
        SECRET_KEY=PRODUCTION_SECRET,
        RECORD_SIGNING_KEY=RECORD_KEY,
        ALLOWED_HOSTS="bench.example.org",
        SHOP_PUBLIC_URL="https://bench.example.org",
    )
    assert result.returncode == 0, result.stdout + result.stderr
    assert "no issues" in result.stdout


def test_development_settings_start_without_a_secret():
    result = manage("check", DJANGO_SETTINGS_MODULE="shop.settings.dev")
    assert result.returncode == 0, result.stderr
