"""Routes of the bench API."""

from django.urls import path
from rest_framework.routers import DefaultRouter

from . import views

router = DefaultRouter()
router.register("rigs", views.RigViewSet, basename="rig")
router.register("lamps", views.LampViewSet, basename="lamp")
router.register("lamp-banks", views.LampBankViewSet, basename="lamp-bank")
router.register("instruments", views.InstrumentViewSet, basename="instrument")
router.register("powerups", views.PowerUpViewSet, basename="powerup")

urlpatterns = [
    path("powerups/<int:pk>/plot.svg", views.PowerUpPlotView.as_view(), name="powerup-plot"),
    path("predict/", views.PredictView.as_view(), name="predict"),
    path("units/<int:pk>/lamp-advice/", views.LampAdviceView.as_view(), name="lamp-advice"),
    *router.urls,
]
