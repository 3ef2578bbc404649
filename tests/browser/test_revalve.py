"""A technician records a revalve in a real browser: the stack before, the stack after, the ratio and both plots."""

from __future__ import annotations

import re

import pytest

from shopdesk.workshop import services
from shopdesk.workshop.models import ShimStackRecord
from tests.browser.conftest import sign_in
from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

STIFFER = re.compile(r"% stiffer|times as stiff")
BEFORE = [("16", "0.10", "3"), ("14", "0.10", "1"), ("12", "0.10", "1")]


def _fill_stack(editor, lines, *, clamp: str) -> None:
    for index, (od, thickness, count) in enumerate(lines):
        rows = editor.locator("tr.shim-row")
        if rows.count() <= index:
            before = rows.count()
            editor.locator("button:text('Add a row')").click()
            rows.nth(before).wait_for()
        row = editor.locator("tr.shim-row").nth(index)
        row.locator("input[name$='-od']").fill(od)
        row.locator("input[name$='-thickness']").fill(thickness)
        row.locator("input[name$='-count']").fill(count)
    editor.locator("input[name$='-clamp_mm']").fill(clamp)
    editor.locator("input[name$='-piston_diameter_mm']").fill("18")
    editor.locator("input[name$='-port_area_mm2']").fill("20")
    editor.locator("input[name$='-port_radius_mm']").fill("7")
    editor.locator("input[name$='-bleed_mm']").fill("0.8")


def test_technician_enters_a_stack_before_and_after_and_sees_the_ratio_and_plots(
    page, screenshot, technician, work_order
) -> None:
    from playwright.sync_api import expect

    services.work_order_take(work_order=work_order, by=technician)
    sign_in(page, "bench", PASSWORD)
    page.goto(work_order.get_absolute_url())
    page.locator("#summary-rebound").get_by_role("link", name="Record").click()
    panel = page.locator("#valve-panel")
    expect(panel).to_contain_text("Rebound stack on the piston")

    before = panel.locator("#stack-before")
    _fill_stack(before, BEFORE, clamp="8")
    # A typing error is refused at its row, and what was typed stays.
    before.locator("tr.shim-row").nth(1).locator("input[name$='-thickness']").fill("1.5")
    before.locator("button:text('Save the stack before')").click()
    expect(page.locator("#stack-before")).to_contain_text("is not a shim")
    expect(page.locator("#stack-before tr.shim-row").nth(0).locator("input[name$='-od']")).to_have_value("16")
    page.locator("#stack-before tr.shim-row").nth(1).locator("input[name$='-thickness']").fill("0.10")
    page.locator("#stack-before button:text('Save the stack before')").click()
    expect(page.locator("#stack-before")).to_contain_text("N/mm")

    after = page.locator("#stack-after")
    expect(after.locator("tr.shim-row").nth(0).locator("input[name$='-od']")).to_have_value("16.0")
    after.locator("tr.shim-row").nth(0).locator("input[name$='-thickness']").fill("0.15")
    after.locator("button:text('Save the stack after')").click()
    comparison = page.locator("#comparison")
    expect(comparison).to_contain_text(STIFFER)
    expect(page.locator("#lift-plot svg")).to_be_visible()
    expect(page.locator("#force-plot svg")).to_be_visible()
    expect(page.locator("#summary-rebound")).to_contain_text(STIFFER)
    screenshot("revalve-rebound")
    assert ShimStackRecord.objects.filter(work_order=work_order, valve="rebound").count() == 2
