"""OpenAPI pieces shared by every view: the error envelope and the responses that carry it."""

from decimal import Decimal

from drf_spectacular.extensions import OpenApiSerializerFieldExtension
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

BAD_INPUT = OpenApiResponse(ErrorSerializer, description="Bad input; `field` names the culprit.")
# Reads answer 400 too: a filter, page size or other query parameter they cannot use.
ERROR_RESPONSES = {
    400: OpenApiResponse(
        ErrorSerializer, description="A query parameter is not valid; `field` names it."
    ),
    401: OpenApiResponse(ErrorSerializer, description="Not signed in."),
    403: OpenApiResponse(ErrorSerializer, description="Your role does not allow this."),
    404: OpenApiResponse(ErrorSerializer, description="No such record (or no such page)."),
    406: OpenApiResponse(
        ErrorSerializer, description="The Accept header asks for a format we lack."
    ),
}
WRITE_ERROR_RESPONSES = {
    **ERROR_RESPONSES,
    400: BAD_INPUT,
    409: OpenApiResponse(ErrorSerializer, description="The record's state does not allow it."),
    412: OpenApiResponse(ErrorSerializer, description="Stale If-Match: read again and retry."),
    415: OpenApiResponse(
        ErrorSerializer, description="The body's Content-Type is not one we read."
    ),
}
THROTTLED_RESPONSE = OpenApiResponse(
    ErrorSerializer, description="Too many requests: wait as the Retry-After header says."
)


class DecimalPlacesExtension(OpenApiSerializerFieldExtension):
    """Decimal numbers state the places they may carry (multipleOf), which the server enforces."""

    target_class = "rest_framework.fields.DecimalField"
    match_subclasses = True

    def map_serializer_field(self, auto_schema, direction):
        schema = auto_schema._map_serializer_field(self.target, direction, bypass_extensions=True)
        places = self.target.decimal_places
        if places is not None and schema.get("type") == "number":
            schema["multipleOf"] = float(Decimal(1).scaleb(-places))
        return schema
