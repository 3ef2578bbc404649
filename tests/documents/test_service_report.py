"""The customer's service report: what it says, the owner's wording, and refusing a job not done."""

from __future__ import annotations

from decimal import Decimal

import pytest
from django.core.exceptions import ValidationError
from django.core.management import CommandError, call_command
from django.utils import timezone

from shopdesk.documents.models import DocumentWording
from shopdesk.documents.renderer import render_document
from shopdesk.documents.selectors import DocumentRefused
from shopdesk.shop.templatetags.shop import money
from shopdesk.workshop import selectors, services
from tests.documents.conftest import pdf_pages, pdf_text


def test_it_reports_work_findings_parts_spring_stacks_total_and_due_dates(ready_work_order, tmp_path):
    document = render_document(ready_work_order, "service_report")
    assert document.filename == f"service-report-{ready_work_order.number}.pdf"
    text = pdf_text(document.content, tmp_path)
    assert ready_work_order.number in text
    assert "RF34-0001" in text
    # finish_bench_work drains exactly the spec from each required chamber, dark oil
    assert "95 mL out against 95 mL in the spec (+0 %)" in text
    assert "Dark oil" in text
    assert "Spring force (N)" in text and "Travel (mm)" in text  # the SVG curve's axes, drawn as text
    assert "Rebound stack on the piston" in text and "3 × 20 × 0.15" in text and "2 × 20 × 0.15" in text
    total = services.job_price(ready_work_order).total.total
    assert money(total) in text
    due_dates = selectors.unit_due_dates(ready_work_order.unit)
    assert len(due_dates) == 2  # lower-leg and damper services, from the conftest service types
    for due in due_dates:
        assert f"{due.service_type.name}" in text
        assert f"{due.next_due_on.day} {due.next_due_on:%b %Y}" in text
    assert "Hello Ada Marsh" in text  # the default greeting, filled in
    assert pdf_pages(document.content, tmp_path) >= 1


def test_it_uses_the_owners_wording(ready_work_order, tmp_path):
    DocumentWording.objects.create(block="closing", text="See you on the trail, {customer}. Job {number}.")
    DocumentWording.objects.create(block="greeting", text="")  # empty: the default stays
    text = pdf_text(render_document(ready_work_order, "service_report").content, tmp_path)
    assert f"See you on the trail, Ada Marsh. Job {ready_work_order.number}." in text
    assert "Hello Ada Marsh" in text


@pytest.mark.django_db
@pytest.mark.parametrize(
    ("text", "message"),
    [("Hi {name}", "Unknown placeholder {name}"), ("Hi {customer", "A brace does not close")],
)
def test_it_refuses_wording_with_a_placeholder_it_cannot_fill(text, message):
    wording = DocumentWording(block="greeting", text=text)
    with pytest.raises(ValidationError, match=message):
        wording.full_clean()


def test_it_refuses_a_job_that_is_not_ready(work_order):
    with pytest.raises(DocumentRefused, match="once the job is ready for pickup"):
        render_document(work_order, "service_report")
    with pytest.raises(CommandError, match="once the job is ready for pickup"):
        call_command("print_service_report", work_order.number)


def test_it_reports_a_job_without_email_or_complaint(ready_work_order, tmp_path):
    ready_work_order.customer.email = ""
    ready_work_order.customer.save()
    ready_work_order.complaint = ""
    ready_work_order.save()
    text = pdf_text(render_document(ready_work_order, "service_report").content, tmp_path)
    assert ready_work_order.number in text


def test_the_command_writes_the_report(ready_work_order, tmp_path):
    output = tmp_path / "report.pdf"
    call_command("print_service_report", ready_work_order.number, "-o", str(output))
    text = pdf_text(output.read_bytes(), tmp_path)
    assert ready_work_order.number in text and "What we found".upper() in text


@pytest.mark.django_db
def test_the_command_refuses_an_unknown_number():
    with pytest.raises(CommandError, match="No job numbered 2099-0001"):
        call_command("print_service_report", "2099-0001")


def test_the_owner_edits_the_wording_in_the_admin_and_a_bad_placeholder_is_refused_at_the_field(
    client, owner
):
    client.force_login(owner)
    url = "/admin/documents/documentwording/add/"
    assert client.get(url).status_code == 200
    response = client.post(url, {"block": "note", "text": "Ride well, {rider}."})
    assert response.status_code == 200  # the form again, with the error at the text
    assert "Unknown placeholder {rider}" in response.content.decode()
    assert not DocumentWording.objects.exists()
    response = client.post(url, {"block": "note", "text": "Ride well, {customer}."})
    assert response.status_code == 302
    assert DocumentWording.objects.get().text == "Ride well, {customer}."


def test_it_marks_a_service_that_is_already_overdue(ready_work_order, tmp_path):
    # The job did the lower-leg and damper services; an air-spring service it did not do counts
    # from the unit's purchase, set five years back, far past its twelve-month interval.
    import datetime

    from shopdesk.specs.models import ServiceType

    ServiceType.objects.create(
        name="Air-spring service",
        scope="air_spring",
        default_interval_hours=None,
        default_interval_months=12,
        price=Decimal("35.00"),
        labour_minutes=30,
        display_order=3,
    )
    unit = ready_work_order.unit
    unit.purchased_on = datetime.date.today() - datetime.timedelta(days=5 * 365)
    unit.save(update_fields=["purchased_on"])
    statuses = {due.service_type.name: str(due.status) for due in selectors.unit_due_dates(unit)}
    assert statuses == {"Lower-leg service": "ok", "Damper service": "ok", "Air-spring service": "overdue"}
    text = pdf_text(render_document(ready_work_order, "service_report").content, tmp_path)
    assert text.count("overdue: book it in") == 1


def test_it_shows_what_was_paid_and_what_is_still_to_pay(ready_work_order, front_desk, tmp_path):
    from shopdesk.workshop.services.payments import payment_take

    total = services.job_price(ready_work_order).total.total
    assert "Paid" not in pdf_text(render_document(ready_work_order, "service_report").content, tmp_path)
    payment_take(work_order=ready_work_order, amount=Decimal("50.00"), method="cash", by=front_desk)
    text = pdf_text(render_document(ready_work_order, "service_report").content, tmp_path)
    # pdftotext reads the labels' column and the amounts' column apart: look for each.
    today = timezone.localdate()
    assert f"Paid {today.day} {today:%b %Y}, cash" in text and "£50.00" in text
    assert "Still to pay" in text and money(total - Decimal("50.00")) in text
    payment_take(work_order=ready_work_order, amount=total - Decimal("50.00"), method="card", by=front_desk)
    text = pdf_text(render_document(ready_work_order, "service_report").content, tmp_path)
    assert "Paid in full" in text and "Still to pay" not in text and "£0.00" in text
