"""Shop roles (Django groups) and the permission class that checks them per action."""

from __future__ import annotations

from rest_framework.permissions import SAFE_METHODS, BasePermission

FRONT_DESK = "front_desk"
TECHNICIAN = "technician"
LEAD = "lead"
ROLES = (FRONT_DESK, TECHNICIAN, LEAD)
ANY_ROLE = frozenset(ROLES)
CRUD_OPERATIONS = {
    "create": "create",
    "update": "update",
    "partial_update": "update",
    "destroy": "delete",
}


def user_roles(user) -> frozenset[str]:
    """The shop roles a user holds; a superuser holds them all. Cached on the user object."""
    if not user or not user.is_authenticated:
        return frozenset()
    cached = getattr(user, "_shop_roles", None)
    if cached is None:
        if user.is_superuser:
            cached = ANY_ROLE
        else:
            cached = frozenset(user.groups.filter(name__in=ROLES).values_list("name", flat=True))
        user._shop_roles = cached
    return cached


def role_annotations(user_field: str) -> dict:
    """Annotations that read the roles of the user at `user_field` in the same query.

    `Token.objects.select_related("user").annotate(**role_annotations("user"))` brings the
    token, its user and the user's roles in one query; `remember_roles` then caches them.
    """
    from django.contrib.auth import get_user_model
    from django.db.models import Exists, OuterRef

    memberships = get_user_model().groups.through.objects
    return {
        f"_holds_{role}": Exists(
            memberships.filter(user_id=OuterRef(f"{user_field}_id"), group__name=role)
        )
        for role in ROLES
    }


def remember_roles(user, annotated) -> None:
    """Cache on `user` the roles read by `role_annotations` into the row `annotated`."""
    if user.is_superuser:
        user._shop_roles = ANY_ROLE
    else:
        user._shop_roles = frozenset(r for r in ROLES if getattr(annotated, f"_holds_{r}"))


def has_role(user, *roles: str) -> bool:
    """Whether the user holds at least one of `roles`."""
    return bool(user_roles(user) & set(roles))


def operation_of(request, view) -> str:
    """Name a request's operation: an action the view lists, or read, create, update, delete."""
    action = getattr(view, "action", None)
    if action in getattr(view, "role_rules", {}):
        return action
    if request.method in SAFE_METHODS:
        return "read"
    return CRUD_OPERATIONS.get(action, action or request.method.lower())


class HasShopRole(BasePermission):
    """Allows an operation only to users holding one of the roles the view lists for it.

    A view declares `role_rules = {"read": {...}, "create": {...}, "<action>": {...}}`; an
    operation the view does not list is refused.
    """

    message = "Your role does not allow this. Ask a shop lead if you need it."

    def has_permission(self, request, view) -> bool:
        if not request.user or not request.user.is_authenticated:
            return False
        if not hasattr(view, request.method.lower()):
            return True  # let the view answer 405: the method does not exist for anyone
        allowed = getattr(view, "role_rules", {}).get(operation_of(request, view), frozenset())
        return bool(user_roles(request.user) & set(allowed))
