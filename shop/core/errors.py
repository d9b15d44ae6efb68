"""The single JSON error shape and the exception handler that produces it.

Every 4xx answer of the API has the body::

    {"error": {"code": "...", "message": "...", "field": "name or null",
               "fields": {"name": ["what is wrong"]}, ...extra}}

`field` names the first offending field so a client can point at it; `fields` carries every one.
"""

from __future__ import annotations

import logging

from django.core.exceptions import PermissionDenied as DjangoPermissionDenied
from django.core.exceptions import RequestDataTooBig, TooManyFieldsSent, TooManyFilesSent
from django.core.exceptions import ValidationError as DjangoValidationError
from django.db import DataError
from django.db.models import ProtectedError
from django.http import Http404, JsonResponse
from rest_framework import exceptions, status
from rest_framework.response import Response
from rest_framework.settings import api_settings
from rest_framework.views import exception_handler

NON_FIELD = api_settings.NON_FIELD_ERRORS_KEY
logger = logging.getLogger(__name__)
# Refusals of requests too big or too deep to read, before any field is looked at.
UNREADABLE_BODY = {
    RequestDataTooBig: (
        "too_large",
        "The request body is larger than the server reads; files go in a multipart upload.",
    ),
    TooManyFieldsSent: ("too_many_fields", "The request sends more form fields than we read."),
    TooManyFilesSent: ("too_many_files", "The request sends more files than we read."),
    RecursionError: ("parse_error", "The request body is nested too deeply to read."),
}


class ApplicationError(Exception):
    """A refusal by the service layer, carried to the client as one JSON error."""

    status_code = status.HTTP_400_BAD_REQUEST
    code = "invalid"

    def __init__(
        self,
        message: str,
        *,
        field: str | None = None,
        code: str | None = None,
        extra: dict | None = None,
    ):
        super().__init__(message)
        self.message = message
        self.field = field
        if code:
            self.code = code
        self.extra = extra or {}


class Conflict(ApplicationError):
    """The request is well-formed but the record's state does not allow it (HTTP 409)."""

    status_code = status.HTTP_409_CONFLICT
    code = "conflict"


class Gone(ApplicationError):
    """The record exists but is withdrawn and must no longer be handed out (HTTP 410)."""

    status_code = status.HTTP_410_GONE
    code = "gone"


class PreconditionFailed(ApplicationError):
    """The client's If-Match version is stale: someone else changed the record (HTTP 412)."""

    status_code = status.HTTP_412_PRECONDITION_FAILED
    code = "stale_version"


class Forbidden(ApplicationError):
    """The user's role does not allow this particular change (HTTP 403)."""

    status_code = status.HTTP_403_FORBIDDEN
    code = "permission_denied"


def flatten_detail(detail, prefix: str = "") -> dict[str, list[str]]:
    """Turn DRF's nested error detail into {"dotted.field.path": [messages]}."""
    flat: dict[str, list[str]] = {}
    if isinstance(detail, dict):
        for key, value in detail.items():
            path = f"{prefix}.{key}" if prefix else str(key)
            for sub_key, messages in flatten_detail(value, path).items():
                flat.setdefault(sub_key, []).extend(messages)
    elif isinstance(detail, list):
        if all(not isinstance(item, (dict, list)) for item in detail):
            flat.setdefault(prefix or NON_FIELD, []).extend(str(item) for item in detail)
        else:
            for index, item in enumerate(detail):
                if item in ({}, []):
                    continue
                path = f"{prefix}.{index}" if prefix else str(index)
                for sub_key, messages in flatten_detail(item, path).items():
                    flat.setdefault(sub_key, []).extend(messages)
    else:
        flat.setdefault(prefix or NON_FIELD, []).append(str(detail))
    return flat


def _encodable(text):
    """`text` with any lone surrogate (which UTF-8 cannot carry) written as an escape."""
    if not isinstance(text, str):
        return text
    return text.encode("utf-8", "backslashreplace").decode("utf-8")


