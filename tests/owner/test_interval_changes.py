"""Editing intervals in the admin moves the due dates of the units they apply to."""

from __future__ import annotations

import datetime
from html.parser import HTMLParser

import pytest
from dateutil.relativedelta import relativedelta

from shopdesk.owner.models import DueService
from shopdesk.owner.services import due_refresh


class _FormValues(HTMLParser):
    """The values a browser would post from the page's main form, as the admin rendered them."""

    def __init__(self) -> None:
        super().__init__()
        self.values: dict[str, list[str]] = {}
        self._select: str | None = None
        self._textarea: str | None = None

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        attr = {key: value or "" for key, value in attrs}
        name = attr.get("name")
        if tag == "input" and name and attr.get("type") not in {"submit", "button", "file"}:
            if attr.get("type") in {"checkbox", "radio"} and "checked" not in attr:
                return
            default = "on" if attr.get("type") in {"checkbox", "radio"} else ""
            self.values.setdefault(name, []).append(attr.get("value", default))
        elif tag == "select" and name:
            self._select = name
        elif tag == "option" and self._select and "selected" in attr:
            self.values.setdefault(self._select, []).append(attr.get("value", ""))
        elif tag == "textarea" and name:
            self._textarea = name
            self.values.setdefault(name, []).append("")

    def handle_endtag(self, tag: str) -> None:
        if tag == "select":
            self._select = None
        if tag == "textarea":
            self._textarea = None

    def handle_data(self, data: str) -> None:
        if self._textarea:
            self.values[self._textarea][-1] += data.lstrip("\n")


def _form_data(html: str) -> dict[str, list[str]]:
    parser = _FormValues()
    parser.feed(html)
    return {name: value for name, value in parser.values.items() if not name.startswith("_")}


@pytest.fixture
def serviced_unit(unit, service_types):
    unit.purchased_on = datetime.date(2025, 3, 31)
    unit.hours_per_week = 0  # months only: the interval change shows directly in the date
    unit.save()
    due_refresh(unit=unit)
    return unit


def _due(unit, service_type) -> datetime.date:
    return DueService.objects.get(unit=unit, service_type=service_type).next_due_on


@pytest.mark.django_db
def test_it_follows_a_service_types_default_interval(client, owner, serviced_unit, service_types) -> None:
    damper = service_types[1]
    assert _due(serviced_unit, damper) == datetime.date(2025, 3, 31) + relativedelta(months=24)
    client.force_login(owner)
    url = f"/admin/specs/servicetype/{damper.pk}/change/"
    data = _form_data(client.get(url).content.decode())
    data["default_interval_months"] = ["11"]
    response = client.post(url, data)
    assert response.status_code == 302, response.content.decode()[:2000]
    # 31 March 2025 + 11 months, clamped to the month's end (dateutil.relativedelta): 28 February 2026.
    assert _due(serviced_unit, damper) == datetime.date(2026, 2, 28)


@pytest.mark.django_db
def test_it_follows_a_spec_sheets_own_interval(client, owner, serviced_unit, service_types) -> None:
    lowers = service_types[0]
    assert _due(serviced_unit, lowers) == datetime.date(2026, 3, 31)  # the default, 12 months
    client.force_login(owner)
    url = f"/admin/specs/unitmodel/{serviced_unit.unit_model_id}/change/"
    data = _form_data(client.get(url).content.decode())
    prefix = "intervals"
    assert data[f"{prefix}-TOTAL_FORMS"] == ["0"]
    data[f"{prefix}-TOTAL_FORMS"] = ["1"]
    data[f"{prefix}-0-service_type"] = [str(lowers.pk)]
    data[f"{prefix}-0-interval_months"] = ["6"]
    data[f"{prefix}-0-interval_hours"] = [""]
    data[f"{prefix}-0-unit_model"] = [str(serviced_unit.unit_model_id)]
    response = client.post(url, data)
    assert response.status_code == 302, response.context and response.context["errors"]
    assert _due(serviced_unit, lowers) == datetime.date(2025, 9, 30)  # 31 March + 6 months, clamped


@pytest.mark.django_db
def test_a_price_change_leaves_the_due_table_alone(client, owner, serviced_unit, service_types) -> None:
    damper = service_types[1]
    row = DueService.objects.get(unit=serviced_unit, service_type=damper)
    client.force_login(owner)
    url = f"/admin/specs/servicetype/{damper.pk}/change/"
    data = _form_data(client.get(url).content.decode())
    data["price"] = ["99.00"]
    assert client.post(url, data).status_code == 302
    # Not rebuilt: the row is the same row (a rebuild deletes and writes the unit's rows anew).
    assert DueService.objects.get(unit=serviced_unit, service_type=damper).pk == row.pk
