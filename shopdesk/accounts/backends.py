"""Signing in and permissions: Django's model backend, reading a user's permissions in one query."""

from __future__ import annotations

from typing import Any

from django.contrib.auth.backends import ModelBackend
from django.contrib.auth.models import Permission
from django.db.models import Q


class ShopModelBackend(ModelBackend):
    """Django's ``ModelBackend`` with one change: a user's own and their groups' permissions are
    read together in one query (Django reads them in two). Every page checks a permission, so
    that is one query fewer on every request."""

    def get_all_permissions(self, user_obj: Any, obj: Any = None) -> set[str]:
        if not user_obj.is_active or user_obj.is_anonymous or obj is not None:
            return set()
        if not hasattr(user_obj, "_perm_cache"):
            permissions = Permission.objects.all()
            if not user_obj.is_superuser:
                permissions = permissions.filter(Q(user=user_obj) | Q(group__user=user_obj))
            user_obj._perm_cache = {
                f"{app_label}.{codename}"
                for app_label, codename in permissions.values_list(
                    "content_type__app_label", "codename"
                ).order_by()
            }
        return user_obj._perm_cache
