"""A unit's due dates as a calendar file, read back with the icalendar parser."""

from __future__ import annotations

import pytest
from icalendar import Calendar

from shopdesk.owner.models import DueService


@pytest.mark.django_db
def test_the_calendar_holds_each_due_date(client, front_desk, technician, due_shop) -> None:
    unit = due_shop[0]
    url = f"/owner/units/{unit.pk}/due-dates.ics"
    client.force_login(front_desk)
    response = client.get(url)
    assert response.status_code == 200
    assert response["Content-Type"].startswith("text/calendar")
    assert response["Content-Disposition"] == 'attachment; filename="due-dates-due-0.ics"'
    calendar = Calendar.from_ical(response.content)
    events = {str(event["summary"]): event for event in calendar.walk("VEVENT")}
    rows = DueService.objects.filter(unit=unit).select_related("service_type")
    assert len(events) == rows.count() == 2
    for row in rows:
        event = events[f"{row.service_type.name} due: {unit}"]
        assert event.decoded("dtstart") == row.next_due_on
        assert str(event["uid"]).startswith(f"due-{unit.pk}-{row.service_type_id}-")
    # The unit page links to it.
    assert url in client.get(f"/units/{unit.pk}/").content.decode()


@pytest.mark.django_db
def test_the_calendar_needs_sign_in(client, due_shop) -> None:
    response = client.get(f"/owner/units/{due_shop[0].pk}/due-dates.ics")
    assert response.status_code == 302
