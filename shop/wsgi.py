"""WSGI entry point for a server such as gunicorn (production settings unless told otherwise)."""

import os

from django.core.wsgi import get_wsgi_application

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "shop.settings.production")

application = get_wsgi_application()
