"""Token sign-in for scripts at the bench (session sign-in is DRF's login page)."""

from drf_spectacular.utils import extend_schema, inline_serializer
from rest_framework import serializers
from rest_framework.authtoken.views import ObtainAuthToken

from .schema import ErrorSerializer


class TokenObtainView(ObtainAuthToken):
    """Exchange a username and password for an API token."""

    @extend_schema(
        responses={
            200: inline_serializer("Token", {"token": serializers.CharField()}),
            400: ErrorSerializer,
        },
    )
    def post(self, request, *args, **kwargs):
        return super().post(request, *args, **kwargs)
