"""Settings for the test suite: fast hashing, media in a temporary folder."""

import os
import tempfile

os.environ.setdefault("SECRET_KEY", "test-only-secret-key-not-for-production")
os.environ.setdefault("RECORD_SIGNING_KEY", "test-only-record-signing-key-not-for-production")

from .base import *  # noqa: E402,F403

DEBUG = False
PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]
MEDIA_ROOT = tempfile.mkdtemp(prefix="shop-test-media-")
# Throttle counts in process memory, so that tests without database access can hit the limits;
# tests/security/test_shared_limits.py proves the shared behaviour on base's DatabaseCache.
CACHES = {"default": {"BACKEND": "django.core.cache.backends.locmem.LocMemCache"}}
