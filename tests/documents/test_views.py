"""The documents' pages: who may print what, 404s, the job page's buttons and check in and print."""

from __future__ import annotations

import pytest
from django.urls import reverse

from tests.documents.conftest import pdf_png, pdf_text


def test_every_role_prints_the_job_card(client, role_users, work_order, tmp_path):
    url = reverse("documents:job-card", args=[work_order.number])
    for role, user in role_users.items():
        client.force_login(user)
        response = client.get(url)
        assert response.status_code == 200, role
        assert response["Content-Type"] == "application/pdf"
        assert response["Content-Disposition"] == f'inline; filename="job-card-{work_order.number}.pdf"'
    assert work_order.number in pdf_text(response.content, tmp_path)
    download = client.get(url, {"download": "1"})
    assert download["Content-Disposition"].startswith("attachment;")


def test_the_card_from_a_page_points_at_the_address_it_was_asked_on(client, front_desk, work_order, tmp_path):
    zxingcpp = pytest.importorskip("zxingcpp", reason="zxing-cpp decodes the QR code (requirements-dev.txt)")
    from PIL import Image

    client.force_login(front_desk)
    response = client.get(reverse("documents:job-card", args=[work_order.number]), HTTP_HOST="localhost")
    image = Image.open(pdf_png(response.content, tmp_path))
    decoded = [result.text for result in zxingcpp.read_barcodes(image)]
    assert decoded == [f"http://localhost/jobs/{work_order.number}/"]


def test_the_service_report_is_for_the_front_desk_and_the_owner(client, role_users, ready_work_order):
    url = reverse("documents:service-report", args=[ready_work_order.number])
    client.force_login(role_users["technician"])
    assert client.get(url).status_code == 403
    for role in ("front_desk", "owner"):
        client.force_login(role_users[role])
        response = client.get(url)
        assert response.status_code == 200, role
        assert response["Content-Type"] == "application/pdf"


def test_the_service_report_of_an_unfinished_job_says_why_on_the_job_page(client, front_desk, work_order):
    client.force_login(front_desk)
    response = client.get(reverse("documents:service-report", args=[work_order.number]), follow=True)
    assert response.redirect_chain == [(work_order.get_absolute_url(), 302)]
    assert "once the job is ready for pickup" in response.content.decode()


@pytest.mark.parametrize("name", ["documents:job-card", "documents:service-report"])
def test_an_unknown_job_is_a_404(client, owner, name):
    client.force_login(owner)
    assert client.get(reverse(name, args=["2099-0001"])).status_code == 404


def test_the_job_page_shows_the_buttons_each_role_may_use(client, role_users, work_order, ready_work_order):
    card = reverse("documents:job-card", args=[work_order.number])
    report = reverse("documents:service-report", args=[work_order.number])
    client.force_login(role_users["front_desk"])
    page = client.get(work_order.get_absolute_url()).content.decode()
    assert card in page and report in page  # the conftest job is ready for pickup by now
    client.force_login(role_users["technician"])
    page = client.get(work_order.get_absolute_url()).content.decode()
    assert card in page and report not in page


def test_the_report_button_waits_for_the_job_to_be_ready(client, front_desk, work_order):
    client.force_login(front_desk)
    page = client.get(work_order.get_absolute_url()).content.decode()
    assert reverse("documents:job-card", args=[work_order.number]) in page
    assert reverse("documents:service-report", args=[work_order.number]) not in page


def test_check_in_and_print_opens_the_job_page_that_downloads_the_card(
    client, front_desk, unit, service_types
):
    client.force_login(front_desk)
    response = client.post(
        reverse("workshop:check-in", args=[unit.pk]),
        {"job-service_types": [service_types[0].pk], "job-complaint": "", "then": "print"},
    )
    assert response.status_code == 302
    number = unit.work_orders.get().number
    assert response["Location"] == f"/jobs/{number}/?print=job-card"
    page = client.get(response["Location"]).content.decode()
    card = reverse("documents:job-card", args=[number])
    assert f'<meta http-equiv="refresh" content="0;url={card}?download=1">' in page
    # Without the request to print, the page downloads nothing.
    assert 'http-equiv="refresh"' not in client.get(f"/jobs/{number}/").content.decode()


def test_plain_check_in_does_not_print(client, front_desk, unit, service_types):
    client.force_login(front_desk)
    response = client.post(
        reverse("workshop:check-in", args=[unit.pk]), {"job-service_types": [service_types[0].pk]}
    )
    assert response["Location"] == unit.work_orders.get().get_absolute_url()
