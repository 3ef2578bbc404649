"""The bench technician's job end to end, then the hand-back at the front desk, in a real browser."""

from __future__ import annotations

import re
from decimal import Decimal

import pytest

from shopdesk.workshop.models import Status, WorkOrder
from tests.browser.conftest import sign_in
from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def test_technician_works_a_job_and_the_front_desk_hands_it_back(
    page, screenshot, technician, front_desk, owner, work_order, oil_part
) -> None:
    from playwright.sync_api import expect

    from shopdesk.stock.models import Part
    from shopdesk.stock.services import stock_receive

    seal_kit = Part.objects.create(
        part_number="SK-34",
        name="Seal kit 34 mm",
        kind=Part.Kind.SEAL_KIT,
        unit_of_measure=Part.UnitOfMeasure.EACH,
        reorder_level=Decimal("2"),
        cost=Decimal("9.00"),
        price=Decimal("18.00"),
    )
    stock_receive(part=seal_kit, quantity=Decimal("3"), by=owner)
    damper = work_order.unit.unit_model.chambers.get(kind="damper")
    lowers = work_order.unit.unit_model.chambers.get(kind="lowers")

    sign_in(page, "bench", PASSWORD)
    page.click("nav >> text=Bench queue")
    page.locator("tr", has_text=work_order.number).locator("button:text('Take')").click()
    page.wait_for_url(re.compile(rf"/jobs/{work_order.number}/$"))
    expect(page.locator("h1")).to_contain_text("On the bench")

    damper_card = page.locator(f"#chamber-{damper.pk}")
    damper_card.locator(f"input[name=oil-{damper.pk}-drained]").fill("88 g")
    damper_card.locator(f"select[name=oil-{damper.pk}-condition]").select_option("dark")
    damper_card.locator(f"input[name=oil-{damper.pk}-filled_ml]").fill("95")
    damper_card.locator(f"select[name=oil-{damper.pk}-oil_part]").select_option(str(oil_part.pk))
    damper_card.locator("button:text('Save oil')").click()
    expect(page.locator(f"#chamber-{damper.pk}")).to_contain_text("88.0 g on the scale")

    lowers_card = page.locator(f"#chamber-{lowers.pk}")
    lowers_card.locator(f"input[name=oil-{lowers.pk}-drained]").fill("14 mL")
    lowers_card.locator(f"input[name=oil-{lowers.pk}-filled_ml]").fill("15")
    lowers_card.locator(f"select[name=oil-{lowers.pk}-oil_part]").select_option(str(oil_part.pk))
    lowers_card.locator("button:text('Save oil')").click()
    expect(page.locator(f"#chamber-{lowers.pk}")).to_contain_text("within the shop's thresholds")

    parts = page.locator("#parts")
    parts.locator("select[name=part-part]").select_option(str(seal_kit.pk))
    parts.locator("button:text('Use part')").click()
    expect(page.locator("#parts table")).to_contain_text("SK-34 · Seal kit 34 mm")

    spring = page.locator("#spring-after")
    spring.locator("input[name=spring-after-positive_pressure_kpa]").fill("84 psi")
    spring.locator("input[name=spring-after-spacer_count]").fill("2")
    spring.locator("button:text('Save spring after')").click()
    expect(page.locator(".plot svg")).to_be_visible()

    page.locator("#labour input[name=labour-minutes]").fill("80")
    page.locator("#labour button:text('Add labour')").click()
    expect(page.locator("#labour")).to_contain_text("80 min in all")

    total = work_order.final_checks.count()
    for ticked in range(1, total + 1):
        page.locator("#checks button.tick:not(.done)").first.click()
        expect(page.locator("#checks button.tick.done")).to_have_count(ticked)
    expect(page.locator("#checks button.tick:not(.done)")).to_have_count(0)
    page.click("button:text('To final check')")
    page.click("button:text('Ready for pickup')")
    expect(page.locator("h1")).to_contain_text("Ready for pickup")
    screenshot("bench-1-job-ready")

    work_order.refresh_from_db()
    assert work_order.status == Status.READY_FOR_PICKUP
    page.click("button:text('Sign out')")

    sign_in(page, "desk", PASSWORD)
    page.goto(f"/jobs/{work_order.number}/")
    # 45.00 + 89.50 services + 18.00 seal kit + 110 mL oil x 0.03 = 3.30 -> 155.80; 20 % tax 31.16 -> 186.96
    expect(page.locator("#price")).to_contain_text("£186.96")
    page.click("button:text('Collected')")
    expect(page.locator("h1")).to_contain_text("Collected")
    page.click(f"text={work_order.unit.unit_model.maker} {work_order.unit.unit_model.name}")
    expect(page.locator("#due")).to_contain_text("Damper service")
    expect(page.locator("#history")).to_contain_text(work_order.number)
    screenshot("bench-2-unit-due-dates")
    assert WorkOrder.objects.get().status == Status.COLLECTED
