"""A unit's due dates as an iCalendar file (RFC 5545, written with the icalendar package).

One all-day event per service that falls due, so that a customer can import it or the shop can
attach it to a reminder. Same contract as the documents renderer: (filename, MIME type, bytes).
"""

from __future__ import annotations

import datetime
from collections.abc import Iterable

from django.conf import settings
from django.utils import timezone
from django.utils.text import slugify
from icalendar import Calendar, Event

from shopdesk.customers.models import Unit
from shopdesk.owner.models import DueService

PRODUCT_ID = "-//ShopDesk//Service due dates//EN"


def unit_calendar_render(*, unit: Unit, rows: Iterable[DueService]) -> tuple[str, str, bytes]:
    calendar = Calendar()
    calendar.add("prodid", PRODUCT_ID)
    calendar.add("version", "2.0")
    calendar.add("x-wr-calname", f"{unit} — service due dates")
    stamp = timezone.now().astimezone(datetime.UTC)
    host = settings.SHOP_BASE_URL.split("//", 1)[-1].split("/", 1)[0] or "shopdesk"
    for row in rows:
        event = Event()
        # Stable per unit, service and due date: importing a newer file updates the same event.
        event.add("uid", f"due-{unit.pk}-{row.service_type_id}-{row.next_due_on:%Y%m%d}@{host}")
        event.add("dtstamp", stamp)
        event.add("dtstart", row.next_due_on)
        event.add("dtend", row.next_due_on + datetime.timedelta(days=1))
        event.add("summary", f"{row.service_type.name} due: {unit}")
        last = f"last done {row.last_done_on:%d %b %Y}" if row.last_done_on else "not serviced by us yet"
        event.add(
            "description",
            f"{row.service_type.name} for {unit} ({last}). Book it in with {settings.SHOP_NAME}.",
        )
        event.add("transp", "TRANSPARENT")
        calendar.add_component(event)
    filename = f"due-dates-{slugify(unit.serial_number) or unit.pk}.ics"
    return filename, "text/calendar; charset=utf-8", calendar.to_ical()
