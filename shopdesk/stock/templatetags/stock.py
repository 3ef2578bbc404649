"""Template filters for stock: quantities in a part's unit of measure, prices per unit."""

from __future__ import annotations

from decimal import Decimal

from django import template
from django.conf import settings

from shopdesk.stock.models import Part

register = template.Library()


def _plain(value: Decimal) -> str:
    text = f"{value:,f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


@register.filter
def stock_quantity(value: Decimal | None, part: Part) -> str:
    """``{{ part.on_hand|stock_quantity:part }}`` -> "3" for items, "1,250 mL" for oil."""
    if value is None:
        return "—"
    shown = _plain(Decimal(value))
    if shown == "-0":
        shown = "0"
    return f"{shown} mL" if part.unit_of_measure == Part.UnitOfMeasure.ML else shown


@register.filter
def signed_quantity(value: Decimal | None, part: Part) -> str:
    """A movement's quantity with its sign: "+2", "−95 mL"."""
    if value is None:
        return "—"
    sign = "+" if value > 0 else "−" if value < 0 else ""
    return sign + stock_quantity(abs(Decimal(value)), part)


@register.filter
def unit_price(value: Decimal | None) -> str:
    """A price per unit of measure: to the cent when it is whole cents ("£12.50"), else to four
    places ("£0.0450"), so that a per-mL price is never shown rounded away."""
    if value is None:
        return "—"
    amount = Decimal(value)
    places = Decimal("0.01") if amount == amount.quantize(Decimal("0.01")) else Decimal("0.0001")
    return f"{settings.SHOP_CURRENCY}{amount.quantize(places):,}"
