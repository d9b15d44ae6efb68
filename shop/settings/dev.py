"""Settings for a developer's machine and the demo: DEBUG on, SQLite under var/."""

import os

os.environ.setdefault("DEBUG", "1")
# The invented demo shop's identity.
os.environ.setdefault("SHOP_NAME", "Lantern Row Repair Bench")
os.environ.setdefault("SHOP_ADDRESS", "14 Lantern Row, Fernhollow")
os.environ.setdefault("SHOP_PHONE", "555-0100")

from .base import *  # noqa: E402,F403
