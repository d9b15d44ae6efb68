"""Limits every app process shares: throttle counts in the database cache, the admin sign-in
page limited per address, and a user name locked out across addresses."""

from __future__ import annotations

from django.contrib.auth.models import AnonymousUser
from django.core.cache.backends.db import DatabaseCache
from django.db import connection
from django.test import Client, RequestFactory
from rest_framework.test import APIClient

from shop.core.signin import TokenThrottle
from shop.settings import base

from .conftest import PASSWORD, sign_in
from .test_throttling import assert_throttled, rates  # noqa: F401 (fixture)


def test_the_default_cache_is_the_database_table_that_migrate_creates(db):
    assert base.CACHES["default"]["BACKEND"] == "django.core.cache.backends.db.DatabaseCache"
    assert base.CACHE_TABLE in connection.introspection.table_names()


def test_two_workers_with_their_own_cache_clients_share_one_token_limit(db, rates):  # noqa: F811
    rates(token="10/minute")
    # Two cache clients, as two app processes would each build from the same settings.
    workers = [DatabaseCache(base.CACHE_TABLE, {}) for _ in range(2)]
    assert workers[0] is not workers[1]
    request = RequestFactory().post("/api/auth/token/", REMOTE_ADDR="203.0.113.9")
    request.user = AnonymousUser()
    allowed = 0
    for n in range(40):
        throttle = TokenThrottle()
        throttle.cache = workers[n % 2]
        allowed += throttle.allow_request(request, None)
    assert allowed == 10


def test_the_admin_sign_in_page_is_limited_per_address(db, rates):  # noqa: F811
    rates(login="2/minute")
    browser = Client()
    for _ in range(2):
        page = browser.post("/admin/login/", {"username": "x", "password": "y"})
        assert page.status_code == 200
    assert_throttled(browser.post("/admin/login/", {"username": "x", "password": "y"}))
    assert browser.get("/admin/login/").status_code == 200  # reading the form is not limited


def fail_from(address: str, username: str, times: int) -> list[int]:
    client = APIClient(REMOTE_ADDR=address)
    return [sign_in(client, username, "wrong-password").status_code for _ in range(times)]


def test_a_user_name_is_locked_out_across_addresses(staff, settings):
    settings.LOGIN_USERNAME_FAILURE_LIMIT = 6
    # Three failures from each of two addresses, under the per-address limit of five at each:
    # the sixth reaches the user name's limit and is answered with the lockout.
    assert fail_from("203.0.113.1", "tech_theo", 3) == [400] * 3
    assert fail_from("203.0.113.2", "tech_theo", 3) == [400, 400, 429]
    fresh_address = APIClient(REMOTE_ADDR="203.0.113.3")
    response = sign_in(fresh_address, "tech_theo", PASSWORD)
    assert response.status_code == 429, response.content
    assert response.json()["error"]["code"] == "locked_out"
    # Another user name at the same addresses is not locked out.
    assert sign_in(fresh_address, "desk_dana", PASSWORD).status_code == 200


def test_under_the_user_name_limit_a_new_address_signs_in(staff, settings):
    settings.LOGIN_USERNAME_FAILURE_LIMIT = 7
    fail_from("203.0.113.1", "tech_theo", 3)
    fail_from("203.0.113.2", "tech_theo", 3)
    assert sign_in(APIClient(REMOTE_ADDR="203.0.113.3"), "tech_theo", PASSWORD).status_code == 200
