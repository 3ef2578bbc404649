"""The stock pages: the list, a part's ledger, the owner's forms, and who may use which."""

from __future__ import annotations

from decimal import Decimal

import pytest
from django.urls import reverse

from shopdesk.stock import selectors
from shopdesk.stock.models import Part, StockLot, StockMovement
from shopdesk.stock.services import stock_receive, stock_use_on_job


def _part_data(**overrides: str) -> dict[str, str]:
    data = {
        "part_number": "wp-34 ",
        "name": "Dust wiper, 34 mm",
        "kind": "part",
        "unit_of_measure": "each",
        "oil": "",
        "reorder_level": "4",
        "cost": "3.10",
        "price": "£7.50",
        "active": "on",
    }
    data.update(overrides)
    return data


def test_it_lists_parts_with_on_hand_price_and_a_low_badge(
    client, technician, stocked_kit, stocked_oil, work_order
) -> None:
    stock_use_on_job(part=stocked_oil, quantity=Decimal("600"), work_order=work_order, by=technician)
    client.force_login(technician)
    response = client.get(reverse("stock:list"))
    assert response.status_code == 200
    parts = {part.part_number: part for part in response.context["page"]}
    assert (parts["SK-34-AIR"].on_hand, parts["SK-34-AIR"].low) == (Decimal("5.00"), False)
    assert (parts["OIL-5WT"].on_hand, parts["OIL-5WT"].low) == (Decimal("400.00"), True)  # reorder at 500 mL
    html = response.content.decode()
    assert "400 mL" in html
    assert "£0.0450" in html and "£45.00/L" in html  # per mL, and per litre beside it
    assert "£24.00" in html
    assert html.count('class="badge low"') == 1
    # The recent movements, with who, and the job linked by its number.
    job_url = reverse("workshop:work-order", kwargs={"number": work_order.number})
    assert f'href="{job_url}"' in html
    assert "−600 mL" in html
    assert [m.kind for m in response.context["movements"]] == ["used", "received", "received"]


def test_it_searches_by_part_number_or_name_and_filters_low_ones(
    client, technician, stocked_kit, oil_part
) -> None:
    client.force_login(technician)
    url = reverse("stock:list")
    numbers = lambda response: [part.part_number for part in response.context["page"]]  # noqa: E731
    assert numbers(client.get(url, {"q": "sk-34"})) == ["SK-34-AIR"]
    assert numbers(client.get(url, {"q": "damper oil"})) == ["OIL-5WT"]
    assert numbers(client.get(url, {"low": "on"})) == ["OIL-5WT"]  # nothing received: 0 ≤ 500
    assert numbers(client.get(url, {"q": "nothing like it"})) == []
    assert "No part matches." in client.get(url, {"q": "nothing like it"}).content.decode()


def test_it_leaves_parts_no_longer_stocked_out_unless_asked(client, technician, seal_kit) -> None:
    Part.objects.filter(pk=seal_kit.pk).update(active=False)
    client.force_login(technician)
    assert list(client.get(reverse("stock:list")).context["page"]) == []
    assert [p.pk for p in client.get(reverse("stock:list"), {"inactive": "on"}).context["page"]] == [
        seal_kit.pk
    ]


def test_it_answers_htmx_with_the_parts_table_only(client, technician, seal_kit) -> None:
    client.force_login(technician)
    response = client.get(reverse("stock:list"), {"q": "SK"}, headers={"HX-Request": "true"})
    html = response.content.decode()
    assert html.lstrip().startswith('<section id="stock-parts"')
    assert "SK-34-AIR" in html
    assert "<html" not in html


def test_it_pages_the_list_by_fifty(client, technician) -> None:
    Part.objects.bulk_create(
        Part(part_number=f"P-{n:03d}", name=f"Bushing {n}", price=Decimal("5")) for n in range(51)
    )
    client.force_login(technician)
    first = client.get(reverse("stock:list"))
    assert len(first.context["page"]) == 50
    second = client.get(reverse("stock:list"), {"page": "2"})
    assert [p.part_number for p in second.context["page"]] == ["P-050"]
    assert client.get(reverse("stock:list"), {"page": "many"}).status_code == 200  # a bad page shows page 1


