"""Sign-in protection: per-address limits on anonymous endpoints and the lockout answer."""

from __future__ import annotations

from django.conf import settings
from django.core.exceptions import ImproperlyConfigured
from django.http import JsonResponse
from django.utils import timezone
from rest_framework import status
from rest_framework.settings import api_settings
from rest_framework.throttling import AnonRateThrottle, BaseThrottle

from .errors import ApplicationError, error_body


class LockedOut(ApplicationError):
    """Too many failed sign-ins for this user name from this address (HTTP 429)."""

    status_code = status.HTTP_429_TOO_MANY_REQUESTS
    code = "locked_out"


class SettingsRateThrottle(AnonRateThrottle):
    """Per-address limit for anonymous callers, its rate read from the settings at each request.

    DRF's own throttles read the rates once, at import; reading them live lets a deployment
    (or a test) change a rate through the settings alone.
    """

    def get_rate(self):
        try:
            return api_settings.DEFAULT_THROTTLE_RATES[self.scope]
        except KeyError as exc:
            raise ImproperlyConfigured(
                f"Set REST_FRAMEWORK['DEFAULT_THROTTLE_RATES']['{self.scope}']."
            ) from exc


class TokenThrottle(SettingsRateThrottle):
    """Limits password guessing at the token endpoint."""

    scope = "token"


class LoginThrottle(SettingsRateThrottle):
    """Limits password guessing at the browser sign-in page."""

    scope = "login"


def client_address(request) -> str:
    """The caller's address as the throttles see it (REST_FRAMEWORK NUM_PROXIES decides).

    django-axes uses it too (AXES_CLIENT_IP_CALLABLE), so lockout and throttles agree.
    """
    return BaseThrottle().get_ident(request)


def lockout_error(request) -> LockedOut:
    """The refusal of a locked-out sign-in, saying when to try again.

    django-axes counts every refused attempt as one more failure at `axes_attempt_time`, which
    restarts the cool-off: the wait ends one cool-off after this attempt.
    """
    attempted = getattr(request, "axes_attempt_time", None) or timezone.now()
    retry_at = attempted + settings.AXES_COOLOFF_TIME
    seconds = max(1, round((retry_at - timezone.now()).total_seconds()))
    return LockedOut(
        f"Too many failed sign-ins. Try again after {retry_at:%H:%M} UTC "
        f"(in {max(1, round(seconds / 60))} min); each further failed attempt restarts the wait. "
        "A shop lead can lift the lock sooner.",
        extra={"retry_after": seconds, "retry_at": retry_at.isoformat()},
    )


def lockout_response(request, original_response=None, credentials=None) -> JsonResponse:
    """The lockout in the single error shape with Retry-After (django-axes LOCKOUT_CALLABLE)."""
    error = lockout_error(request)
    response = JsonResponse(
        error_body(error.code, error.message, **error.extra), status=error.status_code
    )
    response["Retry-After"] = str(error.extra["retry_after"])
    return response
