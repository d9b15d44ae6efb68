"""OpenAPI pieces shared by every view: the error envelope and the responses that carry it."""

from drf_spectacular.utils import OpenApiResponse, inline_serializer
from rest_framework import serializers

ErrorSerializer = inline_serializer(
    name="Error",
    fields={
        "error": inline_serializer(
            name="ErrorBody",
            fields={
                "code": serializers.CharField(),
                "message": serializers.CharField(),
                "field": serializers.CharField(allow_null=True),
                "fields": serializers.DictField(
                    child=serializers.ListField(child=serializers.CharField())
                ),
            },
        )
    },
)

ERROR_RESPONSES = {
    401: OpenApiResponse(ErrorSerializer, description="Not signed in."),
    403: OpenApiResponse(ErrorSerializer, description="Your role does not allow this."),
    404: OpenApiResponse(ErrorSerializer, description="No such record."),
}
WRITE_ERROR_RESPONSES = {
    **ERROR_RESPONSES,
    400: OpenApiResponse(ErrorSerializer, description="Bad input; `field` names the culprit."),
    409: OpenApiResponse(ErrorSerializer, description="The record's state does not allow it."),
    412: OpenApiResponse(ErrorSerializer, description="Stale If-Match: read again and retry."),
}
