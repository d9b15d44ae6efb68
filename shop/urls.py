"""Top-level URL map: the API under /api/, the admin, the schema and its docs page."""

from django.contrib import admin
from django.urls import include, path
from drf_spectacular.views import SpectacularAPIView, SpectacularSwaggerSplitView

from reports.urls import api_urlpatterns, public_urlpatterns
from shop.api_root import api_root
from shop.core.auth_views import (
    SessionLoginView,
    TokenObtainView,
    TokenRevokeView,
    UserTokenRevokeView,
    admin_login,
)

handler400 = "shop.core.errors.json_bad_request"
handler404 = "shop.core.errors.json_not_found"
handler500 = "shop.core.errors.json_server_error"

urlpatterns = [
    # Before the admin's own routes, so that its sign-in page is the throttled one.
    path("admin/login/", admin_login, name="admin-login"),
    path("admin/", admin.site.urls),
    # Before DRF's own auth routes, so that its sign-in page is the throttled one.
    path("api/auth/login/", SessionLoginView.as_view(), name="login"),
    path("api/auth/", include("rest_framework.urls")),
    path("api/auth/token/", TokenObtainView.as_view(), name="token-obtain"),
    path("api/auth/token/revoke/", TokenRevokeView.as_view(), name="token-revoke"),
    path(
        "api/auth/users/<int:pk>/token/revoke/",
        UserTokenRevokeView.as_view(),
        name="user-token-revoke",
    ),
    path("api/schema/", SpectacularAPIView.as_view(), name="schema"),
    # The split view serves its start-up script as a file, so the CSP needs no inline script.
    path("api/docs/", SpectacularSwaggerSplitView.as_view(url_name="schema"), name="docs"),
    # Before the apps' routers, whose own root pages each list only their app's part.
    path("api/", api_root, name="api-root"),
    path("api/", include("shop.intake.urls")),
    path("api/", include("shop.core.urls")),
    path("api/", include("shop.bench.urls")),
    path("api/", include(api_urlpatterns)),
    *public_urlpatterns,
]
