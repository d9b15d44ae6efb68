"""Sign-in protection: per-address limits on anonymous endpoints and the lockout answer."""

from __future__ import annotations

from axes.handlers.database import AxesDatabaseHandler
from axes.helpers import get_client_username, get_failure_limit
from axes.models import AccessAttempt
from django.conf import settings
from django.core.exceptions import ImproperlyConfigured
from django.db.models import Sum
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


class ShopLockoutHandler(AxesDatabaseHandler):
    """django-axes' database handler plus a lockout of a user name across all addresses.

    Axes counts failures per (user name, address) against AXES_FAILURE_LIMIT. Here a user name
    whose failures from all addresses together reach LOGIN_USERNAME_FAILURE_LIMIT within the
    cool-off counts as having reached the limit at every address.
    """

    def get_failures(self, request, credentials=None) -> int:
        failures = super().get_failures(request, credentials)
        username = get_client_username(request, credentials)
        if username is None:
            return failures
        since = timezone.now() - settings.AXES_COOLOFF_TIME
        everywhere = (
            AccessAttempt.objects.filter(username=username, attempt_time__gte=since).aggregate(
                total=Sum("failures_since_start")
            )["total"]
            or 0
        )
        if everywhere >= settings.LOGIN_USERNAME_FAILURE_LIMIT:
            return max(failures, get_failure_limit(request, credentials))
        return failures
