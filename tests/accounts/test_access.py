"""Every page needs sign-in, and each role gets 403 on the write views it may not use."""

from __future__ import annotations

import re

import pytest
from django.urls import URLPattern, URLResolver, get_resolver, reverse

# Views that anyone may reach without signing in.
PUBLIC = {"accounts:sign-in", "owner:unsubscribe"}


def _walk(resolvers, prefix: str = "", namespace: str | None = None):
    for entry in resolvers:
        if isinstance(entry, URLResolver):
            ns = entry.namespace or namespace
            yield from _walk(entry.url_patterns, prefix + str(entry.pattern), ns)
        elif isinstance(entry, URLPattern):
            name = f"{namespace}:{entry.name}" if namespace and entry.name else entry.name
            yield prefix + str(entry.pattern), name


def _concrete(pattern: str) -> str:
    """A URL for a pattern, with made-up values for its parameters."""
    path = pattern.lstrip("^").rstrip("$").replace("\\Z", "")
    path = re.sub(r"<int:[^>]+>", "1", path)
    path = re.sub(r"<path:[^>]+>", "x", path)
    path = re.sub(r"<(str:|slug:)?[^>]+>", "2026-0001", path)
    path = re.sub(r"\(\?P<[^>]+>[^)]*\)", "1", path)
    return "/" + path.replace("\\", "")


ALL_PATTERNS = sorted(set(_walk(get_resolver().url_patterns)))


@pytest.mark.django_db
@pytest.mark.parametrize(("pattern", "name"), ALL_PATTERNS, ids=[p for p, _ in ALL_PATTERNS])
def test_it_sends_anonymous_requests_to_sign_in(client, pattern: str, name: str | None) -> None:
    url = _concrete(pattern)
    if name in PUBLIC:
        assert client.get(url).status_code == 200
        return
    for method in (client.get, client.post):
        response = method(url)
        assert response.status_code == 302, f"{method.__name__.upper()} {url} answered {response.status_code}"
        location = response["Location"]
        assert location.startswith(reverse("accounts:sign-in")) or location.startswith("/admin/login/"), (
            location
        )


def test_it_walks_a_reasonable_number_of_patterns() -> None:
    # Guards the walk itself: if it found nothing, the test above would pass vacuously.
    names = {name for _, name in ALL_PATTERNS}
    assert {"shop:home", "customers:search", "workshop:board", "workshop:check-in"} <= names


# (url name, kwargs factory key, method, the roles that must be refused)
WRITE_VIEWS = [
    ("customers:customer-new", None, "post", ["technician"]),
    ("customers:customer-edit", "customer", "post", ["technician"]),
    ("customers:unit-new", "customer", "post", ["technician"]),
    ("customers:unit-edit", "unit", "post", ["technician"]),
    ("workshop:check-in", "unit", "post", ["technician"]),
    ("workshop:quote", None, "post", ["technician"]),
]


@pytest.mark.parametrize(("name", "needs", "method", "refused"), WRITE_VIEWS)
def test_it_refuses_write_views_to_roles_without_the_permission(
    client, role_users, unit, name, needs, method, refused
) -> None:
    kwargs = {}
    if needs == "customer":
        kwargs = {"customer_id": unit.customer_id}
    elif needs == "unit":
        kwargs = {"unit_id": unit.pk}
    url = reverse(name, kwargs=kwargs)
    for role, user in role_users.items():
        client.force_login(user)
        response = getattr(client, method)(url, {})
        if role in refused:
            assert response.status_code == 403, f"{role} got {response.status_code} on {name}"
        else:
            assert response.status_code in {200, 302}, f"{role} got {response.status_code} on {name}"


def test_it_refuses_moves_the_role_may_not_make(client, role_users, work_order) -> None:
    url = reverse("workshop:move", kwargs={"number": work_order.number})
    client.force_login(role_users["technician"])
    assert client.post(url, {"to": "cancelled"}).status_code == 403
    client.force_login(role_users["front_desk"])
    assert client.post(url, {"to": "on_the_bench"}).status_code == 403
    work_order.refresh_from_db()
    assert work_order.status == "checked_in"


def test_it_keeps_the_admin_for_the_owner(client, role_users) -> None:
    client.force_login(role_users["front_desk"])
    response = client.get("/admin/", follow=True)  # not staff: the admin sends them to its sign-in
    assert response.status_code == 403
    client.force_login(role_users["owner"])
    assert client.get("/admin/").status_code == 200
