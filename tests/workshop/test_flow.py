from __future__ import annotations

import datetime

import pytest
from django.urls import reverse
from django.utils import timezone

from shopdesk.workshop import flow
from shopdesk.workshop.models import OPEN_STATUSES, Status, WorkOrder, WorkOrderEvent
from shopdesk.workshop.services import MoveRefused, work_order_check_in, work_order_move


def test_it_moves_a_job_along_the_whole_flow_and_stamps_each_move(
    work_order, technician, front_desk, oil_part
) -> None:
    from tests.conftest import finish_bench_work

    path = [
        (Status.ON_THE_BENCH, technician),
        (Status.WAITING_FOR_PARTS, technician),
        (Status.ON_THE_BENCH, technician),
        (Status.FINAL_CHECK, technician),
        (Status.READY_FOR_PICKUP, technician),
        (Status.COLLECTED, front_desk),
    ]
    for target, user in path:
        if target == Status.FINAL_CHECK:
            finish_bench_work(work_order, technician, oil_part)
        work_order_move(work_order=work_order, target=target, by=user)
    work_order.refresh_from_db()
    assert work_order.status == Status.COLLECTED
    moves = list(WorkOrderEvent.objects.filter(kind="status").values_list("to_status", "by__username"))
    assert moves == [(target.value, user.username) for target, user in path]


@pytest.mark.parametrize(
    "target", [Status.READY_FOR_PICKUP, Status.COLLECTED, Status.FINAL_CHECK, "nonsense"]
)
def test_it_refuses_a_move_the_flow_does_not_allow(work_order, owner, target) -> None:
    with pytest.raises(MoveRefused, match="cannot move"):
        work_order_move(work_order=work_order, target=target, by=owner)
    work_order.refresh_from_db()
    assert work_order.status == Status.CHECKED_IN
    assert not WorkOrderEvent.objects.filter(kind="status").exists()


def test_it_allows_cancelling_before_collection_only(work_order, owner, oil_part) -> None:
    from tests.conftest import finish_bench_work

    finish_bench_work(work_order, owner, oil_part)
    for target in (Status.FINAL_CHECK, Status.READY_FOR_PICKUP, Status.COLLECTED):
        work_order_move(work_order=work_order, target=target, by=owner)
    with pytest.raises(MoveRefused):
        work_order_move(work_order=work_order, target=Status.CANCELLED, by=owner)


def test_every_open_status_can_be_cancelled_and_nothing_leaves_a_closed_one() -> None:
    for status in OPEN_STATUSES:
        assert flow.find_move(status, Status.CANCELLED) is not None
    assert flow.moves_from(Status.COLLECTED) == [] and flow.moves_from(Status.CANCELLED) == []


def test_the_board_refuses_a_disallowed_move_with_a_message(client, owner, work_order) -> None:
    client.force_login(owner)
    response = client.post(
        reverse("workshop:move", kwargs={"number": work_order.number}),
        {"to": "collected", "from": "board"},
        follow=True,
    )
    assert "cannot move to “collected”" in response.content.decode()
    work_order.refresh_from_db()
    assert work_order.status == Status.CHECKED_IN


def test_the_board_moves_a_job_with_one_click(client, technician, work_order) -> None:
    client.force_login(technician)
    response = client.post(
        reverse("workshop:move", kwargs={"number": work_order.number}),
        {"to": "on_the_bench", "from": "board"},
        headers={"HX-Request": "true"},
    )
    body = response.content.decode()
    assert 'id="board"' in body and "is now on the bench" in body
    work_order.refresh_from_db()
    assert work_order.status == Status.ON_THE_BENCH


def test_the_board_redrawn_after_a_move_offers_only_the_mover_s_moves(client, front_desk, work_order) -> None:
    client.force_login(front_desk)
    response = client.post(
        reverse("workshop:move", kwargs={"number": work_order.number}),
        {"to": "waiting_for_parts", "from": "board"},
        headers={"HX-Request": "true"},
    )
    body = response.content.decode()
    assert "is now waiting for parts" in body
    assert "Parts in: back on the bench" not in body  # the technician's move, not the front desk's


def test_the_board_groups_open_jobs_and_marks_late_ones(
    client, front_desk, unit, service_types, django_assert_max_num_queries
) -> None:
    late = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    WorkOrder.objects.filter(pk=late.pk).update(promised_on=timezone.localdate() - datetime.timedelta(days=2))
    for _ in range(12):
        work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    client.force_login(front_desk)
    # session, user, two permission lookups, counts per status, the ranked jobs, session refresh (3)
    with django_assert_max_num_queries(9):
        response = client.get(reverse("workshop:board"))
    body = response.content.decode()
    assert body.count('class="job') == 13
    assert body.count('class="job late"') == 1
    assert "Waiting for parts" in body  # the front desk's one bench move is offered
    assert "Start on the bench" not in body  # a technician's move is not
