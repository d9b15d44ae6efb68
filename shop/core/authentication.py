"""API tokens kept as hashes; they expire, and revocation or a new password ends them."""

from __future__ import annotations

import hashlib
import secrets
from datetime import datetime, timedelta
from functools import cache

from django.conf import settings
from django.contrib.auth import get_user_model
from django.contrib.auth.signals import user_logged_in
from django.contrib.sessions.models import Session
from django.db import transaction
from django.utils import timezone
from django.utils.crypto import constant_time_compare
from rest_framework import exceptions
from rest_framework.authentication import TokenAuthentication

from .audit import audit_record
from .models import ApiToken
from .roles import remember_roles, role_annotations

# 160 random bits, written as 40 hex digits (the length scripts already expect).
KEY_BYTES = 20
# A token dated later than this ahead of the clock was not issued by this server.
CLOCK_SKEW = timedelta(minutes=5)


def token_key_sha256(key: str) -> str:
    """What the database keeps of a token key: its SHA-256, in hex."""
    return hashlib.sha256(key.encode("utf-8", "surrogatepass")).hexdigest()


def token_expires_at(token: ApiToken) -> datetime:
    """When a token stops working: TOKEN_TTL_HOURS after it was issued."""
    return token.created + timedelta(hours=settings.TOKEN_TTL_HOURS)


@cache
def _tokens_with_roles():
    """Tokens with their users and the users' roles, built once: composing the role
    subqueries costs more than running them, so each request only filters this."""
    return ApiToken.objects.select_related("user").annotate(**role_annotations("user"))


class ExpiringTokenAuthentication(TokenAuthentication):
    """Token authentication by the key's SHA-256; refuses expired, future-dated and stale tokens.

    A token is stale once its owner's password changed after it was issued. The token, its
    user and the user's roles come in one query.
    """

    def authenticate_credentials(self, key):
        token = _tokens_with_roles().filter(key_sha256=token_key_sha256(key)).first()
        if token is None:
            raise exceptions.AuthenticationFailed("Invalid token.")
        user = token.user
        if not user.is_active:
            raise exceptions.AuthenticationFailed("User inactive or deleted.")
        now = timezone.now()
        if token.created > now + CLOCK_SKEW:
            raise exceptions.AuthenticationFailed(
                "This token is dated in the future, so this server did not issue it. Sign in "
                "again at /api/auth/token/ for a new one.",
                code="token_invalid",
            )
        expired_at = token_expires_at(token)
        if expired_at <= now:
            raise exceptions.AuthenticationFailed(
                f"This token expired at {expired_at:%Y-%m-%d %H:%M} UTC. Sign in again at "
                "/api/auth/token/ for a new one.",
                code="token_expired",
            )
        stamps = [user.get_session_auth_hash(), *user.get_session_auth_fallback_hash()]
        if not any(constant_time_compare(token.password_stamp, stamp) for stamp in stamps):
            raise exceptions.AuthenticationFailed(
                "The password changed after this token was issued. Sign in again at "
                "/api/auth/token/ for a new one.",
                code="token_expired",
            )
        remember_roles(user, token)
        return user, token


def token_create(*, user) -> tuple[ApiToken, str]:
    """Store a new token of `user` (its hash only) and return it with its key.

    The key exists only in the return value: hand it to the caller once and forget it.
    """
    key = secrets.token_hex(KEY_BYTES)
    token = ApiToken.objects.create(
        user=user,
        key_sha256=token_key_sha256(key),
        password_stamp=user.get_session_auth_hash(),
    )
    return token, key


def token_issue(*, user, request) -> tuple[ApiToken, str]:
    """Replace the user's token with a new one, whose key only this caller ever sees.

    One token per user: signing in again ends the previous token, so a key is never shown
    twice. The sign-in is recorded like a session sign-in (last login, lockout counter reset).
    """
    with transaction.atomic():
        # Lock the user row so that two sign-ins at once cannot both create a token.
        get_user_model().objects.select_for_update().filter(pk=user.pk).exists()
        ApiToken.objects.filter(user=user).delete()
        token, key = token_create(user=user)
    user_logged_in.send(sender=user.__class__, request=request, user=user)
    return token, key


def sessions_end(*, user) -> int:
    """Delete every unexpired browser session signed in as `user`; return how many.

    Sessions are stored encoded, so each live one is decoded; a small shop has few.
    """
    ended = [
        session.pk
        for session in Session.objects.filter(expire_date__gt=timezone.now()).iterator()
        if str(session.get_decoded().get("_auth_user_id")) == str(user.pk)
    ]
    Session.objects.filter(pk__in=ended).delete()
    return len(ended)


def token_revoke(*, user, actor) -> int:
    """End every API token and browser session of `user` (recorded as done by `actor`).

    Returns how many tokens ended.
    """
    with transaction.atomic():
        revoked, _ = ApiToken.objects.filter(user=user).delete()
        sessions = sessions_end(user=user)
        audit_record(
            actor=actor,
            action="token.revoke",
            instance=user,
            changes={"revoked": revoked, "sessions_ended": sessions},
        )
    return revoked
