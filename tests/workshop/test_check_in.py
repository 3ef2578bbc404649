from __future__ import annotations

import datetime
from decimal import Decimal

import pytest
from django.urls import reverse
from django.utils import timezone

from shopdesk.workshop.models import RequestedService, Status, WorkOrder, WorkOrderEvent
from shopdesk.workshop.services import quote, work_order_check_in


def _data(service_types, **overrides):
    data = {
        "job-service_types": [str(service.pk) for service in service_types],
        "job-complaint": "Knocks when it tops out.",
        "job-came_with": "shock pump",
        "job-promised_on": (timezone.localdate() + datetime.timedelta(days=5)).isoformat(),
        "arrival-positive_pressure_kpa": "5.9 bar",
        "arrival-spacer_count": "1",
        "arrival-rebound_clicks": "9",
    }
    data.update(overrides)
    return data


def test_it_checks_a_unit_in_with_services_and_settings(client, front_desk, unit, service_types) -> None:
    client.force_login(front_desk)
    response = client.post(reverse("workshop:check-in", kwargs={"unit_id": unit.pk}), _data(service_types))
    work_order = WorkOrder.objects.get()
    assert response.status_code == 302
    assert response["Location"] == work_order.get_absolute_url()
    year = timezone.localdate().year
    assert work_order.number == f"{year}-0001"
    assert work_order.status == Status.CHECKED_IN
    assert work_order.checked_in_by == front_desk
    assert work_order.arrival.positive_pressure_kpa == pytest.approx(590.0)  # 5.9 bar, 1 bar = 100 kPa
    assert work_order.arrival.rebound_clicks == 9
    assert sorted(RequestedService.objects.values_list("price", flat=True)) == [
        Decimal("45.00"),
        Decimal("89.50"),
    ]
    event = WorkOrderEvent.objects.get()
    assert event.by == front_desk and event.to_status == Status.CHECKED_IN


@pytest.mark.parametrize(
    ("overrides", "field", "words"),
    [
        ({"arrival-positive_pressure_kpa": "85 kg"}, "positive_pressure_kpa", "is not a pressure"),
        ({"arrival-positive_pressure_kpa": "12 bar"}, "positive_pressure_kpa", "maximum"),
        ({"arrival-rebound_clicks": "-3"}, "rebound_clicks", "greater than or equal to 0"),
        ({"arrival-rebound_clicks": "1e9"}, "rebound_clicks", "whole number"),
        ({"job-promised_on": "2001-01-01"}, "promised_on", "in the past"),
        ({"job-service_types": []}, "service_types", "at least one service"),
    ],
)
def test_it_refuses_bad_check_in_input_at_the_field(
    client, front_desk, unit, service_types, overrides, field, words
) -> None:
    client.force_login(front_desk)
    response = client.post(
        reverse("workshop:check-in", kwargs={"unit_id": unit.pk}), _data(service_types, **overrides)
    )
    assert response.status_code == 200
    errors = {**response.context["form"].errors, **response.context["setup_form"].errors}
    assert words in " ".join(errors[field])
    assert WorkOrder.objects.count() == 0


def test_it_numbers_jobs_in_sequence_within_a_year(unit, front_desk, service_types) -> None:
    january = timezone.make_aware(datetime.datetime(2031, 1, 3, 10, 0))
    numbers = [
        work_order_check_in(unit=unit, by=front_desk, service_types=service_types, now=january).number
        for _ in range(3)
    ]
    next_year = timezone.make_aware(datetime.datetime(2032, 1, 2, 10, 0))
    numbers.append(
        work_order_check_in(unit=unit, by=front_desk, service_types=service_types, now=next_year).number
    )
    assert numbers == ["2031-0001", "2031-0002", "2031-0003", "2032-0001"]


def test_it_gives_a_number_back_when_a_check_in_fails(unit, front_desk, service_types) -> None:
    from django.core.exceptions import ValidationError

    first = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    with pytest.raises(ValidationError):
        work_order_check_in(
            unit=unit, by=front_desk, service_types=service_types, arrival={"rebound_clicks": 500}
        )
    second = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    assert int(second.number[-4:]) == int(first.number[-4:]) + 1


def test_it_quotes_with_tax_rounded_once(service_types) -> None:
    # 45.00 + 89.50 = 134.50; 20 % of it = 26.90 exactly
    result = quote(service_types=service_types, tax_rate=Decimal("0.20"))
    assert (result.subtotal, result.tax, result.total) == (
        Decimal("134.50"),
        Decimal("26.90"),
        Decimal("161.40"),
    )
    # 8.875 % of 134.50 = 11.936875, rounded half up once to 11.94
    assert quote(service_types=service_types, tax_rate=Decimal("0.08875")).tax == Decimal("11.94")


def test_it_updates_the_quote_as_services_are_ticked(client, front_desk, service_types, settings) -> None:
    settings.SHOP_TAX_RATE = Decimal("0.20")
    client.force_login(front_desk)
    response = client.post(
        reverse("workshop:quote"),
        {"job-service_types": [service_types[1].pk]},
        headers={"HX-Request": "true"},
    )
    body = response.content.decode()
    assert "£89.50" in body and "£17.90" in body and "£107.40" in body
    assert "<html" not in body
