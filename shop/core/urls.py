"""Routes of the shared API: the signed-in user and the audit trail."""

from django.urls import path
from rest_framework.routers import DefaultRouter

from .audit_api import AuditEventViewSet
from .auth_views import MeView

router = DefaultRouter()
router.register("audit", AuditEventViewSet, basename="audit")

urlpatterns = [path("me/", MeView.as_view(), name="me"), *router.urls]
