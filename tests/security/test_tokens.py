"""API tokens: shown once at sign-in, expire after TOKEN_TTL_HOURS, revocable by owner and lead."""

from __future__ import annotations

import hashlib
import importlib
from datetime import UTC, datetime, timedelta
from types import SimpleNamespace

import pytest
from django.apps import apps as django_apps
from django.contrib.auth.models import User
from django.db import connection
from django.test import Client
from django.utils import timezone
from django.utils.dateparse import parse_datetime

from shop.core.authentication import token_create
from shop.core.models import ApiToken

from .conftest import PASSWORD, sign_in, token_client

JOBS = "/api/jobs/"
TOKEN_MIGRATION = importlib.import_module("shop.core.migrations.0003_api_token_hashed")


def age_token(user, hours: float) -> None:
    ApiToken.objects.filter(user=user).update(created=timezone.now() - timedelta(hours=hours))


def test_a_token_is_issued_with_its_expiry_and_opens_the_api(anonymous, staff):
    before = timezone.now()
    response = sign_in(anonymous, "tech_theo")
    assert response.status_code == 200, response.content
    body = response.json()
    assert set(body) == {"token", "expires_at"}
    expires_at = parse_datetime(body["expires_at"])
    assert before + timedelta(hours=12) <= expires_at <= timezone.now() + timedelta(hours=12)
    assert token_client(body["token"]).get(JOBS).status_code == 200


def test_a_token_sign_in_records_the_last_login(anonymous, staff):
    assert staff["technician"].last_login is None
    sign_in(anonymous, "tech_theo")
    staff["technician"].refresh_from_db()
    assert staff["technician"].last_login is not None


def test_signing_in_again_ends_the_previous_token(anonymous, staff):
    first = sign_in(anonymous, "tech_theo").json()["token"]
    second = sign_in(anonymous, "tech_theo").json()["token"]
    assert first != second
    assert token_client(first).get(JOBS).status_code == 401
    assert token_client(second).get(JOBS).status_code == 200


def test_a_wrong_password_gets_no_token_and_the_error_shape(anonymous, staff):
    response = sign_in(anonymous, "tech_theo", "wrong-password")
    assert response.status_code == 400
    assert response.json()["error"]["code"] == "invalid"
    assert not ApiToken.objects.filter(user=staff["technician"]).exists()


def test_an_expired_token_is_refused_with_401_and_the_error_shape(anonymous, staff):
    key = sign_in(anonymous, "tech_theo").json()["token"]
    age_token(staff["technician"], 12.01)
    response = token_client(key).get(JOBS)
    assert response.status_code == 401
    assert response["WWW-Authenticate"] == "Token"
    error = response.json()["error"]
    assert error["code"] == "token_expired"
    assert "/api/auth/token/" in error["message"]


@pytest.mark.parametrize(("ttl_hours", "age_hours", "status"), [(1, 0.9, 200), (1, 1.1, 401)])
def test_the_token_lifetime_follows_the_setting(
    anonymous, staff, settings, ttl_hours, age_hours, status
):
    settings.TOKEN_TTL_HOURS = ttl_hours
    key = sign_in(anonymous, "tech_theo").json()["token"]
    age_token(staff["technician"], age_hours)
    assert token_client(key).get(JOBS).status_code == status


def test_the_owner_revokes_their_own_token(anonymous, staff):
    key = sign_in(anonymous, "tech_theo").json()["token"]
    client = token_client(key)
    response = client.post("/api/auth/token/revoke/")
    assert response.status_code == 200
    assert response.json() == {"revoked": 1}
    after = client.get(JOBS)
    assert after.status_code == 401
    assert after.json()["error"]["code"] == "authentication_failed"


def test_revoking_needs_a_signed_in_caller(anonymous):
    response = anonymous.post("/api/auth/token/revoke/")
    assert response.status_code == 401
    assert response.json()["error"]["code"] == "not_authenticated"


def test_a_lead_revokes_another_users_token(anonymous, staff, client_for):
    key = sign_in(anonymous, "tech_theo").json()["token"]
    response = client_for("lead").post(f"/api/auth/users/{staff['technician'].pk}/token/revoke/")
    assert response.status_code == 200
    assert response.json() == {"revoked": 1}
    assert key not in response.content.decode()
    assert token_client(key).get(JOBS).status_code == 401


