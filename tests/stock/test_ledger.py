"""The stock ledger: on hand is its sum; receive, use, return and adjust, and every refusal."""

from __future__ import annotations

from decimal import Decimal

import pytest
from django.core.exceptions import PermissionDenied, ValidationError
from django.db import IntegrityError, transaction

from shopdesk.calc import Q_
from shopdesk.stock import selectors
from shopdesk.stock.models import Part, StockLot, StockMovement
from shopdesk.stock.services import (
    StockRefused,
    part_save,
    stock_adjust,
    stock_receive,
    stock_return_from_job,
    stock_use_on_job,
)


def _ledger(part: Part) -> list[tuple[str, Decimal]]:
    return list(part.movements.order_by("at", "id").values_list("kind", "quantity"))


def test_it_counts_on_hand_as_the_sum_of_the_ledger(stocked_kit, work_order, technician, owner) -> None:
    used = stock_use_on_job(part=stocked_kit, quantity=2, work_order=work_order, by=technician)
    stock_return_from_job(movement=used, by=technician, reason="Wrong size")
    stock_use_on_job(part=stocked_kit, quantity=1, work_order=work_order, by=technician)
    stock_adjust(part=stocked_kit, quantity=-1, reason="Stocktake: one torn bag", by=owner)

    # 5 received − 2 used + 2 returned − 1 used − 1 adjusted = 3
    assert _ledger(stocked_kit) == [
        ("received", Decimal("5.00")),
        ("used", Decimal("-2.00")),
        ("returned", Decimal("2.00")),
        ("used", Decimal("-1.00")),
        ("adjusted", Decimal("-1.00")),
    ]
    assert selectors.on_hand(stocked_kit) == Decimal("3.00")
    listed = selectors.parts_with_on_hand().get(pk=stocked_kit.pk)
    assert listed.on_hand == Decimal("3.00")
    assert listed.low is False  # reorder level 2


def test_it_flags_a_part_low_at_or_below_its_reorder_level(
    stocked_kit, seal_kit, work_order, technician
) -> None:
    stock_use_on_job(part=stocked_kit, quantity=3, work_order=work_order, by=technician)
    listed = selectors.parts_with_on_hand().get(pk=seal_kit.pk)
    assert (listed.on_hand, listed.low) == (Decimal("2.00"), True)  # 2 on hand, reorder at 2


def test_it_counts_a_part_never_received_as_zero_and_low(seal_kit) -> None:
    assert selectors.on_hand(seal_kit) == Decimal("0.00")
    listed = selectors.parts_with_on_hand().get(pk=seal_kit.pk)
    assert (listed.on_hand, listed.low) == (Decimal("0.00"), True)


def test_it_receives_into_a_lot_and_keeps_the_cost_paid(seal_kit, owner) -> None:
    first = stock_receive(part=seal_kit, quantity=4, by=owner, lot_code=" l-2402 ", cost=Decimal("12.25"))
    again = stock_receive(part=seal_kit, quantity=2, by=owner, lot_code="L-2402")
    assert first.kind == StockMovement.Kind.RECEIVED
    assert first.lot == again.lot
    assert first.lot.lot_code == "L-2402"
    assert first.unit_cost == Decimal("12.2500")
    assert again.unit_cost is None
    seal_kit.refresh_from_db()
    assert seal_kit.cost == Decimal("12.2500")  # the last price paid
    assert StockLot.objects.filter(part=seal_kit).count() == 1
    assert selectors.on_hand(seal_kit) == Decimal("6.00")
    assert list(selectors.lots_for(seal_kit).values_list("lot_code", "on_hand")) == [
        ("L-2402", Decimal("6.00"))
    ]


@pytest.mark.parametrize("role", ["technician", "front_desk"])
def test_it_lets_only_the_owner_receive_and_adjust(seal_kit, role_users, role) -> None:
    user = role_users[role]
    with pytest.raises(PermissionDenied):
        stock_receive(part=seal_kit, quantity=5, by=user)
    with pytest.raises(PermissionDenied):
        stock_adjust(part=seal_kit, quantity=5, reason="Found a box", by=user)
    assert StockMovement.objects.count() == 0


