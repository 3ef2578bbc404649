"""Request limits and the shop's own 400/403/404/500 pages: never a stack trace with DEBUG off."""

from __future__ import annotations

import re

import pytest
from django.conf import settings
from django.test import Client, override_settings
from django.urls import path, reverse

from shopdesk import urls as shop_urls
from shopdesk.customers.models import Customer

pytestmark = pytest.mark.django_db

DEBUG_MARKERS = ("Traceback", "Request Method:", "Django Version", "settings.py", "You're seeing this")


def _boom(request):
    raise RuntimeError("secret detail of a failure")


# A test-only URL that fails: the shop's own URLs plus one view that raises.
urlpatterns = [*shop_urls.urlpatterns, path("test-only/boom/", _boom)]


def _assert_no_debug_page(response) -> str:
    page = response.content.decode()
    for marker in DEBUG_MARKERS:
        assert marker not in page, marker
    return page


def test_the_limits_are_set() -> None:
    assert settings.DATA_UPLOAD_MAX_MEMORY_SIZE == 2_621_440  # 2.5 MiB
    assert settings.DATA_UPLOAD_MAX_NUMBER_FIELDS == 1000
    assert settings.FILE_UPLOAD_MAX_MEMORY_SIZE == 2_621_440


def test_a_post_over_two_and_a_half_megabytes_gets_the_400_page(client, front_desk) -> None:
    client.force_login(front_desk)
    response = client.post(reverse("customers:customer-new"), {"name": "Big Post", "notes": "x" * 2_700_000})
    assert response.status_code == 400
    page = _assert_no_debug_page(response)
    assert "Request refused" in page and "2.5 MB" in page
    assert not Customer.objects.filter(name="Big Post").exists()


def test_a_post_just_under_the_limit_is_read(client, front_desk) -> None:
    client.force_login(front_desk)
    response = client.post(reverse("customers:customer-new"), {"name": "", "notes": "x" * 2_000_000})
    assert response.status_code == 200  # read and re-rendered with the form's own error


def test_a_post_of_more_than_a_thousand_fields_gets_the_400_page(client, front_desk) -> None:
    client.force_login(front_desk)
    fields = {f"field{i}": "1" for i in range(1001)}
    response = client.post(reverse("customers:customer-new"), {"name": "Many Fields", **fields})
    assert response.status_code == 400
    assert "Request refused" in _assert_no_debug_page(response)
    assert not Customer.objects.filter(name="Many Fields").exists()


def test_a_role_without_the_permission_gets_the_403_page(client, technician) -> None:
    client.force_login(technician)
    response = client.get(reverse("customers:customer-new"))
    assert response.status_code == 403
    assert "Not for your role" in _assert_no_debug_page(response)


def test_a_guessed_id_gets_the_404_page(client, front_desk) -> None:
    client.force_login(front_desk)
    for url in ("/customers/987654/", "/jobs/2099-9999/", "/no-such-page/"):
        response = client.get(url)
        assert response.status_code == 404, url
        page = _assert_no_debug_page(response)
        assert "There is no such page or record" in page, url


@override_settings(ROOT_URLCONF=__name__, DEBUG=False)
def test_a_failure_gets_the_500_page_without_its_details(client, front_desk) -> None:
    client.force_login(front_desk)
    client.raise_request_exception = False
    response = client.get("/test-only/boom/")
    assert response.status_code == 500
    page = _assert_no_debug_page(response)
    assert "Something went wrong" in page
    assert "secret detail" not in page and "RuntimeError" not in page


def _assert_no_inline_style_or_script(page: str) -> None:
    assert "<style" not in page.lower()
    assert not re.search(r"\sstyle\s*=", page, re.IGNORECASE)
    assert not re.search(r"<script\b(?![^>]*\bsrc=)", page, re.IGNORECASE)


def test_a_form_sent_without_its_token_gets_the_shops_page(front_desk) -> None:
    client = Client(enforce_csrf_checks=True)
    client.force_login(front_desk)
    assert client.get(reverse("customers:customer-new")).status_code == 200  # sets the CSRF cookie
    response = client.post(
        reverse("customers:customer-new"),
        {"name": "No Token", "phone": "01632 960 999"},
        HTTP_REFERER="http://testserver/customers/new/?from=desk",
    )
    assert response.status_code == 403
    page = _assert_no_debug_page(response)
    _assert_no_inline_style_or_script(page)
    assert "CSRF verification failed" not in page  # Django's own page
    assert "The form was not sent" in page and "The form was open too long" in page
    assert "Nothing was saved, and you are still signed in." in page
    assert '<a href="/customers/new/?from=desk">Open the form' in page
    assert "Content-Security-Policy" in response.headers
    assert not Customer.objects.filter(name="No Token").exists()
    # Still signed in, as the page says, with a token that a reloaded form sends.
    assert client.get(reverse("shop:home")).status_code == 200
    form = client.get(reverse("customers:customer-new")).content.decode()
    token = re.search(r'name="csrfmiddlewaretoken" value="([^"]+)"', form).group(1)
    again = client.post(
        reverse("customers:customer-new"),
        {"name": "No Token", "phone": "01632 960 999", "csrfmiddlewaretoken": token},
    )
    assert again.status_code == 302 and Customer.objects.filter(name="No Token").exists()


def test_a_sign_in_without_a_cookie_is_told_cookies_are_needed(front_desk) -> None:
    client = Client(enforce_csrf_checks=True)
    response = client.post(
        reverse("accounts:sign-in"),
        {"username": "desk", "password": "x"},
        HTTP_REFERER="https://elsewhere.example/sign-in/",
    )
    assert response.status_code == 403
    page = _assert_no_debug_page(response)
    _assert_no_inline_style_or_script(page)
    assert "without this shop's cookie" in page and "Nothing was saved." in page
    assert "still signed in" not in page
    assert "elsewhere.example" not in page  # another site's address is never offered as a link
