"""What a QR or barcode scanner types (a job card's address or a job number, then Enter) opens the job."""

from __future__ import annotations

import pytest
from django.urls import reverse

from shopdesk.documents.renderer import job_address
from shopdesk.workshop.selectors import work_order_from_scan


def test_the_address_on_the_card_or_the_number_finds_the_job(work_order, settings):
    settings.SHOP_BASE_URL = "https://desk.shop.example"
    for typed in (
        job_address(work_order),
        f"  {job_address(work_order)}\n",
        f"http://192.0.2.7:8000/jobs/{work_order.number}/",  # a card printed under another host name
        f"/jobs/{work_order.number}/",
        work_order.number,
    ):
        assert work_order_from_scan(typed) == work_order, typed


@pytest.mark.django_db
@pytest.mark.parametrize(
    "typed",
    [
        "2099-0001",
        "https://desk.shop.example/jobs/2099-0001/",
        "https://desk.shop.example/board/",
        "Marsh",
        "",
    ],
)
def test_anything_else_is_not_a_scan(typed):
    assert work_order_from_scan(typed) is None


@pytest.mark.parametrize("role", ["front_desk", "technician"])
def test_enter_in_the_search_box_opens_the_scanned_job(client, role_users, work_order, role):
    client.force_login(role_users[role])
    for typed in (work_order.number, f"http://testserver/jobs/{work_order.number}/"):
        response = client.get(reverse("customers:search"), {"q": typed})
        assert response.status_code == 302
        assert response["Location"] == work_order.get_absolute_url()


def test_the_bench_queue_box_sends_what_is_scanned_to_the_search(client, technician):
    client.force_login(technician)
    page = client.get(reverse("workshop:bench")).content.decode()
    assert f'action="{reverse("customers:search")}"' in page
    assert 'name="q"' in page and "autofocus" in page


def test_the_live_search_shows_the_job_instead_of_jumping(client, front_desk, work_order):
    client.force_login(front_desk)
    response = client.get(reverse("customers:search"), {"q": work_order.number}, HTTP_HX_REQUEST="true")
    assert response.status_code == 200
    page = response.content.decode()
    assert f'href="{work_order.get_absolute_url()}"' in page
    assert "Nothing matches" not in page


def test_an_unknown_number_is_searched_as_typed(client, front_desk, work_order):
    client.force_login(front_desk)
    response = client.get(reverse("customers:search"), {"q": "2099-0001"})
    assert response.status_code == 200
    assert "Nothing matches “2099-0001”" in response.content.decode()
