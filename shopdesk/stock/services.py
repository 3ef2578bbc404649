"""The stock rules: receive, use on a job, return from a job, adjust; and saving a part.

Each rule writes one movement to the ledger inside one transaction, with the part's row
locked (``select_for_update``; on SQLite the immediate transaction holds the write lock)
before the ledger is summed, so two jobs taking the last item at once cannot both succeed.

Quantities are in the part's unit of measure: a plain number (``Decimal``, ``int``, a
``str`` of digits or a ``float``) is taken in it, a pint quantity is converted to it
(a volume for parts counted in mL, a plain count for parts counted by the item). They are
kept to 0.01; a part counted by the item takes whole numbers only.

A refusal raises :class:`StockRefused` (a ``ValidationError``) whose ``field`` names the
argument at fault, so a form can show it at its field; a missing permission raises
``PermissionDenied``.
"""

from __future__ import annotations

import datetime
from decimal import ROUND_HALF_UP, Decimal, InvalidOperation
from typing import TYPE_CHECKING, Any

import pint
from django.contrib.auth.models import AbstractBaseUser
from django.core.exceptions import PermissionDenied, ValidationError
from django.db import IntegrityError, transaction
from django.utils import timezone

from shopdesk.stock import selectors
from shopdesk.stock.models import MAX_MOVEMENT, Part, StockLot, StockMovement

if TYPE_CHECKING:
    from shopdesk.workshop.models import WorkOrder

HUNDREDTH = Decimal("0.01")
REASON_LENGTH = 300


class StockRefused(ValidationError):
    """A stock movement the rules do not allow. ``message`` says why; ``field`` names the argument."""

    def __init__(self, message: str, *, field: str = "quantity") -> None:
        super().__init__(message, code="stock_refused")
        self.field = field

    def __str__(self) -> str:
        return str(self.message)


def _shown(quantity: Decimal, part: Part) -> str:
    """``Decimal("2.00")`` of a part counted by the item -> "2 each"; 12.50 of an oil -> "12.5 mL"."""
    text = f"{quantity:f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return f"{text} {part.unit_label}"


def _quantity(value: Any, part: Part, *, signed: bool = False) -> Decimal:
    """The quantity in the part's unit of measure, checked: not zero, not absurd, whole for items."""
    unit = part.unit_label
    if isinstance(value, bool):
        raise StockRefused("Give the quantity as a number.")
    if isinstance(value, pint.Quantity):
        if part.unit_of_measure == Part.UnitOfMeasure.ML:
            if not value.check("[volume]"):
                raise StockRefused(f"{part.name} is drawn by volume (mL), not by {value.units:~P}.")
            value = value.to("mL").magnitude
        else:
            if not value.dimensionless:
                raise StockRefused(f"{part.name} is counted by the item, not measured in {value.units:~P}.")
            value = value.to("dimensionless").magnitude
    if part.kind == Part.Kind.OIL and part.unit_of_measure != Part.UnitOfMeasure.ML:
        # The model's constraint forbids this; kept so that no oil is ever drawn down by the item.
        raise StockRefused(f"{part.name} is an oil: it is drawn down in mL, never by the item.")
    try:
        number = Decimal(str(value).strip()) if isinstance(value, (str, float)) else Decimal(value)
    except (InvalidOperation, TypeError, ValueError):
        raise StockRefused(f"“{value}” is not a quantity: type a number of {unit}.") from None
    if not number.is_finite():
        raise StockRefused(f"“{value}” is not a quantity: type a number of {unit}.")
    if number.copy_abs() > MAX_MOVEMENT:
        raise StockRefused(
            f"{_shown(number.copy_abs(), part)} is more than one movement may move "
            f"(at most {_shown(MAX_MOVEMENT, part)}). Check the quantity."
        )
    number = number.quantize(HUNDREDTH, rounding=ROUND_HALF_UP)
    if number == 0 or (number < 0 and not signed):
        raise StockRefused(
            "The quantity must not be zero." if signed else f"The quantity must be more than 0 {unit}."
        )
    if part.is_counted_whole and number != number.to_integral_value():
        raise StockRefused(f"{part.name} is counted by the item: give a whole number.")
    return number


