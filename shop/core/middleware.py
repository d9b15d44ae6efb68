"""Middleware: the Content-Security-Policy header, and a request-size cap read before the body."""

from __future__ import annotations

from django.conf import settings
from django.http import JsonResponse

from .errors import error_body

HEADER = "Content-Security-Policy"


def policy_header(policy: dict[str, list[str]]) -> str:
    """Render {"default-src": ["'self'"], ...} as "default-src 'self'; ..." (the header value)."""
    return "; ".join(" ".join([directive, *sources]) for directive, sources in policy.items())


class ContentSecurityPolicyMiddleware:
    """Adds the CSP header unless a view set its own.

    The setting has the shape of Django 6.0's SECURE_CSP, so an upgrade can hand this job to
    django.middleware.csp.ContentSecurityPolicyMiddleware without touching the policy.
    """

    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        response = self.get_response(request)
        # Read at each response so that a policy changed in the settings applies at once.
        policy = getattr(settings, "SECURE_CSP", None)
        if policy and HEADER not in response:
            response[HEADER] = policy_header(policy)
        return response


class RequestSizeLimitMiddleware:
    """Refuses a request whose declared body exceeds REQUEST_MAX_BYTES with 413, unread.

    Django spools an uploaded file to disk before any view can look at its size; this
    answers from the Content-Length header alone. It must come first in MIDDLEWARE, before
    anything reads the body.
    """

    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        limit = settings.REQUEST_MAX_BYTES
        try:
            declared = int(request.META.get("CONTENT_LENGTH") or 0)
        except ValueError:
            declared = 0  # Django reads no body it cannot measure
        if declared > limit:
            multipart = request.META.get("CONTENT_TYPE", "").startswith("multipart/")
            body = error_body(
                "request_too_large",
                f"The request body is {declared} bytes; at most {limit} are accepted "
                f"(evidence files up to {settings.EVIDENCE_MAX_BYTES} bytes).",
                field="file" if multipart else None,
            )
            return JsonResponse(body, status=413)
        return self.get_response(request)
