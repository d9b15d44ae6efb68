"""Security fixtures: a fresh throttle cache per test and staff who sign in with passwords."""

from __future__ import annotations

import pytest
from django.core.cache import cache
from rest_framework.test import APIClient

PASSWORD = "not-a-real-pw-1"  # the password tests/conftest.py gives every staff member


@pytest.fixture(autouse=True)
def _fresh_throttle_counts():
    """Throttle counts live in the cache, which outlives a test's database transaction."""
    cache.clear()
    yield
    cache.clear()


@pytest.fixture
def anonymous() -> APIClient:
    return APIClient()


def sign_in(client: APIClient, username: str, password: str = PASSWORD):
    return client.post(
        "/api/auth/token/", {"username": username, "password": password}, format="json"
    )


def token_client(key: str) -> APIClient:
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    return client
