"""Money: Decimal end to end, rounded to the cent in one place."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from decimal import ROUND_HALF_UP, Decimal

from django.conf import settings

CENT = Decimal("0.01")


def round_money(amount: Decimal) -> Decimal:
    """Round to the cent, halves away from zero, as a till does."""
    return amount.quantize(CENT, rounding=ROUND_HALF_UP)


def format_money(amount: Decimal) -> str:
    """An amount as the shop shows it: its currency sign, to the cent, thousands separated."""
    return f"{settings.SHOP_CURRENCY}{round_money(Decimal(amount)):,.2f}"


@dataclass(frozen=True)
class Total:
    subtotal: Decimal
    tax_rate: Decimal
    tax: Decimal
    total: Decimal


def total_with_tax(lines: Iterable[Decimal], *, tax_rate: Decimal) -> Total:
    """Sum the lines (each already to the cent), then add tax rounded once on the sum."""
    subtotal = sum((Decimal(line) for line in lines), Decimal("0.00"))
    tax = round_money(subtotal * tax_rate)
    return Total(
        subtotal=round_money(subtotal), tax_rate=tax_rate, tax=tax, total=round_money(subtotal) + tax
    )
