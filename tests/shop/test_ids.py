"""Ids posted by the pages (ticked services, picked parts, versions, page cursors) are ASCII digits,
at most 18 of them: anything else is refused at its field, never read as another id or sent to the
database (over 18 digits overflows a bigint on PostgreSQL)."""

from __future__ import annotations

import pytest
from django.urls import reverse

from shopdesk.owner.selectors import cursor_parse
from shopdesk.shop.ids import id_from
from shopdesk.workshop.models import PartUsed, WorkOrder

ARABIC_INDIC = str.maketrans("0123456789", "٠١٢٣٤٥٦٧٨٩")


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        ("0", 0),
        ("42", 42),
        ("9" * 18, 10**18 - 1),
        (7, 7),
        ("9" * 19, None),  # past a bigint's 9 223 372 036 854 775 807 for some 19-digit numbers
        ("١٢", None),  # int() reads it as 12
        ("１２", None),
        ("+12", None),
        ("-1", None),
        (" 12", None),
        ("12 ", None),
        ("1_2", None),  # int() reads it as 12
        ("12.0", None),
        ("", None),
        ("\x00", None),
        (True, None),
        (-1, None),
    ],
)
def test_an_id_is_ascii_digits_only(value, expected) -> None:
    assert id_from(value) == expected


@pytest.mark.parametrize(
    ("raw", "expected"),
    [
        ("2026-03-14.1234", True),
        ("2026-03-14.١٢٣٤", False),
        ("2026-03-14.+5", False),
        ("2026-03-14." + "9" * 30, False),
    ],
)
def test_a_page_cursor_takes_an_ascii_id(raw, expected) -> None:
    assert (cursor_parse(raw) is not None) is expected


@pytest.mark.django_db
def test_a_ticked_service_in_other_digits_is_refused_at_check_in(
    client, front_desk, unit, service_types
) -> None:
    # int() reads "١" as 1: the old field checked the unit in with whichever service had that id.
    client.force_login(front_desk)
    url = reverse("workshop:check-in", args=[unit.pk])
    response = client.post(url, {"job-service_types": [str(service_types[0].pk).translate(ARABIC_INDIC)]})
    assert response.status_code == 200
    assert response.context["form"].has_error("service_types", "invalid_pk_value")
    assert 'class="errorlist' in response.content.decode()
    assert not WorkOrder.objects.exists()


@pytest.mark.django_db
@pytest.mark.parametrize("tick", ["9" * 19, "9" * 40, "+1", "١"])
def test_the_quote_names_a_refused_tick_and_quotes_nothing(client, front_desk, service_types, tick) -> None:
    # The quote took any value str.isdigit() liked ("١", "²" and numbers of any length) to the ORM.
    client.force_login(front_desk)
    response = client.post(
        reverse("workshop:quote"),
        {"job-service_types": [service_types[0].pk, tick]},
        headers={"HX-Request": "true"},
    )
    assert response.status_code == 200
    body = response.content.decode()
    assert 'class="errorlist"' in body and "is not a valid value" in body
    assert "Quote: £0.00" in body  # the good tick is not quoted alone as if nothing were wrong


@pytest.mark.django_db
def test_a_part_picked_in_other_digits_is_refused_at_the_field(client, technician, work_order, owner) -> None:
    from decimal import Decimal

    from shopdesk.stock.models import Part
    from shopdesk.stock.services import stock_receive
    from shopdesk.workshop import services

    part = Part.objects.create(
        part_number="SEAL-32", name="Dust seal 32", kind=Part.Kind.PART, price=Decimal("9")
    )
    stock_receive(part=part, quantity=Decimal("4"), lot_code="", cost=None, by=owner)
    services.work_order_take(work_order=work_order, by=technician)
    client.force_login(technician)
    url = reverse("workshop:part", args=[work_order.number])
    for picked in (str(part.pk).translate(ARABIC_INDIC), f" {part.pk}", f"+{part.pk}", "9" * 25):
        response = client.post(url, {"part-part": picked, "part-quantity": "1"})
        assert response.status_code == 200, picked
        assert response.context["part_form"].has_error("part", "invalid_choice"), picked
    assert not PartUsed.objects.exists()
    assert client.post(url, {"part-part": str(part.pk), "part-quantity": "1"}).status_code == 302


@pytest.mark.django_db
@pytest.mark.parametrize("version", ["١", " 1", "1.0", "9" * 30])
def test_a_mangled_version_is_refused_as_an_old_page(client, technician, work_order, version) -> None:
    from shopdesk.workshop import services
    from shopdesk.workshop.models import SpringRecord

    services.work_order_take(work_order=work_order, by=technician)
    services.spring_record_save(
        work_order=work_order, stage="after", by=technician, values={"positive_pressure_kpa": 580.0}
    )
    client.force_login(technician)
    url = reverse("workshop:spring", args=[work_order.number, "after"])
    response = client.post(
        url, {"spring-after-version": version, "spring-after-positive_pressure_kpa": "600"}
    )
    assert response.status_code == 200
    assert "reload the job page and enter the values again" in response.content.decode()
    assert SpringRecord.objects.get().positive_pressure_kpa == 580.0


@pytest.mark.django_db
def test_a_dashboard_link_with_a_mangled_cursor_is_refused_at_the_list(client, owner) -> None:
    client.force_login(owner)
    response = client.get("/owner/", {"after": "2026-03-14.١٢"})
    assert response.status_code == 200
    assert response.context["form"].has_error("after")
    assert response.context["page"] is None