def test_it_uses_stock_on_a_job(stocked_kit, work_order, technician) -> None:
    lot = StockLot.objects.get(part=stocked_kit)
    movement = stock_use_on_job(part=stocked_kit, quantity=2, work_order=work_order, by=technician, lot=lot)
    assert movement.kind == StockMovement.Kind.USED
    assert movement.quantity == Decimal("-2.00")
    assert movement.work_order == work_order
    assert movement.lot == lot
    assert movement.by == technician
    assert movement.overrode_on_hand is False
    assert selectors.on_hand(stocked_kit) == Decimal("3.00")
    assert selectors.lots_for(stocked_kit).get().on_hand == Decimal("3.00")


def test_it_refuses_a_technician_more_than_is_on_hand(stocked_kit, work_order, technician) -> None:
    with pytest.raises(StockRefused) as refused:
        stock_use_on_job(part=stocked_kit, quantity=6, work_order=work_order, by=technician)
    assert refused.value.field == "quantity"
    assert str(refused.value) == (
        "Only 5 each of SK-34-AIR Air spring seal kit, 34 mm on hand; 6 each asked for. "
        "Ask the owner, who can allow it with a reason."
    )
    assert _ledger(stocked_kit) == [("received", Decimal("5.00"))]


def test_it_refuses_even_the_owner_more_than_is_on_hand_without_a_reason(
    stocked_kit, work_order, owner
) -> None:
    with pytest.raises(StockRefused) as refused:
        stock_use_on_job(part=stocked_kit, quantity=6, work_order=work_order, by=owner, override_reason="   ")
    assert refused.value.field == "override_reason"
    assert "say why" in refused.value.message
    assert selectors.on_hand(stocked_kit) == Decimal("5.00")


def test_it_lets_the_owner_use_more_than_is_on_hand_with_a_reason(stocked_kit, work_order, owner) -> None:
    movement = stock_use_on_job(
        part=stocked_kit,
        quantity=6,
        work_order=work_order,
        by=owner,
        override_reason="Delivery not booked in yet",
    )
    assert movement.overrode_on_hand is True
    assert movement.reason == "Delivery not booked in yet"
    assert selectors.on_hand(stocked_kit) == Decimal("-1.00")


def test_it_refuses_a_lot_of_another_part(stocked_kit, stocked_oil, work_order, technician) -> None:
    oil_lot = StockLot.objects.get(part=stocked_oil)
    with pytest.raises(StockRefused) as refused:
        stock_use_on_job(part=stocked_kit, quantity=1, work_order=work_order, by=technician, lot=oil_lot)
    assert refused.value.field == "lot"
    assert refused.value.message == "Lot B-77 is not a lot of SK-34-AIR Air spring seal kit, 34 mm."
    assert selectors.on_hand(stocked_kit) == Decimal("5.00")
    assert selectors.on_hand(stocked_oil) == Decimal("1000.00")


def test_it_refuses_a_lot_that_does_not_exist(stocked_kit, work_order, technician) -> None:
    ghost = StockLot(part=stocked_kit, lot_code="NOPE-1", received_on="2026-01-05")  # never saved
    with pytest.raises(StockRefused) as refused:
        stock_use_on_job(part=stocked_kit, quantity=1, work_order=work_order, by=technician, lot=ghost)
    assert refused.value.field == "lot"
    assert selectors.on_hand(stocked_kit) == Decimal("5.00")


