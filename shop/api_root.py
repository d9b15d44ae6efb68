"""The API's root page: every resource of every app, by name, with its address."""

from rest_framework.routers import APIRootView

from reports.urls import router as reports_router
from shop.bench.urls import router as bench_router
from shop.core.urls import router as core_router
from shop.intake.urls import router as intake_router

ROUTERS = (intake_router, bench_router, reports_router, core_router)
# Named routes beside the routers' resources: reads and tools a client starts from.
OTHER_ENDPOINTS = {
    "me": "me",
    "predict": "predict",
    "token": "token-obtain",
    "schema": "schema",
    "docs": "docs",
}


class ShopAPIRoot(APIRootView):
    """Every resource of the API. Each app's router serves its own part; this lists them all."""


def api_root_dict() -> dict[str, str]:
    resources = {
        prefix: f"{basename}-list"
        for router in ROUTERS
        for prefix, _viewset, basename in router.registry
    }
    return {**resources, **OTHER_ENDPOINTS}


api_root = ShopAPIRoot.as_view(api_root_dict=api_root_dict())