def _reason(text: str) -> str:
    return " ".join((text or "").split())[:REASON_LENGTH]


def _locked_part(part: Part) -> Part:
    return Part.objects.select_for_update().get(pk=part.pk)


def _save(movement: StockMovement) -> StockMovement:
    movement.full_clean()
    try:
        with transaction.atomic():
            movement.save()
    except IntegrityError:
        # Only a second return of the same use can get here (the locks make it rare): the
        # database's unique constraint on ``reverses`` is the last word.
        raise StockRefused("This use has already been returned.", field="movement") from None
    return movement


def stock_receive(
    *,
    part: Part,
    quantity: Any,
    by: AbstractBaseUser,
    lot_code: str = "",
    cost: Decimal | None = None,
    now: datetime.datetime | None = None,
) -> StockMovement:
    """Book a delivery into stock. A lot code opens the lot (or adds to it when the part has it).

    ``cost`` is per unit of measure; when given it is kept on the movement and becomes the
    part's cost (the last price paid).
    """
    if not by.has_perm("stock.receive_stock"):
        raise PermissionDenied("Only the owner receives stock.")
    now = now or timezone.now()
    amount = _quantity(quantity, part)
    if cost is not None:
        try:
            cost = Decimal(cost)
        except (InvalidOperation, TypeError, ValueError):
            raise StockRefused("The cost must be an amount of money.", field="cost") from None
        if not cost.is_finite() or cost < 0:
            raise StockRefused("The cost cannot be negative.", field="cost")
        if cost >= Decimal("100000000"):
            raise StockRefused("That cost is too large: give the cost per unit of measure.", field="cost")
        cost = cost.quantize(Decimal("0.0001"), rounding=ROUND_HALF_UP)
    code = " ".join((lot_code or "").split()).upper()
    if len(code) > StockLot._meta.get_field("lot_code").max_length:
        raise StockRefused("A lot code has at most 60 characters.", field="lot_code")
    with transaction.atomic():
        locked = _locked_part(part)
        lot = None
        if code:
            lot = StockLot.objects.filter(part=locked, lot_code=code).first()
            if lot is None:
                lot = StockLot(part=locked, lot_code=code, received_on=timezone.localdate(now))
                lot.full_clean()
                lot.save()
        movement = _save(
            StockMovement(
                part=locked,
                lot=lot,
                quantity=amount,
                kind=StockMovement.Kind.RECEIVED,
                unit_cost=cost,
                by=by,
                at=now,
            )
        )
        if cost is not None and cost != locked.cost:
            locked.cost = cost
            locked.full_clean()
            locked.save(update_fields=["cost"])
            part.cost = cost
    return movement


def stock_use_on_job(
    *,
    part: Part,
    quantity: Any,
    work_order: WorkOrder,
    by: AbstractBaseUser,
    lot: StockLot | None = None,
    override_reason: str = "",
    now: datetime.datetime | None = None,
) -> StockMovement:
    """Take ``quantity`` of ``part`` for a job: a negative "used" movement.

    An oil is drawn down in mL. Using more than is on hand is refused, unless the user may
    override (``stock.override_stock``) and gives ``override_reason``, which is kept on the
    movement. The caller checks that the user may record parts on the job.
    """
    now = now or timezone.now()
    amount = _quantity(quantity, part)
    reason = _reason(override_reason)
    if work_order is None or work_order.pk is None:
        raise StockRefused("Stock is used on a job: give the job.", field="work_order")
    if not work_order.is_open:
        raise StockRefused(
            f"{work_order.number} is {work_order.get_status_display().lower()}: nothing more can be used on it.",
            field="work_order",
        )
    with transaction.atomic():
        locked = _locked_part(part)
        if lot is not None and (
            lot.part_id != locked.pk or not StockLot.objects.filter(pk=lot.pk, part=locked).exists()
        ):
            raise StockRefused(
                f"Lot {lot.lot_code} is not a lot of {locked.part_number} {locked.name}.", field="lot"
            )
        on_hand = selectors.on_hand(locked)
        over = amount > on_hand
        if over and not by.has_perm("stock.override_stock"):
            raise StockRefused(
                f"Only {_shown(on_hand, locked)} of {locked.part_number} {locked.name} on hand; "
                f"{_shown(amount, locked)} asked for. Ask the owner, who can allow it with a reason."
            )
        if over and not reason:
            raise StockRefused(
                f"Only {_shown(on_hand, locked)} on hand: say why {_shown(amount, locked)} "
                "may be used anyway (e.g. “delivery arrived, not booked in yet”).",
                field="override_reason",
            )
        movement = _save(
            StockMovement(
                part=locked,
                lot=lot,
                quantity=-amount,
                kind=StockMovement.Kind.USED,
                reason=reason,
                overrode_on_hand=over,
                work_order=work_order,
                by=by,
                at=now,
            )
        )
    return movement


