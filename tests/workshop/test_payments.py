"""Payment at the front desk: money taken for a job, what is still owed, and voiding a wrong entry."""

from __future__ import annotations

import threading
from decimal import Decimal

import pytest
from django.core.exceptions import PermissionDenied, ValidationError
from django.db import connections
from django.urls import reverse

from shopdesk.workshop.models import Payment, Status, WorkOrderEvent
from shopdesk.workshop.services import payments, work_order_move
from tests.conftest import skip_unless_postgresql

# The conftest job: 45.00 + 89.50 = 134.50 before tax; 20 % tax is 26.90; 161.40 in all.
TOTAL = Decimal("161.40")


def _take(client, work_order, **values):
    data = {"payment-amount": "", "payment-method": "card", "payment-reference": ""}
    data.update({f"payment-{name}": value for name, value in values.items()})
    return client.post(reverse("workshop:payment", args=[work_order.number]), data)


def test_the_desk_takes_a_part_payment_then_the_rest(client, front_desk, work_order):
    client.force_login(front_desk)
    page = client.get(work_order.get_absolute_url()).content.decode()
    assert "Not paid:</strong> £161.40 owed." in page
    assert 'name="payment-amount" value="161.4"' in page  # the amount starts at what is owed

    response = _take(client, work_order, amount="£60.00", method="cash")
    assert response.status_code == 302 and response["Location"].endswith("#payment")
    state = payments.payment_state(work_order)
    assert (state.paid, state.owed) == (Decimal("60.00"), TOTAL - Decimal("60.00"))
    assert (
        "£101.40 still owed</strong> of £161.40."
        in client.get(work_order.get_absolute_url()).content.decode()
    )

    _take(client, work_order, amount="101.40", reference="slip 0042")
    state = payments.payment_state(work_order)
    assert state.paid_in_full and state.owed == 0
    page = client.get(work_order.get_absolute_url()).content.decode()
    assert "Paid in full." in page
    assert 'action="/jobs/' + work_order.number + '/payments/"' not in page  # nothing left to take
    assert [event.message for event in work_order.events.filter(kind=WorkOrderEvent.Kind.PAYMENT)] == [
        "Took £60.00 by cash; £101.40 still owed.",
        "Took £101.40 by card; paid in full.",
    ]
    assert Payment.objects.get(amount=Decimal("101.40")).reference == "slip 0042"


@pytest.mark.parametrize(
    ("amount", "message"),
    [
        ("161.41", "That is more than the £161.40 still owed on"),
        ("0", "Ensure this value is greater than or equal to 0.01."),
        ("-5", "Ensure this value is greater than or equal to 0.01."),
        ("NaN", "Enter a number."),
        ("Infinity", "Enter a number."),
        ("12.345", "Ensure that there are no more than 2 decimal places."),
        ("1e12", "Ensure that there are no more than 9 digits in total."),
        ("", "This field is required."),
    ],
)
def test_a_wrong_amount_is_refused_at_the_field_and_nothing_is_taken(
    client, front_desk, work_order, amount, message
):
    client.force_login(front_desk)
    response = _take(client, work_order, amount=amount)
    assert response.status_code == 200
    field = response.context["payment_form"]
    assert any(error.startswith(message) for error in field.errors["amount"]), field.errors
    assert message in response.content.decode()
    assert not Payment.objects.exists()


def test_a_method_not_on_the_list_is_refused_at_the_field(client, front_desk, work_order):
    client.force_login(front_desk)
    response = _take(client, work_order, amount="10", method="cheque")
    assert "method" in response.context["payment_form"].errors
    assert not Payment.objects.exists()


def test_the_bench_may_not_take_payments_and_the_desk_may_not_void_them(
    client, technician, front_desk, work_order
):
    client.force_login(technician)
    assert _take(client, work_order, amount="10").status_code == 403
    page = client.get(work_order.get_absolute_url()).content.decode()
    assert "Take payment" not in page
    payment = payments.payment_take(work_order=work_order, amount=Decimal("10"), method="card", by=front_desk)
    client.force_login(front_desk)
    void = reverse("workshop:payment-void", args=[work_order.number, payment.pk])
    assert client.post(void, {f"void-payment-{payment.pk}-reason": "typed twice"}).status_code == 403
    with pytest.raises(PermissionDenied):
        payments.payment_void(payment=payment, reason="typed twice", by=front_desk)
    assert not Payment.objects.get(pk=payment.pk).is_void


def test_the_owner_voids_a_payment_taken_in_error_and_it_stays_on_the_job(
    client, front_desk, owner, work_order
):
    payment = payments.payment_take(work_order=work_order, amount=TOTAL, method="card", by=front_desk)
    client.force_login(owner)
    void = reverse("workshop:payment-void", args=[work_order.number, payment.pk])
    refused = client.post(void, {f"void-payment-{payment.pk}-reason": "   "})
    assert "This field is required." in refused.content.decode()  # at the reason's field
    assert not Payment.objects.get(pk=payment.pk).is_void

    client.post(void, {f"void-payment-{payment.pk}-reason": "card declined after the slip printed"})
    payment.refresh_from_db()
    assert payment.is_void and payment.voided_by == owner
    assert payment.void_reason == "card declined after the slip printed"
    assert payments.payment_state(work_order).owed == TOTAL  # owed again
    page = client.get(work_order.get_absolute_url()).content.decode()
    assert "void: card declined after the slip printed" in page
    with pytest.raises(ValidationError, match="already void"):
        payments.payment_void(payment=payment, reason="again", by=owner)


def test_a_cancelled_job_takes_no_payment_and_says_to_give_money_back(front_desk, work_order):
    payments.payment_take(work_order=work_order, amount=Decimal("20"), method="cash", by=front_desk)
    work_order_move(work_order=work_order, target=Status.CANCELLED, by=front_desk)
    with pytest.raises(ValidationError, match="is cancelled: there is nothing to pay"):
        payments.payment_take(work_order=work_order, amount=Decimal("5"), method="cash", by=front_desk)
    assert Payment.objects.count() == 1


def test_a_job_ready_for_pickup_and_not_paid_says_so_beside_the_hand_back(
    client, front_desk, technician, work_order, oil_part
):
    from tests.conftest import finish_bench_work

    finish_bench_work(work_order, technician, oil_part)
    for target in (Status.FINAL_CHECK, Status.READY_FOR_PICKUP):
        work_order_move(work_order=work_order, target=target, by=technician)
    client.force_login(front_desk)
    owed = payments.payment_state(work_order).owed
    assert owed > TOTAL  # the oil used is on the bill too
    page = client.get(work_order.get_absolute_url()).content.decode()
    assert f"<strong>Not paid:</strong> £{owed:,.2f} still owed." in page
    payments.payment_take(work_order=work_order, amount=owed, method="card", by=front_desk)
    assert "still owed. <a" not in client.get(work_order.get_absolute_url()).content.decode()


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_two_desks_taking_what_is_owed_at_once_take_it_once(work_order, front_desk, owner) -> None:
    skip_unless_postgresql()
    start = threading.Barrier(2)
    outcomes: list[str] = []

    def take(user) -> None:
        try:
            start.wait()
            payments.payment_take(work_order=work_order, amount=TOTAL, method="card", by=user)
            outcomes.append("taken")
        except ValidationError as refusal:
            outcomes.append(" ".join(refusal.messages))
        finally:
            connections.close_all()

    threads = [threading.Thread(target=take, args=(user,)) for user in (front_desk, owner)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert sorted(outcomes) == [f"Nothing is owed on {work_order.number}.", "taken"]
    assert Payment.objects.count() == 1
