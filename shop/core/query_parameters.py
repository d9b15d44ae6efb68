"""Lists refuse query parameters they do not know, so a mistyped filter never returns everything."""

from __future__ import annotations

from django_filters.rest_framework import DjangoFilterBackend
from django_filters.widgets import SuffixedMultiWidget
from rest_framework.filters import BaseFilterBackend
from rest_framework.settings import api_settings

from .errors import ApplicationError

# Parameters every list answers to, whatever its filters: the page, its size and the format.
ALWAYS_ALLOWED = frozenset({"page", "page_size", api_settings.URL_FORMAT_OVERRIDE})


def _filter_parameters(request, queryset, view) -> set[str]:
    filterset_class = DjangoFilterBackend().get_filterset_class(view, queryset)
    if filterset_class is None:
        return set()
    names = set()
    for name, filter_ in filterset_class.base_filters.items():
        widget = filter_.field_class.widget
        if isinstance(widget, type) and issubclass(widget, SuffixedMultiWidget):
            names.update(f"{name}_{suffix}" for suffix in widget.suffixes)
        names.add(name)
    return names


def list_parameters(request, queryset, view) -> set[str]:
    """Every query parameter the list `view` understands."""
    allowed = set(ALWAYS_ALLOWED)
    paginator = getattr(view, "paginator", None)
    if paginator is not None:
        allowed.update(
            p
            for p in (
                getattr(paginator, "page_query_param", None),
                getattr(paginator, "page_size_query_param", None),
            )
            if p
        )
    backends = view.filter_backends
    if any(getattr(b, "search_param", None) for b in backends) and getattr(
        view, "search_fields", None
    ):
        allowed.add(api_settings.SEARCH_PARAM)
    if any(getattr(b, "ordering_param", None) for b in backends) and getattr(
        view, "ordering_fields", None
    ):
        allowed.add(api_settings.ORDERING_PARAM)
    if DjangoFilterBackend in backends:
        allowed |= _filter_parameters(request, queryset, view)
    allowed |= set(getattr(view, "extra_query_parameters", ()))
    return allowed


class KnownQueryParameters(BaseFilterBackend):
    """Refuses (400) a list request carrying a query parameter the list does not understand."""

    def filter_queryset(self, request, queryset, view):
        if getattr(view, "action", None) != "list":
            return queryset
        unknown = sorted(set(request.query_params) - list_parameters(request, queryset, view))
        if unknown:
            known = ", ".join(sorted(list_parameters(request, queryset, view)))
            raise ApplicationError(
                f"Unknown query parameter(s): {', '.join(unknown)}. This list understands: "
                f"{known}.",
                field=unknown[0],
                code="unknown_parameter",
                extra={"unknown_parameters": unknown},
            )
        return queryset
