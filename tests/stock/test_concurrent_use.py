"""Two jobs taking the last item at the same moment: one gets it, the other is told (PostgreSQL)."""

from __future__ import annotations

import threading
from decimal import Decimal

import pytest
from django.db import connection, connections

from shopdesk.stock import selectors
from shopdesk.stock.models import StockMovement
from shopdesk.stock.services import StockRefused, stock_receive, stock_use_on_job
from shopdesk.workshop.services import work_order_check_in
from tests.conftest import skip_unless_postgresql


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_it_gives_the_last_item_to_one_job_only(
    seal_kit, owner, technician, unit, front_desk, service_types
) -> None:
    skip_unless_postgresql()
    stock_receive(part=seal_kit, quantity=1, by=owner)
    jobs = [work_order_check_in(unit=unit, by=front_desk, service_types=service_types) for _ in range(2)]
    start = threading.Barrier(2)
    used: list[StockMovement] = []
    refused: list[StockRefused] = []
    errors: list[BaseException] = []

    def bench(job) -> None:
        try:
            start.wait()
            used.append(stock_use_on_job(part=seal_kit, quantity=1, work_order=job, by=technician))
        except StockRefused as refusal:
            refused.append(refusal)
        except BaseException as error:  # reported below, with the thread's failure
            errors.append(error)
        finally:
            connections.close_all()

    threads = [threading.Thread(target=bench, args=(job,)) for job in jobs]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()

    assert not errors, errors
    assert connection.vendor == "postgresql"
    assert len(used) == 1
    assert len(refused) == 1
    assert refused[0].message.startswith("Only 0 each of SK-34-AIR")
    assert selectors.on_hand(seal_kit) == Decimal("0.00")
    assert StockMovement.objects.filter(kind="used").count() == 1
