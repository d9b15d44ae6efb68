"""API tokens: shown once at sign-in, expire after TOKEN_TTL_HOURS, revocable by owner and lead."""

from __future__ import annotations

from datetime import timedelta

import pytest
from django.utils import timezone
from django.utils.dateparse import parse_datetime
from rest_framework.authtoken.models import Token

from .conftest import sign_in, token_client

JOBS = "/api/jobs/"


def age_token(user, hours: float) -> None:
    Token.objects.filter(user=user).update(created=timezone.now() - timedelta(hours=hours))


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
    assert not Token.objects.filter(user=staff["technician"]).exists()


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
