"""A user's permissions, read in one query, are exactly the ones Django's own backend gives."""

from __future__ import annotations

import pytest
from django.contrib.auth.backends import ModelBackend
from django.contrib.auth.models import AnonymousUser, Group, Permission, User

from shopdesk.accounts.backends import ShopModelBackend


def _fresh(user: User) -> User:
    return User.objects.get(pk=user.pk)  # no permission cache carried over


@pytest.mark.django_db
@pytest.mark.parametrize(
    "case", ["role only", "own permission too", "two groups", "superuser", "inactive", "none"]
)
def test_it_gives_what_django_s_backend_gives(case, front_desk, technician, owner) -> None:
    user = {"role only": front_desk, "own permission too": technician}.get(case) or User.objects.create_user(
        username=f"user-{case.replace(' ', '-')}", password="unused-password-123"
    )
    if case == "own permission too":
        user.user_permissions.add(Permission.objects.get(codename="adjust_stock"))
    if case == "two groups":
        user.groups.add(*Group.objects.all()[:2])
    if case == "superuser":
        user.is_superuser = True
        user.save()
    if case == "inactive":
        user.groups.add(Group.objects.first())
        user.is_active = False
        user.save()
    ours = ShopModelBackend().get_all_permissions(_fresh(user))
    assert ours == ModelBackend().get_all_permissions(_fresh(user))
    if case in {"role only", "own permission too", "two groups", "superuser"}:
        assert ours  # the comparison is not of two empty sets
    if case == "own permission too":
        assert "stock.adjust_stock" in ours


@pytest.mark.django_db
def test_it_reads_them_in_one_query_and_keeps_them_for_the_request(
    technician, django_assert_num_queries
) -> None:
    user = _fresh(technician)
    backend = ShopModelBackend()
    with django_assert_num_queries(1):
        assert backend.has_perm(user, "workshop.change_oilrecord")
        assert not backend.has_perm(user, "stock.adjust_stock")


def test_nobody_signed_in_and_an_object_get_none() -> None:
    assert ShopModelBackend().get_all_permissions(AnonymousUser()) == set()
    assert ShopModelBackend().get_all_permissions(User(is_active=True), obj=object()) == set()
