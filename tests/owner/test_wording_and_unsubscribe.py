"""The reminder's wording (placeholders checked when saved) and the signed unsubscribe link."""

from __future__ import annotations

import datetime

import pytest
from django.core import mail, signing
from django.test import override_settings
from django.utils import timezone

from shopdesk.customers.models import Customer
from shopdesk.owner.models import DueService, MessageWording
from shopdesk.owner.services import reminder_send, unsubscribe_token
from shopdesk.owner.wording import DEFAULT_BODY, wording_problems

URL = "/owner/wording/"


@pytest.mark.django_db
def test_only_the_owner_edits_the_wording(client, role_users) -> None:
    for role, user in role_users.items():
        client.force_login(user)
        assert client.get(URL).status_code == (200 if role == "owner" else 403), role


@pytest.mark.django_db
def test_an_unknown_placeholder_is_refused_with_the_allowed_ones(client, owner) -> None:
    client.force_login(owner)
    response = client.post(URL, {"subject": "Due: {service} for {bike}", "body": DEFAULT_BODY})
    assert response.status_code == 200
    error = " ".join(response.context["form"].errors["subject"])
    assert "Unknown placeholder {bike}" in error and "{due_date}" in error and "{unsubscribe_url}" in error
    assert not MessageWording.objects.exists()
    # What was typed stays in the form.
    assert response.context["form"]["subject"].value() == "Due: {service} for {bike}"


@pytest.mark.parametrize(
    "text", ["{unit.customer.email}", "{unit[0]}", "{due_date!r}", "{due_date:>40}", "{}", "{unit"]
)
def test_the_formatter_refuses_reaching_into_objects(text: str) -> None:
    assert wording_problems(text)


@pytest.mark.django_db
def test_the_body_must_keep_the_unsubscribe_link(client, owner) -> None:
    client.force_login(owner)
    response = client.post(URL, {"subject": "{service} due", "body": "Hello {customer}, come in."})
    assert "Keep {unsubscribe_url}" in " ".join(response.context["form"].errors["body"])


@pytest.mark.django_db
@override_settings(EMAIL_BACKEND="django.core.mail.backends.locmem.EmailBackend", SHOP_NAME="Test Shop")
def test_saved_wording_is_used_for_the_next_reminder(client, owner, due_shop) -> None:
    client.force_login(owner)
    body = "Dear {customer}: {service} on {unit}, due {due_date}. {shop}. Stop: {unsubscribe_url}"
    response = client.post(URL, {"subject": "{shop}: {service}", "body": body})
    assert response.status_code == 302
    due = DueService.objects.select_related("unit__customer", "unit__unit_model", "service_type").get(
        unit=due_shop[0], service_type__name="Lower-leg service"
    )
    reminder_send(due=due)
    message = mail.outbox[0]
    assert message.subject == "Test Shop: Lower-leg service"
    expected_date = f"{due.next_due_on.day} {due.next_due_on:%B %Y}"
    assert message.body.startswith(
        f"Dear Rider 0: Lower-leg service on {due.unit}, due {expected_date}. Test Shop."
    )


@pytest.mark.django_db
def test_the_unsubscribe_link_withdraws_consent_without_signing_in(client, customer) -> None:
    customer.reminder_consent = True
    customer.save()
    url = f"/owner/unsubscribe/{unsubscribe_token(customer_id=customer.pk)}/"
    asked = client.get(url)
    assert asked.status_code == 200 and "Stop service reminders?" in asked.content.decode()
    customer.refresh_from_db()
    assert customer.reminder_consent  # a GET (a mail scanner following links) changes nothing
    done = client.post(url)
    assert "Reminders stopped" in done.content.decode()
    customer.refresh_from_db()
    assert not customer.reminder_consent
    assert abs(customer.consent_changed_at - timezone.now()) < datetime.timedelta(minutes=1)


@pytest.mark.django_db
def test_a_forged_or_expired_link_changes_nothing(client, customer) -> None:
    customer.reminder_consent = True
    customer.save()
    token = unsubscribe_token(customer_id=customer.pk)
    forged = token[:-3] + ("aaa" if not token.endswith("aaa") else "bbb")
    response = client.post(f"/owner/unsubscribe/{forged}/")
    assert (
        "not one of ours" in response.content.decode() and "Nothing was changed" in response.content.decode()
    )
    other = signing.dumps({"customer": customer.pk}, salt="some other purpose")
    assert "not one of ours" in client.post(f"/owner/unsubscribe/{other}/").content.decode()
    with override_settings(SHOP_UNSUBSCRIBE_MAX_AGE_DAYS=1):
        later = timezone.now() + datetime.timedelta(days=2)
        import time as time_module

        real = time_module.time
        try:
            time_module.time = lambda: later.timestamp()  # signing reads time.time()
            response = client.post(f"/owner/unsubscribe/{token}/")
        finally:
            time_module.time = real
    assert "has expired" in response.content.decode()
    customer.refresh_from_db()
    assert customer.reminder_consent


@pytest.mark.django_db
def test_consent_given_at_the_desk_is_stamped(client, front_desk, customer) -> None:
    client.force_login(front_desk)
    response = client.post(
        f"/customers/{customer.pk}/edit/",
        {"name": customer.name, "phone": customer.phone, "email": customer.email, "reminder_consent": "on"},
    )
    assert response.status_code == 302
    customer = Customer.objects.get(pk=customer.pk)
    assert customer.reminder_consent and customer.consent_changed_at is not None
