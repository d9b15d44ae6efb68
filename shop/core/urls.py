"""Routes of the shared API: the audit trail."""

from rest_framework.routers import DefaultRouter

from .audit_api import AuditEventViewSet

router = DefaultRouter()
router.register("audit", AuditEventViewSet, basename="audit")

urlpatterns = router.urls