@pytest.mark.parametrize("role", ["front_desk", "technician", "nobody"])
def test_only_a_lead_may_revoke_another_users_token(anonymous, staff, client_for, role):
    key = sign_in(anonymous, "lead_lena").json()["token"]
    response = client_for(role).post(f"/api/auth/users/{staff['lead'].pk}/token/revoke/")
    assert response.status_code == 403
    assert response.json()["error"]["code"] == "permission_denied"
    assert token_client(key).get(JOBS).status_code == 200


def test_revoking_the_tokens_of_an_unknown_user_is_a_404(client_for):
    response = client_for("lead").post("/api/auth/users/987654/token/revoke/")
    assert response.status_code == 404
    assert response.json()["error"]["code"] == "not_found"


def test_a_token_key_is_stored_only_as_its_sha256(anonymous, staff):
    key = sign_in(anonymous, "tech_theo").json()["token"]
    row = ApiToken.objects.get(user=staff["technician"])
    assert row.key_sha256 == hashlib.sha256(key.encode()).hexdigest()
    stored = " ".join(str(value) for value in ApiToken.objects.values_list().get())
    assert key not in stored


def test_a_stored_hash_used_as_a_key_is_refused(anonymous, staff):
    sign_in(anonymous, "tech_theo")
    stored = ApiToken.objects.get(user=staff["technician"]).key_sha256
    assert token_client(stored).get(JOBS).status_code == 401


def test_a_token_dated_in_the_future_is_refused(staff):
    token, key = token_create(user=staff["technician"])
    ApiToken.objects.filter(pk=token.pk).update(created=datetime(2099, 1, 1, tzinfo=UTC))
    response = token_client(key).get(JOBS)
    assert response.status_code == 401
    assert "future" in response.json()["error"]["message"]


def test_upgrading_hashes_the_plain_text_keys_of_the_former_token_table(staff):
    key = "0123456789abcdef0123456789abcdef01234567"
    with connection.cursor() as cursor:
        cursor.execute(
            "CREATE TABLE authtoken_token (key varchar(40) PRIMARY KEY, created timestamp "
            "with time zone NOT NULL, user_id bigint NOT NULL)"
        )
        cursor.execute(
            "INSERT INTO authtoken_token (key, created, user_id) VALUES (%s, %s, %s)",
            [key, timezone.now(), staff["technician"].pk],
        )
    # The step reads only these two of a schema editor (SQLite opens no real one mid-test).
    editor = SimpleNamespace(connection=connection, quote_name=connection.ops.quote_name)
    TOKEN_MIGRATION.hash_plain_text_keys(django_apps, editor)
    with connection.cursor() as cursor:
        cursor.execute("SELECT count(*) FROM authtoken_token")
        assert cursor.fetchone() == (0,)
    assert token_client(key).get(JOBS).status_code == 200
    assert key not in str(list(ApiToken.objects.values_list()))


def session_client(username: str) -> Client:
    browser = Client()
    response = browser.post("/api/auth/login/", {"username": username, "password": PASSWORD})
    assert response.status_code == 302, response.content
    assert browser.get(JOBS).status_code == 200
    return browser


def test_a_lead_revoking_a_users_keys_ends_their_browser_sessions_too(staff, client_for):
    browser = session_client("tech_theo")
    colleague = session_client("desk_dana")
    response = client_for("lead").post(f"/api/auth/users/{staff['technician'].pk}/token/revoke/")
    assert response.status_code == 200
    assert browser.get(JOBS).status_code in (401, 403)
    assert colleague.get(JOBS).status_code == 200


def test_revoking_ones_own_keys_signs_out_every_browser_too(anonymous, staff):
    browser = session_client("tech_theo")
    key = sign_in(anonymous, "tech_theo").json()["token"]
    assert token_client(key).post("/api/auth/token/revoke/").json() == {"revoked": 1}
    assert browser.get(JOBS).status_code in (401, 403)


def test_a_password_change_ends_the_users_api_tokens_and_sessions(anonymous, staff):
    browser = session_client("tech_theo")
    key = sign_in(anonymous, "tech_theo").json()["token"]
    technician = User.objects.get(pk=staff["technician"].pk)
    technician.set_password("a-new-pw-after-a-leak-7")
    technician.save()
    response = token_client(key).get(JOBS)
    assert response.status_code == 401
    assert "password changed" in response.json()["error"]["message"]
    assert browser.get(JOBS).status_code in (401, 403)
    fresh = sign_in(anonymous, "tech_theo", "a-new-pw-after-a-leak-7").json()["token"]
    assert token_client(fresh).get(JOBS).status_code == 200
