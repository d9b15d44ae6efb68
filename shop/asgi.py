"""ASGI entry point (production settings unless told otherwise)."""

import os

from django.core.asgi import get_asgi_application

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "shop.settings.production")

application = get_asgi_application()
