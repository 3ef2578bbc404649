"""Payment at the front desk: money taken for a job, what is still owed, and voiding a wrong entry.

What a job costs is ``job_price`` (services, parts, oil and extra labour, tax once); what is owed
is that total less the payments that stand. Payments are never deleted: the owner voids one taken
in error, with a reason, and it stays on the job and in its timeline.
"""

from __future__ import annotations

import datetime
from collections.abc import Iterable
from dataclasses import dataclass
from decimal import Decimal

from django.contrib.auth.models import AbstractBaseUser
from django.core.exceptions import PermissionDenied, ValidationError
from django.db import transaction
from django.utils import timezone

from shopdesk.shop.money import format_money
from shopdesk.workshop.models import Payment, Status, WorkOrder, WorkOrderEvent
from shopdesk.workshop.services.bench import JobRecords, job_price

TAKE = "workshop.add_payment"
VOID = "workshop.void_payment"


@dataclass(frozen=True)
class PaymentState:
    """A job's money at a glance: its total, what was paid and what is still owed."""

    total: Decimal
    paid: Decimal
    payments: list[Payment]

    @property
    def owed(self) -> Decimal:
        return max(self.total - self.paid, Decimal("0.00"))

    @property
    def paid_in_full(self) -> bool:
        return self.total > 0 and self.owed == 0

    @property
    def overpaid(self) -> Decimal:
        """More taken than the job now costs (a part voided after payment): give it back."""
        return max(self.paid - self.total, Decimal("0.00"))


def payment_state(
    work_order: WorkOrder, *, total: Decimal | None = None, payments: Iterable[Payment] | None = None
) -> PaymentState:
    """The job's payment state; ``total`` and ``payments`` when the page has read them already."""
    if total is None:
        total = job_price(work_order).total.total
    listed = list(payments if payments is not None else Payment.objects.filter(work_order=work_order))
    paid = sum((payment.amount for payment in listed if not payment.is_void), Decimal("0.00"))
    return PaymentState(total=total, paid=paid, payments=listed)


def payment_take(
    *,
    work_order: WorkOrder,
    amount: Decimal,
    method: str,
    by: AbstractBaseUser,
    reference: str = "",
    now: datetime.datetime | None = None,
) -> Payment:
    """Record money taken for a job. Refused for a cancelled job, or for more than is owed."""
    if not by.has_perm(TAKE):
        raise PermissionDenied("You may not take payments.")
    now = now or timezone.now()
    with transaction.atomic():
        # Lock the job: two desks taking the last of what is owed at once must not both succeed.
        job = WorkOrder.objects.select_for_update().get(pk=work_order.pk)
        if job.status == Status.CANCELLED:
            raise ValidationError(f"{job.number} is cancelled: there is nothing to pay.")
        state = payment_state(job, total=job_price(job, JobRecords.read(job)).total.total)
        if state.owed <= 0:
            raise ValidationError(f"Nothing is owed on {job.number}.")
        if amount > state.owed:
            raise ValidationError(
                {"amount": f"That is more than the {format_money(state.owed)} still owed on {job.number}."}
            )
        payment = Payment(
            work_order=job,
            amount=amount,
            method=method,
            reference=" ".join(reference.split()),
            taken_at=now,
            taken_by=by,
        )
        payment.full_clean()
        payment.save()
        owed_after = state.owed - amount
        _event(
            job,
            by,
            f"Took {format_money(amount)} by {payment.get_method_display().lower()}; "
            + (f"{format_money(owed_after)} still owed." if owed_after else "paid in full."),
            now,
        )
    return payment


def payment_void(
    *, payment: Payment, reason: str, by: AbstractBaseUser, now: datetime.datetime | None = None
) -> Payment:
    """Void a payment taken in error: it stays on the job, marked void with the reason."""
    if not by.has_perm(VOID):
        raise PermissionDenied("Only the owner voids a payment.")
    reason = " ".join(reason.split())
    if not reason:
        raise ValidationError({"void_reason": "Say why the payment is wrong."})
    now = now or timezone.now()
    with transaction.atomic():
        job = WorkOrder.objects.select_for_update().get(pk=payment.work_order_id)
        current = Payment.objects.select_for_update().get(pk=payment.pk)
        if current.is_void:
            raise ValidationError("This payment is already void.")
        current.voided_at = now
        current.voided_by = by
        current.void_reason = reason[:200]
        current.full_clean()
        current.save()
        _event(job, by, f"Voided the payment of {format_money(current.amount)}: {reason}", now)
    return current


def _event(work_order: WorkOrder, by: AbstractBaseUser, message: str, now: datetime.datetime) -> None:
    WorkOrderEvent.objects.create(
        work_order=work_order, at=now, by=by, kind=WorkOrderEvent.Kind.PAYMENT, message=message[:500]
    )
