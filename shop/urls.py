"""Top-level URL map: the API under /api/, the admin, the schema and its docs page."""

from django.contrib import admin
from django.urls import include, path
from drf_spectacular.views import SpectacularAPIView, SpectacularSwaggerView

from reports.urls import api_urlpatterns, public_urlpatterns
from shop.core.auth_views import TokenObtainView

handler404 = "shop.core.errors.json_not_found"
handler500 = "shop.core.errors.json_server_error"

urlpatterns = [
    path("admin/", admin.site.urls),
    path("api/auth/", include("rest_framework.urls")),
    path("api/auth/token/", TokenObtainView.as_view(), name="token-obtain"),
    path("api/schema/", SpectacularAPIView.as_view(), name="schema"),
    path("api/docs/", SpectacularSwaggerView.as_view(url_name="schema"), name="docs"),
    path("api/", include("shop.intake.urls")),
    path("api/", include("shop.core.urls")),
    path("api/", include("shop.bench.urls")),
    path("api/", include(api_urlpatterns)),
    *public_urlpatterns,
]