def stock_return_from_job(
    *,
    movement: StockMovement,
    by: AbstractBaseUser,
    reason: str = "",
    now: datetime.datetime | None = None,
) -> StockMovement:
    """Undo a use on a job: a positive "returned" movement pointing at it. A use returns once."""
    now = now or timezone.now()
    with transaction.atomic():
        Part.objects.select_for_update().filter(pk=movement.part_id).first()
        used = StockMovement.objects.select_for_update().filter(pk=movement.pk).first()
        if used is None:
            raise StockRefused("That movement is not in the ledger.", field="movement")
        if used.kind != StockMovement.Kind.USED:
            raise StockRefused(
                f"Only a use on a job can be returned; this is “{used.get_kind_display().lower()}”.",
                field="movement",
            )
        earlier = used.reversals.select_related("by").first()
        if earlier is not None:
            who = earlier.by.get_full_name() or earlier.by.get_username()
            raise StockRefused(
                f"This use was already returned, by {who} on {timezone.localtime(earlier.at):%d %b %Y %H:%M}.",
                field="movement",
            )
        returned = _save(
            StockMovement(
                part_id=used.part_id,
                lot_id=used.lot_id,
                quantity=-used.quantity,
                kind=StockMovement.Kind.RETURNED,
                reason=_reason(reason),
                work_order_id=used.work_order_id,
                reverses=used,
                by=by,
                at=now,
            )
        )
    return returned


def stock_adjust(
    *,
    part: Part,
    quantity: Any,
    reason: str,
    by: AbstractBaseUser,
    now: datetime.datetime | None = None,
) -> StockMovement:
    """Correct the count by ``quantity`` (negative takes away), with the reason. Owner only.

    The count cannot be taken below zero: a shelf holds no less than nothing.
    """
    if not by.has_perm("stock.adjust_stock"):
        raise PermissionDenied("Only the owner adjusts stock counts.")
    now = now or timezone.now()
    amount = _quantity(quantity, part, signed=True)
    why = _reason(reason)
    if not why:
        raise StockRefused("Say why the count changes (e.g. “stocktake”, “damaged”).", field="reason")
    with transaction.atomic():
        locked = _locked_part(part)
        on_hand = selectors.on_hand(locked)
        if on_hand + amount < 0:
            raise StockRefused(
                f"Only {_shown(on_hand, locked)} on hand: taking away {_shown(-amount, locked)} "
                "would leave less than nothing."
            )
        movement = _save(
            StockMovement(
                part=locked, quantity=amount, kind=StockMovement.Kind.ADJUSTED, reason=why, by=by, at=now
            )
        )
    return movement


def part_save(*, part: Part, by: AbstractBaseUser) -> Part:
    """Save a new or changed part, validated (its unit of measure is fixed once it has movements)."""
    needed = "stock.change_part" if part.pk else "stock.add_part"
    if not by.has_perm(needed):
        raise PermissionDenied("Only the owner changes parts and prices.")
    with transaction.atomic():
        if part.pk is not None:
            # Hold the row so that a movement cannot be written between the check and the save.
            Part.objects.select_for_update().filter(pk=part.pk).first()
        part.full_clean()
        part.save()
    return part
