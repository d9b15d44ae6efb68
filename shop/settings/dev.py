"""Settings for a developer's machine and the demo: DEBUG on, SQLite under var/."""

import os

os.environ.setdefault("DEBUG", "1")

from .base import *  # noqa: E402,F403
