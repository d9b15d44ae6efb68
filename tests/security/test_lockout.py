"""Sign-in lockout (django-axes): token endpoint, browser sign-in page and admin alike."""

from __future__ import annotations

from datetime import timedelta

import pytest
from axes.models import AccessAttempt
from django.test import Client
from django.utils import timezone

from .conftest import PASSWORD, sign_in

LIMIT = 5  # AXES_FAILURE_LIMIT's default in shop/settings/base.py
COOL_OFF_SECONDS = 15 * 60  # AXES_COOLOFF_TIME's default


def fail_token_sign_ins(client, username: str, times: int) -> list[int]:
    return [sign_in(client, username, "wrong-password").status_code for _ in range(times)]


def assert_locked_out(response) -> None:
    assert response.status_code == 429, response.content
    error = response.json()["error"]
    assert error["code"] == "locked_out"
    assert "Try again after" in error["message"]
    # The refused attempt restarts the cool-off, so the wait is one whole cool-off.
    assert COOL_OFF_SECONDS - 5 <= error["retry_after"] <= COOL_OFF_SECONDS
    assert int(response["Retry-After"]) == error["retry_after"]


def test_the_token_endpoint_locks_a_user_name_out_at_the_failure_limit(anonymous, staff):
    assert fail_token_sign_ins(anonymous, "tech_theo", LIMIT - 1) == [400] * (LIMIT - 1)
    assert_locked_out(sign_in(anonymous, "tech_theo", "wrong-password"))


def test_a_locked_out_user_gets_no_token_even_with_the_right_password(anonymous, staff):
    fail_token_sign_ins(anonymous, "tech_theo", LIMIT)
    response = sign_in(anonymous, "tech_theo", PASSWORD)
    assert_locked_out(response)
    assert "token" not in response.json()


def test_the_lock_lifts_after_the_cool_off(anonymous, staff):
    fail_token_sign_ins(anonymous, "tech_theo", LIMIT)
    AccessAttempt.objects.update(
        attempt_time=timezone.now() - timedelta(seconds=COOL_OFF_SECONDS + 1)
    )
    assert sign_in(anonymous, "tech_theo", PASSWORD).status_code == 200


def test_a_successful_sign_in_resets_the_failure_count(anonymous, staff):
    fail_token_sign_ins(anonymous, "tech_theo", LIMIT - 1)
    assert sign_in(anonymous, "tech_theo", PASSWORD).status_code == 200
    assert fail_token_sign_ins(anonymous, "tech_theo", LIMIT - 1) == [400] * (LIMIT - 1)


def test_one_locked_user_name_does_not_lock_out_a_colleague_at_the_same_address(anonymous, staff):
    fail_token_sign_ins(anonymous, "tech_theo", LIMIT)
    assert sign_in(anonymous, "desk_dana", PASSWORD).status_code == 200


def test_the_failure_limit_follows_the_setting(anonymous, staff, settings):
    settings.AXES_FAILURE_LIMIT = 2
    assert fail_token_sign_ins(anonymous, "tech_theo", 1) == [400]
    assert_locked_out(sign_in(anonymous, "tech_theo", "wrong-password"))


@pytest.mark.parametrize("login_path", ["/api/auth/login/", "/admin/login/"])
def test_browser_sign_in_pages_lock_out_too(staff, login_path):
    browser = Client()
    for _ in range(LIMIT - 1):
        page = browser.post(login_path, {"username": "lead_lena", "password": "wrong-password"})
        assert page.status_code == 200  # the form again, with its error
    assert_locked_out(
        browser.post(login_path, {"username": "lead_lena", "password": "wrong-password"})
    )
    assert_locked_out(browser.post(login_path, {"username": "lead_lena", "password": PASSWORD}))
    assert "_auth_user_id" not in browser.session


def test_failures_on_the_browser_page_count_against_the_token_endpoint(anonymous, staff):
    browser = Client()
    for _ in range(LIMIT):
        browser.post("/api/auth/login/", {"username": "tech_theo", "password": "wrong-password"})
    assert_locked_out(sign_in(anonymous, "tech_theo", PASSWORD))


def test_no_password_is_kept_in_the_failure_records(anonymous, staff):
    browser = Client()
    browser.post("/api/auth/login/", {"username": "tech_theo", "password": "hunter2-guess"})
    sign_in(anonymous, "tech_theo", "another-guess")
    stored = " ".join(f"{a.get_data} {a.post_data}" for a in AccessAttempt.objects.all())
    assert AccessAttempt.objects.exists()
    assert "hunter2-guess" not in stored
    assert "another-guess" not in stored
