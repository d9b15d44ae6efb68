"""Settings for the load benchmark: production's, served over plain HTTP on loopback.

The URL map adds a bare Django view (bench/load_urls.py), the baseline the benchmark prints
each figure beside. Run only from the repository root (bench/ is not an installed package).
"""

import os

# Loopback without a TLS proxy: production would redirect every request to https.
os.environ.setdefault("SECURE_SSL_REDIRECT", "0")

from .production import *  # noqa: E402,F403

ROOT_URLCONF = "bench.load_urls"
ALLOWED_HOSTS = ["127.0.0.1", "localhost", "testserver"]
