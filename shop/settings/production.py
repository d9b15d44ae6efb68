"""Settings for a shop's server: base plus hardening, everything secret from the environment."""

import os

from django.core.exceptions import ImproperlyConfigured

from .base import *  # noqa: F403
from .base import env_flag

# Certificates print and QR-code this address; base's loopback default would send customers
# to their own machine.
SHOP_PUBLIC_URL = os.environ.get("SHOP_PUBLIC_URL", "").strip()
if not SHOP_PUBLIC_URL:
    raise ImproperlyConfigured(
        "SHOP_PUBLIC_URL is not set. Set it to the address customers use to reach /verify/ "
        "(e.g. https://bench.example.org)."
    )

DEBUG = False
SECURE_PROXY_SSL_HEADER = ("HTTP_X_FORWARDED_PROTO", "https")
SECURE_SSL_REDIRECT = env_flag("SECURE_SSL_REDIRECT", True)
SECURE_HSTS_SECONDS = 31_536_000
SECURE_HSTS_INCLUDE_SUBDOMAINS = True
SECURE_HSTS_PRELOAD = True
SESSION_COOKIE_SECURE = True
CSRF_COOKIE_SECURE = True
