"""Routes of the certificate API, the receipt and the public verification page."""

from django.urls import path
from rest_framework.routers import DefaultRouter

from . import views

router = DefaultRouter()
router.register("certificates", views.CertificateViewSet, basename="certificate")

api_urlpatterns = [
    path("jobs/<int:pk>/receipt.pdf", views.ReceiptView.as_view(), name="job-receipt"),
    *router.urls,
]
public_urlpatterns = [
    path("verify/", views.VerifyFormView.as_view(), name="certificate-verify-form"),
    path("verify/<str:number>/", views.VerifyView.as_view(), name="certificate-verify"),
]
