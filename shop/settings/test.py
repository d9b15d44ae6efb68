"""Settings for the test suite: fast hashing, media in a temporary folder."""

import os
import tempfile

os.environ.setdefault("SECRET_KEY", "test-only-secret-key-not-for-production")

from .base import *  # noqa: E402,F403

DEBUG = False
PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]
MEDIA_ROOT = tempfile.mkdtemp(prefix="shop-test-media-")