@pytest.mark.parametrize("count", [3, 40])
def test_it_lists_stock_in_a_fixed_number_of_queries(
    client, technician, owner, work_order, django_assert_max_num_queries, count
) -> None:
    for n in range(count):
        part = Part.objects.create(part_number=f"Q-{n:03d}", name=f"Seal head {n}", price=Decimal("9"))
        stock_receive(part=part, quantity=3, by=owner, lot_code=f"L{n}")
        stock_use_on_job(part=part, quantity=1, work_order=work_order, by=technician)
    client.force_login(technician)
    # 1 session, 2 user, 3 the user's own permissions and 4 its groups' (the permission check,
    # then cached), 5 the paginator's count, 6 the last 50 movements with part, lot, job and user
    # joined, 7 the page of parts with on hand summed in a correlated subquery, then the session's
    # expiry moved on (the first request after sign-in): 8 savepoint, 9 update, 10 release. The same whatever
    # the number of parts or movements.
    with django_assert_max_num_queries(10):
        response = client.get(reverse("stock:list"))
    assert response.status_code == 200
    assert len(response.context["page"]) == count
    assert len(response.context["movements"]) == min(2 * count, 50)


def test_it_shows_a_part_with_its_ledger_and_lots(client, technician, stocked_oil, work_order) -> None:
    lot = StockLot.objects.get(part=stocked_oil)
    stock_use_on_job(part=stocked_oil, quantity=Decimal("95"), work_order=work_order, by=technician, lot=lot)
    client.force_login(technician)
    response = client.get(reverse("stock:part", kwargs={"part_id": stocked_oil.pk}))
    assert response.status_code == 200
    ledger = list(response.context["ledger"])
    assert [(m.kind, m.quantity, m.balance) for m in ledger] == [
        ("used", Decimal("-95.00"), Decimal("905.00")),
        ("received", Decimal("1000.00"), Decimal("1000.00")),
    ]
    assert [(lot.lot_code, lot.on_hand) for lot in response.context["lots"]] == [("B-77", Decimal("905.00"))]
    html = response.content.decode()
    assert "905 mL" in html
    assert work_order.number in html
    assert "Adjust the count" not in html  # the technician is not offered the owner's forms
    assert client.get(reverse("stock:part", kwargs={"part_id": 999999})).status_code == 404


OWNER_VIEWS = ["stock:part-new", "stock:part-edit", "stock:receive", "stock:adjust"]


@pytest.mark.parametrize("name", OWNER_VIEWS)
@pytest.mark.parametrize("role", ["technician", "front_desk"])
def test_it_keeps_stock_changes_for_the_owner(client, role_users, stocked_kit, name, role) -> None:
    kwargs = {} if name == "stock:part-new" else {"part_id": stocked_kit.pk}
    url = reverse(name, kwargs=kwargs)
    client.force_login(role_users[role])
    assert client.get(url).status_code == 403
    post = {
        **_part_data(price="0.01", part_number="SK-34-AIR"),
        "quantity": "-5",
        "reason": "x",
        "lot_code": "",
    }
    assert client.post(url, post).status_code == 403
    stocked_kit.refresh_from_db()
    assert stocked_kit.price == Decimal("24.0000")
    assert selectors.on_hand(stocked_kit) == Decimal("5.00")
    assert Part.objects.count() == 1


@pytest.mark.parametrize("name", OWNER_VIEWS)
def test_it_opens_the_owners_forms_to_the_owner(client, owner, seal_kit, name) -> None:
    kwargs = {} if name == "stock:part-new" else {"part_id": seal_kit.pk}
    client.force_login(owner)
    assert client.get(reverse(name, kwargs=kwargs)).status_code == 200


def test_it_lets_the_front_desk_see_stock_but_not_its_ledger(client, front_desk, stocked_kit) -> None:
    client.force_login(front_desk)
    response = client.get(reverse("stock:list"))
    assert response.status_code == 200
    assert "movements" not in response.context
    detail = client.get(reverse("stock:part", kwargs={"part_id": stocked_kit.pk}))
    assert detail.status_code == 200
    assert "ledger" not in detail.context
    assert "New part" not in response.content.decode()


