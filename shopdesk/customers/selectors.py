"""Read-side queries that the front desk's pages share."""

from __future__ import annotations

from dataclasses import dataclass

from django.db.models import Q, QuerySet

from shopdesk.customers.models import Customer, Unit, phone_digits

SEARCH_LIMIT = 15
SEARCH_MAX_LENGTH = 100


@dataclass(frozen=True)
class SearchResults:
    query: str
    customers: list[Customer]
    units: list[Unit]

    @property
    def empty(self) -> bool:
        return not self.customers and not self.units


def search(query: str, *, limit: int = SEARCH_LIMIT) -> SearchResults:
    """Customers by name, phone or email, and units by serial number, best matches first.

    Two queries whatever the size of the shop: each is limited, and a unit's customer and
    model come with it.
    """
    text = " ".join(query.split())[:SEARCH_MAX_LENGTH]
    if len(text) < 2:
        return SearchResults(query=text, customers=[], units=[])
    digits = phone_digits(text)
    match = Q(name__icontains=text) | Q(email__icontains=text)
    if len(digits) >= 3 and len(digits) >= len(text.replace(" ", "")) - 3:
        match |= Q(phone_digits__contains=digits)
    customers = list(Customer.objects.filter(match).order_by("name", "id")[:limit])
    units = list(
        Unit.objects.filter(serial_number__icontains=text)
        .select_related("customer", "unit_model")
        .order_by("serial_number", "id")[:limit]
    )
    return SearchResults(query=text, customers=customers, units=units)


def customer_units(customer: Customer) -> QuerySet[Unit]:
    return customer.units.select_related("unit_model").order_by("id")
