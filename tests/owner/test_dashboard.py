"""The owner's dashboard: who may see it, the lists, filters, pages and the reminder button."""

from __future__ import annotations

import datetime

import pytest
from django.core import mail
from django.test import override_settings
from django.urls import reverse
from django.utils import timezone

from shopdesk.owner.models import DueService, Reminder

URL = "/owner/"


@pytest.mark.django_db
def test_only_the_owner_sees_the_dashboard(client, role_users) -> None:
    for role, user in role_users.items():
        client.force_login(user)
        response = client.get(URL)
        assert response.status_code == (200 if role == "owner" else 403), role


@pytest.mark.django_db
def test_it_lists_overdue_units_latest_first_with_counts(
    client, owner, due_shop, django_assert_max_num_queries
) -> None:
    client.force_login(owner)
    # session, user, permissions (user and groups), then the page's ids and rows (2), two counts (2), the jobs
    # at a glance (1), low stock shown (1), the filter form's two choice lists (2), the session saved
    # in a savepoint (3).
    with django_assert_max_num_queries(15):
        response = client.get(URL)
    assert response.status_code == 200
    page = response.context["page"]
    overdue = DueService.objects.filter(next_due_on__lt=timezone.localdate())
    assert page.total == page.counts["overdue"] == overdue.count() == 5
    assert page.counts["due_soon"] == 3
    dates = [(row.next_due_on, row.pk) for row in page.rows]
    assert dates == sorted(dates)
    html = response.content.decode()
    assert "Rider 0" in html and "Rider 4" in html and "Rider 5" not in html
    assert reverse("workshop:check-in", kwargs={"unit_id": due_shop[0].pk}) in html


@pytest.mark.django_db
def test_query_count_does_not_grow_with_rows(client, owner, due_shop, django_assert_num_queries) -> None:
    client.force_login(owner)
    client.get(URL)
    from django.db import connection
    from django.test.utils import CaptureQueriesContext

    with CaptureQueriesContext(connection) as few:
        client.get(URL)
    from tests.owner.conftest import more_overdue_units

    more_overdue_units(30)
    with CaptureQueriesContext(connection) as many:
        response = client.get(URL)
    assert len(response.context["page"].rows) == 35
    assert len(many) == len(few)


@pytest.mark.django_db
def test_filters_narrow_the_list(client, owner, due_shop, service_types) -> None:
    client.force_login(owner)
    response = client.get(URL, {"consent": "no"})
    names = {row.unit.customer.name for row in response.context["page"].rows}
    assert names == {"Rider 1", "Rider 3"}
    response = client.get(URL, {"list": "soon", "consent": "yes"})
    assert {row.unit.customer.name for row in response.context["page"].rows} == {"Rider 6"}
    response = client.get(URL, {"service_type": service_types[1].pk})
    assert response.context["page"].total == 0  # the damper's 24 months are far off
    Reminder.objects.create(
        unit=due_shop[0],
        service_type=service_types[0],
        due_on=datetime.date(2020, 1, 1),
        email="rider0@example.com",
        state="sent",
        claimed_at=timezone.now(),
        sent_at=timezone.now(),
    )
    response = client.get(URL, {"not_contacted_days": "30"})
    names = {row.unit.customer.name for row in response.context["page"].rows}
    assert "Rider 0" not in names and "Rider 2" in names


@pytest.mark.django_db
@pytest.mark.parametrize(
    ("params", "field", "words"),
    [
        ({"not_contacted_days": "-4"}, "not_contacted_days", "greater than or equal to 0"),
        ({"not_contacted_days": "soon"}, "not_contacted_days", "Enter a whole number"),
        ({"not_contacted_days": "99999"}, "not_contacted_days", "less than or equal to 3650"),
        ({"service_type": "999999"}, "service_type", "Select a valid choice"),
        ({"unit_model": "abc"}, "unit_model", "Select a valid choice"),
        ({"consent": "maybe"}, "consent", "Select a valid choice"),
        ({"after": "yesterday.x"}, "after", "page link is damaged"),
        ({"list": "late"}, "list", "Select a valid choice"),
    ],
)
def test_impossible_filters_get_a_message_at_the_field(client, owner, due_shop, params, field, words) -> None:
    client.force_login(owner)
    response = client.get(URL, params)
    assert response.status_code == 200
    assert words in " ".join(response.context["form"].errors[field])
    assert response.context["page"] is None