@pytest.mark.parametrize(
    ("quantity", "words"),
    [
        (0, "more than 0 each"),
        (-1, "more than 0 each"),
        (Decimal("10001"), "at most 10000 each"),
        (Decimal("1e9"), "at most 10000 each"),
        (Decimal("1.5"), "whole number"),
        ("two", "not a quantity"),
        (Decimal("NaN"), "not a quantity"),
        (True, "as a number"),
        (Q_(5, "mL"), "counted by the item"),
    ],
)
def test_it_refuses_a_quantity_that_makes_no_sense(stocked_kit, work_order, owner, quantity, words) -> None:
    with pytest.raises(StockRefused) as refused:
        stock_use_on_job(
            part=stocked_kit, quantity=quantity, work_order=work_order, by=owner, override_reason="x"
        )
    assert words in refused.value.message
    assert refused.value.field == "quantity"
    assert _ledger(stocked_kit) == [("received", Decimal("5.00"))]


def test_it_refuses_to_use_stock_on_a_cancelled_job(stocked_kit, work_order, technician) -> None:
    type(work_order).objects.filter(pk=work_order.pk).update(status="cancelled")
    work_order.refresh_from_db()
    with pytest.raises(StockRefused) as refused:
        stock_use_on_job(part=stocked_kit, quantity=1, work_order=work_order, by=technician)
    assert refused.value.field == "work_order"
    assert selectors.on_hand(stocked_kit) == Decimal("5.00")


def test_it_draws_oil_down_in_ml(stocked_oil, work_order, technician) -> None:
    stock_use_on_job(part=stocked_oil, quantity=Decimal("95.0"), work_order=work_order, by=technician)
    stock_use_on_job(
        part=stocked_oil, quantity=Q_(15, "cm**3"), work_order=work_order, by=technician
    )  # 15 mL
    stock_use_on_job(
        part=stocked_oil, quantity=12.5, work_order=work_order, by=technician
    )  # a float, as filled_ml
    assert _ledger(stocked_oil)[1:] == [
        ("used", Decimal("-95.00")),
        ("used", Decimal("-15.00")),
        ("used", Decimal("-12.50")),
    ]
    # 1000 − 95 − 15 − 12.5
    assert selectors.on_hand(stocked_oil) == Decimal("877.50")
    # 95 mL at 0.0450 per mL is 4.275, rounded once, half up: 4.28
    assert stocked_oil.price_for(Decimal("95")) == Decimal("4.28")
    assert stocked_oil.price_per_litre == Decimal("45.00")


def test_it_refuses_oil_counted_by_the_item(stocked_oil, work_order, technician) -> None:
    with pytest.raises(StockRefused) as refused:
        stock_use_on_job(
            part=stocked_oil, quantity=Q_(2, "dimensionless"), work_order=work_order, by=technician
        )
    assert "drawn by volume (mL)" in refused.value.message
    assert selectors.on_hand(stocked_oil) == Decimal("1000.00")


def test_it_refuses_an_oil_part_that_is_not_counted_in_ml(oil) -> None:
    part = Part(
        part_number="OIL-X",
        name="Oil by the bottle",
        kind=Part.Kind.OIL,
        unit_of_measure="each",
        oil=oil,
        price=Decimal("9"),
    )
    with pytest.raises(ValidationError) as refused:
        part.full_clean()
    assert refused.value.message_dict["unit_of_measure"] == ["Oil is counted in mL, not by the item."]
    no_oil = Part(
        part_number="OIL-Y",
        name="Unknown oil",
        kind=Part.Kind.OIL,
        unit_of_measure="ml",
        price=Decimal("0.04"),
    )
    with pytest.raises(ValidationError) as refused:
        no_oil.full_clean()
    assert "oil" in refused.value.message_dict
    # And the database refuses it too, whoever writes it.
    with pytest.raises(IntegrityError), transaction.atomic():
        Part.objects.create(
            part_number="OIL-Z",
            name="Bottle",
            kind="oil",
            unit_of_measure="each",
            oil=oil,
            price=Decimal("9"),
        )
    assert not Part.objects.filter(part_number__startswith="OIL-").exists()


