"""Rules for customers and units."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from django.contrib.auth.models import AbstractBaseUser, AnonymousUser
from django.db import transaction
from django.utils import timezone

from shopdesk.customers.forms import CustomerForm, UnitForm
from shopdesk.customers.models import Customer, Unit
from shopdesk.owner.services import due_refresh


def customer_save(*, form: CustomerForm, by: AbstractBaseUser | AnonymousUser | None = None) -> Customer:
    """Save a customer from a valid form; a change of reminder consent is stamped with its date."""
    customer: Customer = form.instance
    consent_changed = customer.pk is None and customer.reminder_consent
    if customer.pk is not None and "reminder_consent" in form.changed_data:
        consent_changed = True
    with transaction.atomic():
        customer = form.save(commit=False)
        if consent_changed:
            customer.consent_changed_at = timezone.now()
        customer.full_clean()
        customer.save()
    return customer


def customer_consent_set(*, customer_id: int, consent: bool) -> Customer | None:
    """Give or withdraw reminder consent, stamped with its moment; None when the customer is gone.

    A customer whose consent already is ``consent`` keeps the date it was given or withdrawn.
    """
    with transaction.atomic():
        customer = Customer.objects.select_for_update().filter(pk=customer_id).first()
        if customer is None:
            return None
        if customer.reminder_consent != consent:
            customer.reminder_consent = consent
            customer.consent_changed_at = timezone.now()
            customer.full_clean()
            customer.save(update_fields=["reminder_consent", "consent_changed_at"])
    return customer


def unit_save(*, form: UnitForm, setup: Mapping[str, Any], customer: Customer) -> Unit:
    """Save a unit from a valid form with its current setup."""
    with transaction.atomic():
        unit: Unit = form.save(commit=False)
        unit.customer = customer
        for name, value in setup.items():
            setattr(unit, name, value)
        unit.full_clean()
        unit.save()
        due_refresh(unit=unit)  # a new unit, model or rider's week moves its due dates
    return unit
