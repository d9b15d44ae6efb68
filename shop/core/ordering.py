"""List ordering that always ends with the primary key, so that pages never overlap.

Ordering by a column with ties (many jobs received the same day) leaves the database free to
return the tied rows in any order, and a different order for each page: a row can then show up
on two pages and another on none. Every list ordering therefore ends with the primary key.
"""

from __future__ import annotations

from rest_framework.filters import OrderingFilter

UNIQUE_KEYS = frozenset({"pk", "id"})


def with_unique_tail(ordering) -> list:
    """`ordering` followed by the primary key (in the last field's direction) unless it ends so."""
    ordering = list(ordering)
    if not ordering:
        return ["pk"]
    last = ordering[-1]
    if isinstance(last, str) and last.lstrip("-") in UNIQUE_KEYS:
        return ordering
    descending = isinstance(last, str) and last.startswith("-")
    return [*ordering, "-pk" if descending else "pk"]


class ShopOrderingFilter(OrderingFilter):
    """DRF's `?ordering=` with the primary key as the last tie-breaker, also on the default."""

    def get_ordering(self, request, queryset, view):
        ordering = super().get_ordering(request, queryset, view)
        if not ordering:
            ordering = queryset.query.order_by or queryset.model._meta.ordering
        return with_unique_tail(ordering)
