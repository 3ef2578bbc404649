"""Template filters that show stored values in the shop's display units and money."""

from __future__ import annotations

from decimal import Decimal

from django import template

from shopdesk.shop import quantities
from shopdesk.shop.money import format_money

register = template.Library()

_KINDS = {
    "pressure": quantities.PRESSURE,
    "volume": quantities.VOLUME,
    "length": quantities.LENGTH,
    "mass": quantities.MASS,
    "torque": quantities.TORQUE,
    "spring_rate": quantities.SPRING_RATE,
    "force": quantities.FORCE,
}


@register.filter
def quantity(value: float | Decimal | None, kind: str) -> str:
    """``{{ chamber.volume_ml|quantity:"volume" }}`` -> "120 mL" (or fl oz, per the shop's setting)."""
    return quantities.format_quantity(value, _KINDS[kind])


@register.filter
def money(value: Decimal | None) -> str:
    if value is None:
        return "—"
    return format_money(Decimal(value))


@register.simple_tag
def display_unit(kind: str) -> str:
    return quantities.unit_label(_KINDS[kind].display_unit)


@register.filter
def has_any(perms: object, names: tuple[str, ...]) -> bool:
    """``{% if perms|has_any:move.permissions %}``: the user holds at least one of the permissions."""
    return any(name in perms for name in names)  # type: ignore[operator]
