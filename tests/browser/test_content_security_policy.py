"""Every main page under the content security policy in a real browser: no violation reported."""

from __future__ import annotations

import pytest
from django.urls import reverse

from shopdesk.owner.services import due_refresh, unsubscribe_token
from tests.browser.conftest import sign_in
from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

# Playwright's init scripts run outside the page's policy; this one records what the policy blocks.
LISTEN = """
window.__violations = [];
document.addEventListener('securitypolicyviolation', (event) => {
  window.__violations.push(event.violatedDirective + ' ' + event.blockedURI);
});
"""


def test_no_main_page_breaks_the_policy(page, owner, work_order, oil_part) -> None:
    from playwright.sync_api import expect

    console = []
    page.on("console", lambda message: console.append(f"{message.type}: {message.text}"))
    page.on("pageerror", lambda error: console.append(f"pageerror: {error}"))
    page.add_init_script(LISTEN)
    sign_in(page, "owner", PASSWORD)

    unit = work_order.unit
    due_refresh(unit=unit)  # the dashboard and the wording preview have a row to show
    pages = [
        reverse("shop:home"),
        reverse("customers:search") + "?q=Ada",
        reverse("customers:customer", kwargs={"customer_id": unit.customer_id}),
        reverse("customers:customer-edit", kwargs={"customer_id": unit.customer_id}),
        reverse("customers:unit", kwargs={"unit_id": unit.pk}),
        reverse("customers:unit-edit", kwargs={"unit_id": unit.pk}),
        reverse("workshop:check-in", kwargs={"unit_id": unit.pk}),
        reverse("workshop:board"),
        reverse("workshop:bench"),
        reverse("workshop:work-order", kwargs={"number": work_order.number}),
        reverse("stock:list"),
        reverse("stock:part", kwargs={"part_id": oil_part.pk}),
        reverse("calculators:index"),
        reverse("customers:customer-new"),
        reverse("customers:unit-new", kwargs={"customer_id": unit.customer_id}),
        reverse("workshop:valve", kwargs={"number": work_order.number, "valve": "rebound"}),
        reverse("workshop:stack-library", kwargs={"unit_model_id": unit.unit_model_id}),
        reverse("stock:part-new"),
        reverse("documents:batch-new"),
        reverse("owner:dashboard"),
        reverse("owner:numbers"),
        reverse("owner:wording"),
        reverse("owner:unsubscribe", kwargs={"token": unsubscribe_token(customer_id=unit.customer_id)}),
    ]
    for url in pages:
        response = page.goto(url)
        assert response is not None and response.status == 200, url
        assert page.evaluate("window.__violations") == [], url

    # htmx at work: the search as typed swaps results in (htmx would add its indicator style here).
    page.goto(reverse("shop:home"))
    page.fill("#search-q", "Ada")
    expect(page.locator("#search-results")).to_contain_text("Ada Marsh")
    assert page.evaluate("window.__violations") == []
    page.goto(reverse("workshop:work-order", kwargs={"number": work_order.number}))
    assert page.evaluate("window.__violations") == []

    refused = [line for line in console if "Content Security Policy" in line or "pageerror" in line]
    assert not refused, "\n".join(refused)
