"""Per-address limits on the anonymous endpoints: token, browser sign-in and verification."""

from __future__ import annotations

import pytest
from django.test import Client


@pytest.fixture
def rates(settings):
    """Set throttle rates for one test; SettingsRateThrottle reads them at each request."""

    def set_rates(**scopes: str) -> None:
        current = settings.REST_FRAMEWORK["DEFAULT_THROTTLE_RATES"]
        settings.REST_FRAMEWORK = {
            **settings.REST_FRAMEWORK,
            "DEFAULT_THROTTLE_RATES": {**current, **scopes},
        }

    return set_rates


def assert_throttled(response) -> None:
    assert response.status_code == 429, response.content
    assert response.json()["error"]["code"] == "throttled"
    assert int(response["Retry-After"]) >= 1


def post_token(client, **extra):
    # No password: refused before any password check, so the lockout never enters into it.
    return client.post("/api/auth/token/", {"username": "someone"}, format="json", **extra)


def test_the_token_endpoint_is_limited_per_address(anonymous, rates):
    rates(token="3/minute")
    assert [post_token(anonymous).status_code for _ in range(3)] == [400] * 3
    assert_throttled(post_token(anonymous))


def test_the_browser_sign_in_page_is_limited_per_address(db, rates):
    rates(login="2/minute")
    browser = Client()
    for _ in range(2):
        assert (
            browser.post("/api/auth/login/", {"username": "x", "password": "y"}).status_code == 200
        )
    assert_throttled(browser.post("/api/auth/login/", {"username": "x", "password": "y"}))
    assert browser.get("/api/auth/login/").status_code == 200  # reading the form is not limited


def test_the_default_rates_limit_the_token_endpoint_at_ten_a_minute(anonymous):
    assert [post_token(anonymous).status_code for _ in range(10)] == [400] * 10
    assert_throttled(post_token(anonymous))


def test_without_trusted_proxies_a_forged_forwarded_for_header_does_not_escape_the_limit(
    anonymous, rates
):
    rates(token="2/minute")
    codes = [
        post_token(anonymous, HTTP_X_FORWARDED_FOR=f"203.0.113.{n}").status_code for n in range(3)
    ]
    assert codes == [400, 400, 429]


def test_behind_one_trusted_proxy_each_forwarded_caller_has_its_own_limit(anonymous, settings):
    settings.REST_FRAMEWORK = {
        **settings.REST_FRAMEWORK,
        "NUM_PROXIES": 1,
        "DEFAULT_THROTTLE_RATES": {
            **settings.REST_FRAMEWORK["DEFAULT_THROTTLE_RATES"],
            "token": "2/minute",
        },
    }
    first = [post_token(anonymous, HTTP_X_FORWARDED_FOR="203.0.113.7") for _ in range(3)]
    assert [r.status_code for r in first] == [400, 400, 429]
    assert post_token(anonymous, HTTP_X_FORWARDED_FOR="203.0.113.8").status_code == 400


def test_certificate_verification_is_limited_per_address(db, anonymous, settings):
    # VerifyThrottle reads its rate at import: the configured default applies here.
    rate = int(settings.REST_FRAMEWORK["DEFAULT_THROTTLE_RATES"]["verify"].split("/")[0])
    codes = [anonymous.get("/verify/NO-SUCH/?code=x").status_code for _ in range(rate + 1)]
    assert codes[:rate] == [404] * rate
    assert_throttled(anonymous.get("/verify/NO-SUCH/?code=x", HTTP_ACCEPT="application/json"))
