"""Content-Security-Policy on every response, built from the SECURE_CSP setting."""

from __future__ import annotations

from django.conf import settings

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