def error_body(
    code: str,
    message: str,
    fields: dict[str, list[str]] | None = None,
    field: str | None = None,
    **extra,
) -> dict:
    """Build the error envelope; `field` defaults to the first entry of `fields`.

    Messages may quote what the client sent; lone surrogates in it are escaped so the answer
    can always be encoded.
    """
    fields = {
        _encodable(name): [_encodable(message) for message in messages]
        for name, messages in (fields or {}).items()
    }
    if field is None:
        field = next((name for name in fields if name != NON_FIELD), None)
    body = {
        "code": code,
        "message": _encodable(message),
        "field": _encodable(field),
        "fields": fields,
    }
    body.update(extra)
    return {"error": body}


def _first_message(fields: dict[str, list[str]]) -> str:
    for name, messages in fields.items():
        if messages:
            return messages[0] if name == NON_FIELD else f"{name}: {messages[0]}"
    return "The request is not valid."


def _validation_response(fields: dict[str, list[str]]) -> Response:
    return Response(
        error_body("invalid", _first_message(fields), fields),
        status=status.HTTP_400_BAD_REQUEST,
    )


def shop_exception_handler(exc, context):
    """DRF exception handler: every refusal leaves in the one error shape."""
    if isinstance(exc, ApplicationError):
        fields = {exc.field: [exc.message]} if exc.field else {}
        return Response(
            error_body(exc.code, exc.message, fields, field=exc.field, **exc.extra),
            status=exc.status_code,
            headers=getattr(exc, "headers", None),
        )
    if isinstance(exc, DjangoValidationError):
        if hasattr(exc, "error_dict"):
            fields = {
                (NON_FIELD if name == "__all__" else name): [str(m) for m in errors]
                for name, errors in exc.message_dict.items()
            }
        else:
            fields = {NON_FIELD: [str(m) for m in exc.messages]}
        return _validation_response(fields)
    for kind, (code, message) in UNREADABLE_BODY.items():
        if isinstance(exc, kind):
            return Response(error_body(code, message), status=status.HTTP_400_BAD_REQUEST)
    if isinstance(exc, DataError):
        # The database could not store or compare a value (a NUL character in PostgreSQL
        # text, a number out of a column's range): the request's data, not the server, is at
        # fault, but say so in the log in case it is ours.
        logger.warning("Refused a value the database cannot hold: %s", exc)
        return Response(
            error_body(
                "invalid",
                "A value cannot be stored or searched for (too large, or holding a NUL "
                "character). Check the values you sent.",
            ),
            status=status.HTTP_400_BAD_REQUEST,
        )
    if isinstance(exc, ProtectedError):
        return Response(
            error_body(
                "protected",
                "This record is still referred to by other records and cannot be deleted.",
            ),
            status=status.HTTP_409_CONFLICT,
        )
    if isinstance(exc, Http404):
        exc = exceptions.NotFound()
    elif isinstance(exc, DjangoPermissionDenied):
        exc = exceptions.PermissionDenied()

    response = exception_handler(exc, context)
    if response is None:
        return None
    if isinstance(exc, exceptions.ValidationError):
        return _validation_response(flatten_detail(exc.detail))
    detail = exc.detail if isinstance(exc, exceptions.APIException) else str(exc)
    code = getattr(detail, "code", None) or getattr(exc, "default_code", "error")
    response.data = error_body(str(code), str(detail))
    return response


def json_not_found(request, exception=None):
    """Plain Django 404 page in the error shape, for paths no view claims."""
    return JsonResponse(
        error_body("not_found", f"Nothing is served at {request.path}."), status=404
    )


def json_bad_request(request, exception=None):
    """Plain Django 400 (a body or form over the size limits, refused before any view)."""
    return JsonResponse(
        error_body(
            "bad_request", "The request could not be read: it may be too large or malformed."
        ),
        status=400,
    )


def json_server_error(request):
    """Plain Django 500 page in the error shape; the details go to the log, not the client."""
    return JsonResponse(
        error_body("server_error", "The server failed; the error has been logged."), status=500
    )