def test_it_adds_a_part(client, owner) -> None:
    client.force_login(owner)
    response = client.post(reverse("stock:part-new"), _part_data())
    part = Part.objects.get()
    assert response.status_code == 302
    assert response["Location"] == reverse("stock:part", kwargs={"part_id": part.pk})
    assert (part.part_number, part.price, part.cost, part.reorder_level) == (
        "WP-34",
        Decimal("7.5000"),
        Decimal("3.1000"),
        Decimal("4.00"),
    )
    assert StockMovement.objects.count() == 0  # a new part has nothing on hand until it is received


def test_it_adds_an_oil_with_its_reorder_level_in_litres(client, owner, oil) -> None:
    client.force_login(owner)
    data = _part_data(
        part_number="OIL-7",
        name="Damper oil 7 wt",
        kind="oil",
        unit_of_measure="ml",
        oil=str(oil.pk),
        reorder_level="1.5 L",
        price="0.052",
    )
    response = client.post(reverse("stock:part-new"), data)
    assert response.status_code == 302, response.context["form"].errors
    part = Part.objects.get()
    assert part.reorder_level == Decimal("1500.00")
    assert part.price == Decimal("0.0520")


@pytest.mark.parametrize(
    ("overrides", "field", "words"),
    [
        ({"part_number": "sk-34-air"}, "part_number", "Another part already has this part number."),
        ({"part_number": "SK 34/£"}, "part_number", "letters, digits"),
        ({"kind": "oil", "unit_of_measure": "ml"}, "oil", "needs its spec-sheet oil"),
        ({"kind": "oil"}, "unit_of_measure", "Oil is counted in mL"),
        ({"price": "-1"}, "price", "greater than or equal to 0"),
        ({"price": "1.23456"}, "price", "4 decimal places"),
        ({"price": "cheap"}, "price", "Enter a number"),
        ({"reorder_level": "-2"}, "reorder_level", "cannot be negative"),
        ({"reorder_level": "2.5"}, "reorder_level", "whole number"),
        ({"reorder_level": "lots"}, "reorder_level", "not a number"),
        ({"unit_of_measure": "ml", "reorder_level": "3 kg"}, "reorder_level", "is not a volume"),
        ({"name": "   "}, "name", "required"),
    ],
)
def test_it_refuses_a_bad_part_at_the_field(client, owner, seal_kit, overrides, field, words) -> None:
    client.force_login(owner)
    response = client.post(reverse("stock:part-new"), _part_data(**overrides))
    assert response.status_code == 200
    errors = response.context["form"].errors
    assert field in errors, errors
    assert words in " ".join(errors[field])
    assert list(Part.objects.values_list("part_number", flat=True)) == ["SK-34-AIR"]


def test_it_changes_a_price(client, owner, seal_kit) -> None:
    client.force_login(owner)
    url = reverse("stock:part-edit", kwargs={"part_id": seal_kit.pk})
    assert 'value="24"' in client.get(url).content.decode()
    data = _part_data(
        part_number="SK-34-AIR", name=seal_kit.name, kind="seal_kit", price="26.00", reorder_level="2"
    )
    assert client.post(url, data).status_code == 302
    seal_kit.refresh_from_db()
    assert seal_kit.price == Decimal("26.0000")


def test_it_refuses_a_new_unit_of_measure_once_the_part_has_movements(client, owner, stocked_kit) -> None:
    client.force_login(owner)
    url = reverse("stock:part-edit", kwargs={"part_id": stocked_kit.pk})
    data = _part_data(part_number="SK-34-AIR", kind="seal_kit", unit_of_measure="ml")
    response = client.post(url, data)
    assert response.status_code == 200
    assert "cannot change" in " ".join(response.context["form"].errors["unit_of_measure"])
    stocked_kit.refresh_from_db()
    assert (stocked_kit.unit_of_measure, stocked_kit.name) == ("each", "Air spring seal kit, 34 mm")


