from __future__ import annotations

import pytest
from django.urls import reverse

from shopdesk.customers.models import Customer, Unit


def test_it_adds_a_customer_and_stamps_consent(client, front_desk) -> None:
    client.force_login(front_desk)
    response = client.post(
        reverse("customers:customer-new"),
        {
            "name": "  Tomas   Quill ",
            "phone": "01632 960 777",
            "email": "tq@example.org",
            "reminder_consent": "on",
        },
    )
    customer = Customer.objects.get()
    assert response.status_code == 302
    assert response["Location"] == reverse("customers:unit-new", kwargs={"customer_id": customer.pk})
    assert customer.name == "Tomas Quill"
    assert customer.phone_digits == "01632960777"
    assert customer.consent_changed_at is not None


@pytest.mark.parametrize(
    ("data", "field", "words"),
    [
        ({"name": "A", "phone": "", "email": "not-an-email"}, "email", "valid email"),
        ({"name": "A", "phone": "12"}, "phone", "6 to 16 digits"),
        ({"name": "A", "phone": "call me maybe 0161"}, "phone", "digits"),
        ({"name": "   ", "phone": "01632 960 111"}, "name", "required"),
    ],
)
def test_it_refuses_bad_customer_input_at_the_field(client, front_desk, data, field, words) -> None:
    client.force_login(front_desk)
    response = client.post(reverse("customers:customer-new"), data)
    assert response.status_code == 200
    errors = response.context["form"].errors
    assert field in errors
    assert words in " ".join(errors[field]).lower() or words in " ".join(errors[field])
    assert Customer.objects.count() == 0


def test_it_asks_for_a_way_to_reach_the_customer(client, front_desk) -> None:
    client.force_login(front_desk)
    response = client.post(reverse("customers:customer-new"), {"name": "No Contact"})
    assert "phone number or an email" in response.content.decode()
    assert Customer.objects.count() == 0


def test_it_keeps_the_saved_customer_when_an_edit_is_refused(client, front_desk, customer) -> None:
    client.force_login(front_desk)
    response = client.post(
        reverse("customers:customer-edit", kwargs={"customer_id": customer.pk}),
        {"name": "Changed Name", "email": "broken@", "phone": ""},
    )
    assert response.status_code == 200
    customer.refresh_from_db()
    assert customer.name == "Ada Marsh"
    assert customer.email == "ada@example.com"


def _unit_data(model, **overrides):
    data = {
        "unit-unit_model": model.pk,
        "unit-serial_number": "rf34-0099",
        "unit-model_year": "2023",
        "unit-travel_mm": "",
        "unit-hours_per_week": "5",
        "setup-positive_pressure_kpa": "5.9 bar",
        "setup-spacer_count": "2",
        "setup-rebound_clicks": "8",
    }
    data.update(overrides)
    return data


def test_it_adds_a_unit_with_setup_typed_in_units(client, front_desk, customer, air_fork_model) -> None:
    client.force_login(front_desk)
    url = reverse("customers:unit-new", kwargs={"customer_id": customer.pk})
    response = client.post(url, _unit_data(air_fork_model))
    assert response.status_code == 302, response.context and response.context["form"].errors
    unit = Unit.objects.get()
    assert unit.serial_number == "RF34-0099"
    assert unit.travel_mm == 140  # the spec sheet's travel when left empty
    # 5.9 bar = 590 kPa exactly (1 bar = 100 kPa, NIST SP 811)
    assert unit.positive_pressure_kpa == pytest.approx(590.0)
    assert unit.spacer_count == 2


@pytest.mark.parametrize(
    ("overrides", "field", "words"),
    [
        ({"setup-positive_pressure_kpa": "85 kg"}, "positive_pressure_kpa", "is not a pressure"),
        ({"setup-positive_pressure_kpa": "300 psi"}, "positive_pressure_kpa", "maximum"),
        ({"setup-positive_pressure_kpa": "-5"}, "positive_pressure_kpa", "at least"),
        ({"setup-spacer_count": "9"}, "spacer_count", "at most 4"),
        ({"unit-travel_mm": "9000 mm"}, "travel_mm", "at most"),
        ({"unit-travel_mm": "0.5 kPa"}, "travel_mm", "not a length"),
    ],
)
def test_it_refuses_bad_unit_input_at_the_field(
    client, front_desk, customer, air_fork_model, overrides, field, words
) -> None:
    client.force_login(front_desk)
    url = reverse("customers:unit-new", kwargs={"customer_id": customer.pk})
    response = client.post(url, _unit_data(air_fork_model, **overrides))
    assert response.status_code == 200
    forms = [response.context["form"], response.context["setup_form"]]
    messages = " ".join(" ".join(form.errors.get(field, [])) for form in forms)
    assert words in messages
    assert Unit.objects.count() == 0


def test_it_refuses_a_serial_already_on_another_unit_of_the_model(
    client, front_desk, unit, air_fork_model
) -> None:
    from shopdesk.customers.models import Customer

    other = Customer.objects.create(name="Second Rider", phone="01632 960 500")
    client.force_login(front_desk)
    url = reverse("customers:unit-new", kwargs={"customer_id": other.pk})
    response = client.post(url, _unit_data(air_fork_model, **{"unit-serial_number": "rf34-0001"}))
    assert response.status_code == 200
    assert "already on a Testmaker Ridge 34 of Ada Marsh" in " ".join(
        response.context["form"].errors["serial_number"]
    )
    assert Unit.objects.count() == 1


def test_it_keeps_the_saved_unit_when_an_edit_is_refused(client, front_desk, unit, air_fork_model) -> None:
    client.force_login(front_desk)
    url = reverse("customers:unit-edit", kwargs={"unit_id": unit.pk})
    response = client.post(
        url,
        _unit_data(
            air_fork_model, **{"unit-serial_number": "NEW-1", "setup-positive_pressure_kpa": "999 bar"}
        ),
    )
    assert response.status_code == 200
    unit.refresh_from_db()
    assert unit.serial_number == "RF34-0001"
    assert unit.positive_pressure_kpa is None


def test_it_shows_stored_pressures_in_the_shops_units(client, front_desk, unit, settings) -> None:
    unit.positive_pressure_kpa = 586.0544  # 85 psi (1 psi = 6.894757 kPa, NIST SP 811)
    unit.save()
    client.force_login(front_desk)
    settings.SHOP_PRESSURE_UNIT = "psi"
    assert "85 psi" in client.get(reverse("customers:unit", kwargs={"unit_id": unit.pk})).content.decode()
    settings.SHOP_PRESSURE_UNIT = "bar"
    assert "5.86 bar" in client.get(reverse("customers:unit", kwargs={"unit_id": unit.pk})).content.decode()
