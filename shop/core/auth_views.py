"""Sign-in for people (session) and scripts (token), and ending tokens."""

from __future__ import annotations

from django.contrib import admin
from django.contrib.auth import get_user_model
from django.contrib.auth.views import LoginView
from django.http import JsonResponse
from django.shortcuts import get_object_or_404
from drf_spectacular.utils import OpenApiResponse, extend_schema, inline_serializer
from rest_framework import serializers
from rest_framework.authtoken.serializers import AuthTokenSerializer
from rest_framework.exceptions import ValidationError
from rest_framework.permissions import IsAuthenticated
from rest_framework.response import Response
from rest_framework.views import APIView

from .authentication import token_expires_at, token_issue, token_revoke
from .errors import error_body
from .roles import LEAD, ROLES, HasShopRole, user_roles
from .schema import ERROR_RESPONSES, ErrorSerializer
from .signin import LoginThrottle, TokenThrottle, lockout_response

LOCKED_OR_THROTTLED = OpenApiResponse(
    ErrorSerializer,
    description=(
        "Too many attempts: `throttled` (this address, see Retry-After) or `locked_out` "
        "(too many failed sign-ins for this user name; the message says when to retry)."
    ),
)
RevokedSerializer = inline_serializer("TokensRevoked", {"revoked": serializers.IntegerField()})


class TokenObtainView(APIView):
    """Exchange a username and password for a new API token, shown only in this answer.

    Signing in again replaces the previous token. Tokens expire after TOKEN_TTL_HOURS.
    """

    authentication_classes = []
    permission_classes = []
    throttle_classes = [TokenThrottle]
    serializer_class = AuthTokenSerializer

    @extend_schema(
        request=AuthTokenSerializer,
        responses={
            200: inline_serializer(
                "Token",
                {"token": serializers.CharField(), "expires_at": serializers.DateTimeField()},
            ),
            400: OpenApiResponse(ErrorSerializer, description="Wrong user name or password."),
            429: LOCKED_OR_THROTTLED,
        },
    )
    def post(self, request, *args, **kwargs):
        serializer = AuthTokenSerializer(data=request.data, context={"request": request})
        if not serializer.is_valid():
            # django-axes marks the request when this attempt is (or already was) locked out.
            if getattr(request, "axes_locked_out", False):
                return lockout_response(request)
            raise ValidationError(serializer.errors)
        token, key = token_issue(user=serializer.validated_data["user"], request=request)
        return Response({"token": key, "expires_at": token_expires_at(token)})


def sign_in_throttled(request, view) -> JsonResponse | None:
    """The 429 answer when this address has used up its sign-in attempts (LoginThrottle)."""
    throttle = LoginThrottle()
    if throttle.allow_request(request, view):
        return None
    wait = max(1, int(throttle.wait() or 1))
    response = JsonResponse(
        error_body(
            "throttled", f"Too many sign-in attempts from your address. Try again in {wait} s."
        ),
        status=429,
    )
    response["Retry-After"] = str(wait)
    return response


class SessionLoginView(LoginView):
    """The browser sign-in page, with a per-address limit on attempts."""

    template_name = "rest_framework/login.html"

    def post(self, request, *args, **kwargs):
        return sign_in_throttled(request, self) or super().post(request, *args, **kwargs)


def admin_login(request, *args, **kwargs):
    """The admin's sign-in page behind the same per-address limit as the browser sign-in."""
    if request.method == "POST":
        refused = sign_in_throttled(request, None)
        if refused:
            return refused
    return admin.site.login(request, *args, **kwargs)


class TokenRevokeView(APIView):
    """End the caller's own API tokens and browser sessions (sign out everywhere)."""

    permission_classes = [IsAuthenticated]

    @extend_schema(request=None, responses={200: RevokedSerializer, **ERROR_RESPONSES})
    def post(self, request, *args, **kwargs):
        return Response({"revoked": token_revoke(user=request.user, actor=request.user)})


class UserTokenRevokeView(APIView):
    """A shop lead ends another user's API tokens and sessions (a lost laptop, someone leaving)."""

    permission_classes = [HasShopRole]
    action = "revoke"
    role_rules = {"revoke": frozenset({LEAD})}

    @extend_schema(request=None, responses={200: RevokedSerializer, **ERROR_RESPONSES})
    def post(self, request, pk: int, *args, **kwargs):
        user = get_object_or_404(get_user_model(), pk=pk)
        return Response({"revoked": token_revoke(user=user, actor=request.user)})


MeSerializer = inline_serializer(
    "Me",
    {
        "id": serializers.IntegerField(),
        "username": serializers.CharField(),
        "first_name": serializers.CharField(),
        "last_name": serializers.CharField(),
        "roles": serializers.ListField(child=serializers.ChoiceField(choices=ROLES)),
        "admin_access": serializers.BooleanField(),
    },
)


class MeView(APIView):
    """The signed-in user and their shop roles (front_desk, technician, lead)."""

    permission_classes = [IsAuthenticated]

    @extend_schema(responses={200: MeSerializer, **ERROR_RESPONSES})
    def get(self, request):
        user = request.user
        return Response(
            {
                "id": user.pk,
                "username": user.get_username(),
                "first_name": user.first_name,
                "last_name": user.last_name,
                "roles": sorted(user_roles(user)),
                "admin_access": user.is_staff,
            }
        )