@pytest.mark.django_db
def test_pages_follow_on_by_keyset(client, owner, due_shop) -> None:
    from tests.owner.conftest import more_overdue_units

    more_overdue_units(60)
    client.force_login(owner)
    first = client.get(URL).context["page"]
    assert len(first.rows) == 50 and first.next_cursor
    second = client.get(URL, {"after": first.next_cursor}).context["page"]
    assert len(second.rows) == 15 and second.next_cursor is None
    seen = [row.pk for row in first.rows + second.rows]
    assert len(set(seen)) == 65 == first.total


@pytest.mark.django_db
@override_settings(EMAIL_BACKEND="django.core.mail.backends.locmem.EmailBackend")
def test_the_owner_sends_a_reminder_from_a_row(client, owner, front_desk, due_shop) -> None:
    due = DueService.objects.get(unit=due_shop[2], service_type__name="Lower-leg service")
    url = reverse("owner:remind", kwargs={"due_id": due.pk})
    client.force_login(front_desk)
    assert client.post(url).status_code == 403
    client.force_login(owner)
    response = client.post(url, {"next": "/owner/?consent=yes"}, follow=True)
    assert response.redirect_chain[-1][0] == "/owner/?consent=yes"
    assert "Reminder sent to Rider 2" in response.content.decode()
    assert len(mail.outbox) == 1 and mail.outbox[0].to == ["rider2@example.com"]
    reminder = Reminder.objects.get()
    assert reminder.sent_by == owner and reminder.due_on == due.next_due_on
    # The row now says sent and offers no second button; a second POST is refused with the date.
    row = next(row for row in response.context["page"].rows if row.pk == due.pk)
    assert row.reminded and row.last_reminder_at == reminder.sent_at
    again = client.post(url, follow=True)
    assert "already sent" in again.content.decode() and len(mail.outbox) == 1
    # Off-site "next" is ignored, and so is one with a control character or spaces (it was
    # followed as "/owner/%0A" or "%20/owner/", a page that is not there).
    for value in ("https://elsewhere.example/", "/owner/?list=soon\n", " /owner/?list=soon"):
        assert client.post(url, {"next": value})["Location"] == "/owner/", value


@pytest.mark.django_db
def test_at_a_glance_counts_open_late_and_waiting_work(client, owner, work_order, oil_part) -> None:
    from shopdesk.stock.services import stock_adjust

    type(work_order).objects.filter(pk=work_order.pk).update(
        promised_on=timezone.localdate() - datetime.timedelta(days=2), status="waiting_for_parts"
    )
    stock_adjust(part=oil_part, quantity=-1600, by=owner, reason="spilt")  # 400 mL left, reorder at 500
    client.force_login(owner)
    glance = client.get(URL).context["glance"]
    assert (glance.open_work, glance.late, glance.waiting_for_parts) == (1, 1, 1)
    assert [part.part_number for part in glance.low_stock] == ["OIL-5WT"] and glance.low_stock_total == 1


@pytest.mark.django_db
def test_htmx_gets_the_list_alone(client, owner, due_shop) -> None:
    client.force_login(owner)
    response = client.get(URL, {"consent": "yes"}, headers={"HX-Request": "true"})
    html = response.content.decode()
    assert html.lstrip().startswith('<div id="due-list">') and "<h1>" not in html
    assert "Rider 0" in html and "Rider 1" not in html


@pytest.mark.django_db
@override_settings(EMAIL_BACKEND="tests.owner.test_reminders.FailingAfter")
def test_a_mail_server_down_is_said_and_nothing_is_recorded(client, owner, due_shop, monkeypatch) -> None:
    from tests.owner.test_reminders import FailingAfter

    monkeypatch.setattr(FailingAfter, "limit", 0)
    due = DueService.objects.get(unit=due_shop[0], service_type__name="Lower-leg service")
    client.force_login(owner)
    response = client.post(reverse("owner:remind", kwargs={"due_id": due.pk}), follow=True)
    assert "did not go (ConnectionRefusedError)" in response.content.decode()
    assert not Reminder.objects.exists()
