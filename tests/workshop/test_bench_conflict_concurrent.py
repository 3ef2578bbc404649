"""Two people saving the same bench record at once, on two connections (PostgreSQL)."""

from __future__ import annotations

import threading

import pytest
from django.db import connections

from shopdesk.workshop import services
from shopdesk.workshop.models import OilRecord
from tests.conftest import skip_unless_postgresql


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_only_one_of_two_simultaneous_saves_lands(work_order, technician, owner, oil_part) -> None:
    skip_unless_postgresql()
    services.work_order_take(work_order=work_order, by=technician)
    chamber = work_order.unit.unit_model.chambers.get(kind="damper")
    record = services.oil_record_save(
        work_order=work_order, chamber=chamber, by=technician, values={"drained_ml": 100.0}
    )
    start = threading.Barrier(2)
    outcomes: dict[str, str] = {}

    def save(user, drained: float) -> None:
        try:
            stale = OilRecord.objects.get(pk=record.pk)  # both opened the form at version 1
            start.wait()
            services.oil_record_save(
                work_order=work_order,
                chamber=chamber,
                by=user,
                record=stale,
                version=1,
                values={"drained_ml": drained},
            )
            outcomes[user.username] = "saved"
        except services.RecordConflict as conflict:
            outcomes[user.username] = f"refused, saw {conflict.current.drained_ml:g}"
        finally:
            connections.close_all()

    threads = [
        threading.Thread(target=save, args=(technician, 104.0)),
        threading.Thread(target=save, args=(owner, 97.0)),
    ]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert sorted(outcome.split(",")[0] for outcome in outcomes.values()) == ["refused", "saved"]
    stored = OilRecord.objects.get(pk=record.pk)
    assert stored.version == 2
    winner = next(name for name, outcome in outcomes.items() if outcome == "saved")
    loser = next(outcome for outcome in outcomes.values() if outcome != "saved")
    assert stored.drained_ml == (104.0 if winner == "bench" else 97.0)
    assert loser == f"refused, saw {stored.drained_ml:g}"  # the refused person sees the other's value