def test_it_returns_a_use_once(stocked_kit, work_order, technician) -> None:
    used = stock_use_on_job(part=stocked_kit, quantity=2, work_order=work_order, by=technician)
    returned = stock_return_from_job(movement=used, by=technician, reason="Not needed")
    assert returned.kind == StockMovement.Kind.RETURNED
    assert returned.quantity == Decimal("2.00")
    assert returned.reverses == used
    assert returned.work_order == work_order
    assert returned.reason == "Not needed"
    with pytest.raises(StockRefused) as refused:
        stock_return_from_job(movement=used, by=technician)
    assert refused.value.message.startswith("This use was already returned, by Bench on ")
    assert selectors.on_hand(stocked_kit) == Decimal("5.00")
    assert StockMovement.objects.filter(kind="returned").count() == 1


def test_it_refuses_to_return_what_was_not_used_on_a_job(stocked_kit, technician) -> None:
    receipt = stocked_kit.movements.get()
    with pytest.raises(StockRefused) as refused:
        stock_return_from_job(movement=receipt, by=technician)
    assert "Only a use on a job can be returned" in refused.value.message
    assert _ledger(stocked_kit) == [("received", Decimal("5.00"))]


def test_it_keeps_a_second_return_out_at_the_database(stocked_kit, work_order, technician) -> None:
    used = stock_use_on_job(part=stocked_kit, quantity=1, work_order=work_order, by=technician)
    stock_return_from_job(movement=used, by=technician)
    with pytest.raises(IntegrityError), transaction.atomic():
        StockMovement.objects.create(
            part=stocked_kit,
            quantity=1,
            kind="returned",
            work_order=work_order,
            reverses=used,
            by=technician,
            at=used.at,
        )
    assert selectors.on_hand(stocked_kit) == Decimal("5.00")


def test_it_adjusts_the_count_with_a_reason(stocked_kit, owner) -> None:
    taken = stock_adjust(
        part=stocked_kit, quantity=Decimal("-2"), reason="  Stocktake:   2 missing ", by=owner
    )
    added = stock_adjust(part=stocked_kit, quantity=1, reason="Found behind the bench", by=owner)
    assert (taken.kind, taken.quantity, taken.reason) == (
        "adjusted",
        Decimal("-2.00"),
        "Stocktake: 2 missing",
    )
    assert added.quantity == Decimal("1.00")
    assert selectors.on_hand(stocked_kit) == Decimal("4.00")


@pytest.mark.parametrize(
    ("quantity", "reason", "field", "words"),
    [
        (Decimal("-1"), "", "reason", "Say why"),
        (Decimal("-6"), "Stocktake", "quantity", "Only 5 each on hand: taking away 6 each"),
        (0, "Stocktake", "quantity", "must not be zero"),
        (Decimal("20000"), "Stocktake", "quantity", "at most 10000"),
    ],
)
def test_it_refuses_an_adjustment_that_makes_no_sense(
    stocked_kit, owner, quantity, reason, field, words
) -> None:
    with pytest.raises(StockRefused) as refused:
        stock_adjust(part=stocked_kit, quantity=quantity, reason=reason, by=owner)
    assert refused.value.field == field
    assert words in refused.value.message
    assert _ledger(stocked_kit) == [("received", Decimal("5.00"))]


def test_it_fixes_the_unit_of_measure_once_a_part_has_movements(stocked_kit, seal_kit, owner) -> None:
    seal_kit.unit_of_measure = Part.UnitOfMeasure.ML
    with pytest.raises(ValidationError) as refused:
        part_save(part=seal_kit, by=owner)
    assert "cannot change" in refused.value.message_dict["unit_of_measure"][0]
    seal_kit.refresh_from_db()
    assert seal_kit.unit_of_measure == "each"


def test_it_keeps_part_changes_for_the_owner(seal_kit, technician, owner) -> None:
    seal_kit.price = Decimal("1.00")
    with pytest.raises(PermissionDenied):
        part_save(part=seal_kit, by=technician)
    seal_kit.refresh_from_db()
    assert seal_kit.price == Decimal("24.0000")
    seal_kit.price = Decimal("26.5")
    part_save(part=seal_kit, by=owner)
    seal_kit.refresh_from_db()
    assert seal_kit.price == Decimal("26.5000")
    assert seal_kit.history.count() == 2  # created, then the price change
