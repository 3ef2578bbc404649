"""Every main page, the owner's admin and the error pages under the content security policy in a
real browser: no violation reported."""

from __future__ import annotations

import pytest
from django.conf import settings
from django.urls import reverse
from django.utils import timezone

from shopdesk.documents.models import PrintBatch
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


def _watch(page) -> list[str]:
    """Records the console and the policy's violations on every page ``page`` opens from now on."""
    console: list[str] = []
    page.on("console", lambda message: console.append(f"{message.type}: {message.text}"))
    page.on("pageerror", lambda error: console.append(f"pageerror: {error}"))
    page.add_init_script(LISTEN)
    return console


def _refused(console: list[str]) -> str:
    return "\n".join(line for line in console if "Content Security Policy" in line or "pageerror" in line)


def test_no_main_page_breaks_the_policy(page, owner, work_order, oil_part) -> None:
    from playwright.sync_api import expect

    console = _watch(page)
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

    assert not _refused(console), _refused(console)


def test_no_admin_form_or_error_page_breaks_the_policy(
    browser, live_server, page, owner, work_order, oil_part
):
    from playwright.sync_api import expect

    # The sign-in lock-out page, in a browser of its own: a user name tried too often is paused.
    stranger = browser.new_context(base_url=live_server.url)
    stranger_page = stranger.new_page()
    stranger_console = _watch(stranger_page)
    for _ in range(settings.AXES_FAILURE_LIMIT):
        stranger_page.goto(reverse("accounts:sign-in"))
        stranger_page.fill("input[name=username]", "someone")
        stranger_page.fill("input[name=password]", "not-the-password")
        with stranger_page.expect_navigation() as sent:
            stranger_page.click("button[type=submit]")
    assert sent.value.status == 429
    expect(stranger_page.locator("h1")).to_have_text("Sign-in paused")
    assert stranger_page.evaluate("window.__violations") == []
    stranger.close()
    assert not _refused(stranger_console), _refused(stranger_console)

    console = _watch(page)
    sign_in(page, "owner", PASSWORD)
    batch = PrintBatch.objects.create(
        created_at=timezone.now(),
        created_by=owner,
        numbers=[work_order.number],
        base_url=live_server.url,
        state=PrintBatch.State.DONE,
        done_count=1,
        file_name="job-cards-1.pdf",
        pdf=b"%PDF-1.7 a batch",
    )
    oil_part.name = "Test 5 wt oil, 1 L"
    oil_part.save()  # two versions in the part's history
    unit_model = work_order.unit.unit_model
    pages = [
        (reverse("stock:part-edit", kwargs={"part_id": oil_part.pk}), 200),
        (reverse("stock:receive", kwargs={"part_id": oil_part.pk}), 200),
        (reverse("stock:adjust", kwargs={"part_id": oil_part.pk}), 200),
        (reverse("documents:batch", kwargs={"batch_id": batch.pk}), 200),
        # The owner's admin: the index, lists, change forms (with inlines), a history, a delete
        # confirmation and the sign-in lock list.
        (reverse("admin:index"), 200),
        (reverse("admin:stock_part_changelist"), 200),
        (reverse("admin:specs_unitmodel_changelist"), 200),
        (reverse("admin:stock_stockmovement_changelist"), 200),
        (reverse("admin:specs_unitmodel_change", args=[unit_model.pk]), 200),
        (reverse("admin:stock_part_change", args=[oil_part.pk]), 200),
        (reverse("admin:customers_unit_change", args=[work_order.unit.pk]), 200),
        (reverse("admin:specs_unitmodel_add"), 200),
        (reverse("admin:stock_part_history", args=[oil_part.pk]), 200),
        (reverse("admin:specs_unitmodel_history", args=[unit_model.pk]), 200),
        (reverse("admin:stock_part_delete", args=[oil_part.pk]), 200),
        (reverse("admin:axes_accessattempt_changelist"), 200),
        # The error pages: refused (the admin makes no print batches by hand), not found.
        (reverse("admin:documents_printbatch_add"), 403),
        ("/no-such-page/", 404),
    ]
    for url, status in pages:
        response = page.goto(url)
        assert response is not None and response.status == status, url
        assert page.evaluate("window.__violations") == [], url
    # The version list keeps its look: the rule that was an inline style comes from admin.css.
    page.goto(reverse("admin:stock_part_history", args=[oil_part.pk]))
    expect(page.locator("#change-history + .paginator")).to_have_css("border-top-width", "0px")
    # The admin's scripts at work: another chamber row on the spec sheet, the actions' select-all.
    page.goto(reverse("admin:specs_unitmodel_change", args=[unit_model.pk]))
    page.locator(".add-row a").first.click()
    page.goto(reverse("admin:stock_part_changelist"))
    page.check("#action-toggle")
    assert page.evaluate("window.__violations") == []

    # The CSRF failure page: a form sent after its cookie is gone.
    page.goto(reverse("customers:customer-new"))
    page.context.clear_cookies(name="csrftoken")
    page.fill("input[name=name]", "Kit Cookieless")
    page.fill("input[name=phone]", "01632 960 123")
    with page.expect_navigation() as sent:
        page.click("main button[type=submit]")
    assert sent.value.status == 403
    expect(page.locator("h1")).to_have_text("The form was not sent")
    assert page.evaluate("window.__violations") == []

    assert not _refused(console), _refused(console)
