"""Thin views for certificates, receipts and the public verification page."""

from __future__ import annotations

from urllib.parse import urlencode

from django.http import HttpResponse, HttpResponseRedirect
from django.shortcuts import render
from django.urls import reverse
from django.views import View
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import (
    OpenApiParameter,
    OpenApiResponse,
    extend_schema,
    extend_schema_view,
)
from rest_framework import mixins, viewsets
from rest_framework.decorators import action
from rest_framework.generics import GenericAPIView
from rest_framework.permissions import AllowAny
from rest_framework.renderers import JSONRenderer, TemplateHTMLRenderer
from rest_framework.response import Response
from rest_framework.throttling import AnonRateThrottle

from shop.core.errors import error_body
from shop.core.roles import ANY_ROLE, FRONT_DESK, LEAD, HasShopRole, has_role
from shop.core.schema import (
    ERROR_RESPONSES,
    THROTTLED_RESPONSE,
    WRITE_ERROR_RESPONSES,
    ErrorSerializer,
)
from shop.intake.models import Job

from . import selectors, services
from .pdf.receipt import render_receipt
from .serializers import (
    CertificateSerializer,
    IssueSerializer,
    RevokeSerializer,
    SupersedeSerializer,
    VerificationSerializer,
)

LEAD_ONLY = frozenset({LEAD})
PDF_RESPONSE = {
    (200, "application/pdf"): OpenApiResponse(OpenApiTypes.BINARY, description="The PDF.")
}


def pdf_response(content: bytes, filename: str) -> HttpResponse:
    response = HttpResponse(content, content_type="application/pdf")
    response["Content-Disposition"] = f'attachment; filename="{filename}"'
    return response


@extend_schema_view(
    list=extend_schema(responses={200: CertificateSerializer(many=True), **ERROR_RESPONSES}),
    retrieve=extend_schema(responses={200: CertificateSerializer, **ERROR_RESPONSES}),
)
class CertificateViewSet(mixins.ListModelMixin, mixins.RetrieveModelMixin, viewsets.GenericViewSet):
    """Power-up test certificates: issued by leads, never edited; corrections supersede."""

    queryset = selectors.certificate_list()
    serializer_class = CertificateSerializer
    permission_classes = [HasShopRole]
    filterset_fields = ["job"]
    search_fields = ["number", "job__number"]
    ordering_fields = ["issued_at", "number", "id"]
    role_rules = {
        "read": ANY_ROLE,
        "create": LEAD_ONLY,
        "pdf": ANY_ROLE,
        "supersede": LEAD_ONLY,
        "revoke": LEAD_ONLY,
    }

    @extend_schema(
        request=IssueSerializer, responses={201: CertificateSerializer, **WRITE_ERROR_RESPONSES}
    )
    def create(self, request, *args, **kwargs):
        serializer = IssueSerializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        data = serializer.validated_data
        certificate = services.certificate_issue(
            job=data["job"],
            issued_by=request.user,
            tests=data.get("tests"),
            calibration_override=data["calibration_override"],
            left_out_reason=data["left_out_reason"],
        )
        return Response(
            self.get_serializer(self.get_queryset().get(pk=certificate.pk)).data, status=201
        )

    @extend_schema(
        responses={
            **PDF_RESPONSE,
            **ERROR_RESPONSES,
            409: OpenApiResponse(ErrorSerializer, description="The stored PDF was altered."),
            410: OpenApiResponse(ErrorSerializer, description="The certificate was revoked."),
        }
    )
    @action(detail=True, methods=["get"])
    def pdf(self, request, pk=None):
        certificate = self.get_object()
        return pdf_response(
            selectors.certificate_pdf(certificate), f"certificate-{certificate.number}.pdf"
        )

    @extend_schema(
        request=SupersedeSerializer, responses={201: CertificateSerializer, **WRITE_ERROR_RESPONSES}
    )
    @action(detail=True, methods=["post"])
    def supersede(self, request, pk=None):
        serializer = SupersedeSerializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        data = serializer.validated_data
        new = services.certificate_supersede(
            certificate=self.get_object(),
            by=request.user,
            reason=data["reason"],
            tests=data.get("tests"),
            calibration_override=data["calibration_override"],
            left_out_reason=data["left_out_reason"],
        )
        return Response(self.get_serializer(self.get_queryset().get(pk=new.pk)).data, status=201)

    @extend_schema(
        request=RevokeSerializer, responses={200: CertificateSerializer, **WRITE_ERROR_RESPONSES}
    )
    @action(detail=True, methods=["post"])
    def revoke(self, request, pk=None):
        serializer = RevokeSerializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        certificate = self.get_object()
        services.certificate_revoke(
            certificate=certificate, by=request.user, reason=serializer.validated_data["reason"]
        )
        return Response(self.get_serializer(self.get_queryset().get(pk=certificate.pk)).data)


class ReceiptView(GenericAPIView):
    """The intake receipt of a job, as PDF; the customer's phone only for the desk and leads."""

    permission_classes = [HasShopRole]
    role_rules = {"read": ANY_ROLE}
    queryset = Job.objects.select_related("unit__owner")

    @extend_schema(responses={**PDF_RESPONSE, **ERROR_RESPONSES})
    def get(self, request, pk: int):
        job = self.get_object()
        return pdf_response(
            render_receipt(
                selectors.receipt_data(job, with_contact=has_role(request.user, FRONT_DESK, LEAD))
            ),
            f"receipt-{job.number}.pdf",
        )


class VerifyThrottle(AnonRateThrottle):
    """Limits guessing at the public verification page."""

    scope = "verify"


class VerifyView(GenericAPIView):
    """Public: does certificate `number` with this `code` exist, and is it still valid?"""

    permission_classes = [AllowAny]
    authentication_classes = []
    throttle_classes = [VerifyThrottle]
    renderer_classes = [TemplateHTMLRenderer, JSONRenderer]
    template_name = "reports/verify.html"

    @extend_schema(
        parameters=[
            OpenApiParameter(
                "code", str, required=True, description="The verification code printed on it."
            )
        ],
        responses={
            200: VerificationSerializer,
            404: ERROR_RESPONSES[404],
            429: THROTTLED_RESPONSE,
        },
    )
    def get(self, request, number: str):
        code = request.query_params.get("code", "")
        # No certificate's number or code holds a NUL, and PostgreSQL cannot even compare one.
        certificate = (
            None
            if "\x00" in number + code
            else selectors.certificate_for_verification(number, code)
        )
        if certificate is None:
            body = error_body(
                "no_match",
                "No certificate matches that number and code. Check "
                "both against the printed certificate.",
            )
            return Response({**body, "number": number}, status=404)
        return Response(selectors.verification_answer(certificate))


class VerifyFormView(View):
    """Public: `/verify/` without a number offers a plain form (no script) that asks for both."""

    template_name = "reports/verify_form.html"

    def get(self, request):
        number = request.GET.get("number", "").strip()
        code = request.GET.get("code", "").strip()
        if number and code and "/" not in number and "\x00" not in number:
            target = reverse("certificate-verify", kwargs={"number": number})
            return HttpResponseRedirect(f"{target}?{urlencode({'code': code})}")
        context = {
            "action": reverse("certificate-verify-form"),
            "number": number,
            "code": code,
            "missing": bool(number or code),
        }
        return render(request, self.template_name, context)
