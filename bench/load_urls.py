"""URL map of the load benchmark: the service's own routes plus a bare Django view as baseline."""

from django.http import JsonResponse
from django.urls import path

from shop.urls import handler404, handler500  # noqa: F401  (the service's JSON error pages)
from shop.urls import urlpatterns as service_urlpatterns

BARE_PATH = "bench/bare/"


def bare(request):
    """No authentication, no database: the floor every request through the middleware stands on."""
    return JsonResponse({"ok": True})


urlpatterns = [path(BARE_PATH, bare), *service_urlpatterns]
