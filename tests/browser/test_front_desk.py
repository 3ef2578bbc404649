"""The front desk's job end to end in a real browser."""

from __future__ import annotations

import re

import pytest

from shopdesk.workshop.models import Status, WorkOrder
from tests.browser.conftest import sign_in
from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def test_front_desk_finds_a_customer_checks_a_unit_in_and_moves_it_on(
    page, screenshot, front_desk, unit, service_types
) -> None:
    from playwright.sync_api import expect

    sign_in(page, "desk", PASSWORD)

    # Find the customer by typing part of the phone number; htmx shows results as typed.
    page.fill("#search-q", "960 41")
    expect(page.locator("#search-results")).to_contain_text("Ada Marsh")
    screenshot("front-desk-1-search")
    page.click("#search-results >> text=Ada Marsh")
    page.wait_for_url(re.compile(r"/customers/\d+/$"))

    page.click("text=Check in")
    page.wait_for_url(re.compile(r"/units/\d+/check-in/$"))
    page.check("text=Lower-leg service")
    page.check("text=Damper service")
    # The quote follows the ticks: 45.00 + 89.50 = 134.50, plus 20 % tax = 161.40.
    expect(page.locator("#quote")).to_contain_text("£161.40")
    page.fill("textarea[name=job-complaint]", "Clunks over roots and loses air overnight.")
    page.fill("input[name=arrival-positive_pressure_kpa]", "5.9 bar")
    page.fill("input[name=arrival-rebound_clicks]", "8")
    screenshot("front-desk-2-check-in")
    page.click("button:text('Check in')")
    page.wait_for_url(re.compile(r"/jobs/\d{4}-\d{4}/$"))
    expect(page.locator("h1")).to_contain_text("Checked in")

    work_order = WorkOrder.objects.get()
    assert work_order.arrival.positive_pressure_kpa == pytest.approx(590.0)  # 5.9 bar = 590 kPa exactly
    assert work_order.services.count() == 2

    page.click("nav >> text=Status board")
    job = page.locator(f"article[data-job='{work_order.number}']")
    expect(job).to_be_visible()
    job.locator("button:text('Waiting for parts')").click()
    expect(page.locator("#messages")).to_contain_text("is now waiting for parts")
    expect(page.locator("section[aria-label='Waiting for parts']")).to_contain_text(work_order.number)
    screenshot("front-desk-3-board")

    work_order.refresh_from_db()
    assert work_order.status == Status.WAITING_FOR_PARTS
    event = work_order.events.get(kind="status")
    assert event.by == front_desk


def test_bad_input_is_shown_at_the_field(page, front_desk, unit, service_types) -> None:
    from playwright.sync_api import expect

    sign_in(page, "desk", PASSWORD)
    page.goto(f"/units/{unit.pk}/check-in/")
    page.check("text=Damper service")
    page.fill("input[name=arrival-positive_pressure_kpa]", "85 kg")
    page.click("button:text('Check in')")
    field = page.locator(".field", has=page.locator("input[name=arrival-positive_pressure_kpa]"))
    expect(field).to_contain_text("is not a pressure")
    assert WorkOrder.objects.count() == 0
