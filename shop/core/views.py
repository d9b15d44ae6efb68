"""Base view classes: role checks, versioned reads and writes, and the error responses schema."""

from __future__ import annotations

from rest_framework import mixins, viewsets
from rest_framework.response import Response

from .roles import HasShopRole
from .versioning import etag_for, expected_version


class VersionedModelViewSet(
    mixins.ListModelMixin, mixins.RetrieveModelMixin, viewsets.GenericViewSet
):
    """List and detail reads with an ETag; create and update delegate to service functions.

    Subclasses set `create_service(validated_data, request)` and
    `update_service(instance, validated_data, expected_version, request)`.
    """

    permission_classes = [HasShopRole]

    def filter_queryset(self, queryset):
        # Query-string filters, search and ordering shape lists; a detail read skips them.
        if self.action != "list":
            return queryset
        return super().filter_queryset(queryset)

    def retrieve(self, request, *args, **kwargs):
        return self.versioned_response(self.get_object())

    def versioned_response(self, instance, status=200) -> Response:
        data = self.get_serializer(instance).data
        return Response(data, status=status, headers={"ETag": etag_for(instance.version)})

    def create(self, request, *args, **kwargs):
        serializer = self.get_serializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        instance = self.create_service(serializer.validated_data, request)
        return self.versioned_response(instance, status=201)

    def update(self, request, *args, **kwargs):
        instance = self.get_object()
        partial = kwargs.pop("partial", False)
        serializer = self.get_serializer(instance, data=request.data, partial=partial)
        serializer.is_valid(raise_exception=True)
        updated = self.update_service(
            instance, serializer.validated_data, expected_version(request), request
        )
        return self.versioned_response(updated)

    def partial_update(self, request, *args, **kwargs):
        kwargs["partial"] = True
        return self.update(request, *args, **kwargs)
