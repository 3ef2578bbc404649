"""Payment at the front desk: money taken for a job on its page, and the owner voiding a wrong entry."""

from __future__ import annotations

from django.contrib.auth.decorators import permission_required
from django.core.exceptions import ValidationError
from django.http import HttpRequest, HttpResponse
from django.shortcuts import get_object_or_404
from django.views.decorators.http import require_POST

from shopdesk.shop.money import format_money
from shopdesk.workshop.bench_views import Overrides, _add_errors, _after_save, _job, _render_job
from shopdesk.workshop.forms import PaymentForm, PaymentVoidForm
from shopdesk.workshop.models import Payment
from shopdesk.workshop.services import payments


@require_POST
@permission_required(payments.TAKE, raise_exception=True)
def payment_take(request: HttpRequest, number: str) -> HttpResponse:
    work_order = _job(number)
    form = PaymentForm(request.POST, prefix="payment")
    if form.is_valid():
        try:
            payment = payments.payment_take(
                work_order=work_order,
                amount=form.cleaned_data["amount"],
                method=form.cleaned_data["method"],
                reference=form.cleaned_data["reference"],
                by=request.user,
            )
        except ValidationError as error:
            _add_errors(form, error)
        else:
            return _after_save(
                request,
                work_order,
                "payment",
                f"Took {format_money(payment.amount)} by {payment.get_method_display().lower()}.",
            )
    return _render_job(request, work_order, Overrides(payment=form))


@require_POST
@permission_required(payments.VOID, raise_exception=True)
def payment_void(request: HttpRequest, number: str, payment_id: int) -> HttpResponse:
    work_order = _job(number)
    payment = get_object_or_404(Payment, pk=payment_id, work_order=work_order)
    form = PaymentVoidForm(request.POST, prefix=f"void-payment-{payment.pk}")
    if form.is_valid():
        try:
            payments.payment_void(payment=payment, reason=form.cleaned_data["reason"], by=request.user)
        except ValidationError as error:
            _add_errors(form, error)
        else:
            return _after_save(
                request, work_order, "payment", "Payment voided; it stays on the job, marked void."
            )
    return _render_job(request, work_order, Overrides(payment_void=(payment.pk, form)))
