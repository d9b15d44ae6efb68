"""Routes of the intake API."""

from rest_framework.routers import DefaultRouter

from . import views

router = DefaultRouter()
router.register("customers", views.CustomerViewSet, basename="customer")
router.register("units", views.UnitViewSet, basename="unit")
router.register("jobs", views.JobViewSet, basename="job")
router.register("steps", views.RepairStepViewSet, basename="step")
router.register("evidence", views.EvidenceViewSet, basename="evidence")

urlpatterns = router.urls
