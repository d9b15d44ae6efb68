"""API tokens that expire after TOKEN_TTL_HOURS and can be revoked."""

from __future__ import annotations

from datetime import datetime, timedelta
from functools import cache

from django.conf import settings
from django.contrib.auth import get_user_model
from django.contrib.auth.signals import user_logged_in
from django.db import transaction
from django.utils import timezone
from rest_framework import exceptions
from rest_framework.authentication import TokenAuthentication

from .audit import audit_record
from .roles import remember_roles, role_annotations

# DRF loads this module while the apps are still loading (through the authentication setting),
# so the Token model is imported inside the functions, as DRF's own TokenAuthentication does.


def token_expires_at(token) -> datetime:
    """When a token stops working: TOKEN_TTL_HOURS after it was issued."""
    return token.created + timedelta(hours=settings.TOKEN_TTL_HOURS)


@cache
def _tokens_with_roles(model):
    """Tokens with their users and the users' roles, built once: composing the role
    subqueries costs more than running them, so each request only filters this."""
    return model.objects.select_related("user").annotate(**role_annotations("user"))


class ExpiringTokenAuthentication(TokenAuthentication):
    """Token authentication that refuses a token older than TOKEN_TTL_HOURS.

    The token, its user and the user's roles come in one query.
    """

    def authenticate_credentials(self, key):
        model = self.get_model()
        try:
            token = _tokens_with_roles(model).get(key=key)
        except model.DoesNotExist:
            raise exceptions.AuthenticationFailed("Invalid token.") from None
        if not token.user.is_active:
            raise exceptions.AuthenticationFailed("User inactive or deleted.")
        user = token.user
        remember_roles(user, token)
        expired_at = token_expires_at(token)
        if expired_at <= timezone.now():
            raise exceptions.AuthenticationFailed(
                f"This token expired at {expired_at:%Y-%m-%d %H:%M} UTC. Sign in again at "
                "/api/auth/token/ for a new one.",
                code="token_expired",
            )
        return user, token


def token_issue(*, user, request):
    """Replace the user's token with a new one, whose key only this caller ever sees.

    One token per user: signing in again ends the previous token, so a key is never shown
    twice. The sign-in is recorded like a session sign-in (last login, lockout counter reset).
    """
    from rest_framework.authtoken.models import Token

    with transaction.atomic():
        # Lock the user row so that two sign-ins at once cannot both create a token.
        get_user_model().objects.select_for_update().filter(pk=user.pk).exists()
        Token.objects.filter(user=user).delete()
        token = Token.objects.create(user=user)
    user_logged_in.send(sender=user.__class__, request=request, user=user)
    return token


def token_revoke(*, user, actor) -> int:
    """End every API token of `user` (recorded as done by `actor`); return how many."""
    from rest_framework.authtoken.models import Token

    with transaction.atomic():
        revoked, _ = Token.objects.filter(user=user).delete()
        audit_record(
            actor=actor, action="token.revoke", instance=user, changes={"revoked": revoked}
        )
    return revoked
