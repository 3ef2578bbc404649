"""``next`` values: only an address on this site is followed; anything else goes to the fallback."""

from __future__ import annotations

import pytest
from django.test import RequestFactory
from django.urls import reverse

from shopdesk.shop.redirects import safe_next

REFUSED = [
    "",
    None,
    "https://elsewhere.example/",
    "//elsewhere.example/owner/",
    "///elsewhere.example/",
    "\\\\elsewhere.example/",
    "/\\elsewhere.example/",
    "javascript:alert(1)",
    "http:///elsewhere.example/",
    " /owner/",  # passes url_has_allowed_host_and_scheme, which strips it first
    "/owner/ ",
    "/owner/\n",  # urlsplit drops the newline: what was checked is not what a browser reads
    "/\t/elsewhere.example/",  # a browser drops the tab and reads //elsewhere.example
    "/owner/\x00",
]


@pytest.mark.parametrize("value", REFUSED)
def test_anything_but_an_address_here_goes_to_the_fallback(value) -> None:
    request = RequestFactory().get("/")
    assert safe_next(request, value, fallback="owner:dashboard") == "/owner/"


@pytest.mark.parametrize("value", ["/owner/?consent=yes&after=2026-03-14.12", "http://testserver/owner/"])
def test_an_address_here_is_followed(value) -> None:
    request = RequestFactory().get("/")
    assert safe_next(request, value, fallback="owner:dashboard") == value


def test_a_request_by_https_is_not_sent_back_by_http() -> None:
    request = RequestFactory().get("/", secure=True)
    assert safe_next(request, "http://testserver/owner/", fallback="owner:dashboard") == "/owner/"
    assert (
        safe_next(request, "https://testserver/owner/", fallback="owner:dashboard")
        == "https://testserver/owner/"
    )


@pytest.mark.django_db
@pytest.mark.parametrize("value", ["/admin/\n", " /admin/", "//elsewhere.example/admin/"])
def test_the_admins_door_sends_a_bad_next_to_the_admin(client, owner, value) -> None:
    client.force_login(owner)
    response = client.get(reverse("admin-sign-in"), {"next": value})
    assert response.status_code == 302 and response["Location"] == reverse("admin:index")