def test_it_receives_oil_typed_in_litres(client, owner, oil_part) -> None:
    client.force_login(owner)
    url = reverse("stock:receive", kwargs={"part_id": oil_part.pk})
    response = client.post(url, {"quantity": "2 L", "lot_code": "b-78", "cost": "0.0199"})
    assert response.status_code == 302
    movement = StockMovement.objects.get()
    assert (movement.kind, movement.quantity, movement.by) == ("received", Decimal("2000.00"), owner)
    assert movement.lot.lot_code == "B-78"
    oil_part.refresh_from_db()
    assert oil_part.cost == Decimal("0.0199")


@pytest.mark.parametrize(
    ("data", "words"),
    [
        ({"quantity": "2.5"}, "whole number"),
        ({"quantity": "0"}, "more than 0"),
        ({"quantity": "-3"}, "more than 0"),
        ({"quantity": "99999"}, "at most 10000"),
        ({"quantity": "five"}, "not a number"),
        ({"quantity": ""}, "required"),
    ],
)
def test_it_refuses_a_bad_receipt_at_the_quantity(client, owner, seal_kit, data, words) -> None:
    client.force_login(owner)
    response = client.post(
        reverse("stock:receive", kwargs={"part_id": seal_kit.pk}), {"lot_code": "L1", **data}
    )
    assert response.status_code == 200
    assert words in " ".join(response.context["form"].errors["quantity"])
    assert StockMovement.objects.count() == 0
    assert StockLot.objects.count() == 0


def test_it_refuses_a_negative_cost_at_the_field(client, owner, seal_kit) -> None:
    client.force_login(owner)
    response = client.post(
        reverse("stock:receive", kwargs={"part_id": seal_kit.pk}), {"quantity": "2", "cost": "-1"}
    )
    assert "cost" in response.context["form"].errors
    assert StockMovement.objects.count() == 0


def test_it_adjusts_a_count_with_a_reason(client, owner, stocked_kit) -> None:
    client.force_login(owner)
    url = reverse("stock:adjust", kwargs={"part_id": stocked_kit.pk})
    response = client.post(url, {"quantity": "-2", "reason": "Stocktake"})
    assert response.status_code == 302
    assert selectors.on_hand(stocked_kit) == Decimal("3.00")
    assert stocked_kit.movements.latest("at").reason == "Stocktake"


@pytest.mark.parametrize(
    ("data", "field", "words"),
    [
        ({"quantity": "-2", "reason": "  "}, "reason", "required"),
        ({"quantity": "-9", "reason": "Stocktake"}, "quantity", "Only 5 each on hand"),
        ({"quantity": "0", "reason": "Stocktake"}, "quantity", "must not be zero"),
        ({"quantity": "1e30", "reason": "Stocktake"}, "quantity", "at most 10000"),
    ],
)
def test_it_refuses_a_bad_adjustment_at_the_field(client, owner, stocked_kit, data, field, words) -> None:
    client.force_login(owner)
    response = client.post(reverse("stock:adjust", kwargs={"part_id": stocked_kit.pk}), data)
    assert response.status_code == 200
    assert words in " ".join(response.context["form"].errors[field])
    assert selectors.on_hand(stocked_kit) == Decimal("5.00")
    assert stocked_kit.movements.count() == 1


def test_it_keeps_the_ledger_read_only_in_the_admin(client, owner, stocked_kit) -> None:
    client.force_login(owner)
    movement = stocked_kit.movements.get()
    assert client.get(reverse("admin:stock_stockmovement_changelist")).status_code == 200
    assert client.get(reverse("admin:stock_stockmovement_add")).status_code == 403
    change_url = reverse("admin:stock_stockmovement_change", args=[movement.pk])
    assert client.post(change_url, {"quantity": "500"}).status_code == 403
    assert (
        client.post(
            reverse("admin:stock_stockmovement_delete", args=[movement.pk]), {"post": "yes"}
        ).status_code
        == 403
    )
    movement.refresh_from_db()
    assert movement.quantity == Decimal("5.00")
    assert client.get(reverse("admin:stock_part_changelist")).status_code == 200
