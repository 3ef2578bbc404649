"""Two desks checking units in at the same moment never share a number (PostgreSQL)."""

from __future__ import annotations

import threading

import pytest
from django.db import connection, connections

from shopdesk.workshop.models import WorkOrder
from shopdesk.workshop.services import work_order_check_in
from tests.conftest import skip_unless_postgresql


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_it_numbers_fifty_parallel_check_ins_without_gaps(unit, front_desk, service_types) -> None:
    skip_unless_postgresql()
    start = threading.Barrier(10)
    errors: list[BaseException] = []

    def desk(count: int) -> None:
        try:
            start.wait()
            for _ in range(count):
                work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
        except BaseException as error:  # reported below, with the thread's failure
            errors.append(error)
        finally:
            connections.close_all()

    threads = [threading.Thread(target=desk, args=(5,)) for _ in range(10)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert not errors, errors
    assert connection.vendor == "postgresql"
    sequences = sorted(WorkOrder.objects.values_list("sequence", flat=True))
    assert sequences == list(range(1, 51))
    assert len(set(WorkOrder.objects.values_list("number", flat=True))) == 50
