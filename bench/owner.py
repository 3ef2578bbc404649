"""The owner's due computation and dashboard on a large invented shop: time and query count.

    .venv/bin/python bench/owner.py --units 100000
    .venv/bin/python bench/owner.py --units 100000 --database-url postgres://postgres@127.0.0.1:5432/shopdesk_bench_owner

Builds a fresh database (a SQLite file in the system's temporary folder, or the PostgreSQL database
named in the URL, dropped and made anew: never point it at a database you keep), loads the demo shop
and ``seed_bulk`` with enough customers for the units asked (1.5 units a customer), then measures:

- the due table rebuilt for every unit (``due_refresh_all``), and for one unit (``due_refresh``, what
  a job becoming ready costs);
- the due status of every unit in SQL: the overdue and due-soon counts, and the first 50 rows;
- dashboard pages through Django's test client signed in as the owner: the overdue list, the next
  page, a page deep in the list, due soon, and filtered lists. Median and 90th percentile server
  time over repeated requests and the query count of one request (it must not grow with the units).

A benchmark, not a test.
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from bench.front_desk import _prepare_database  # noqa: E402  (one way to make a fresh database)


def _timed(function, repeats: int):  # type: ignore[no-untyped-def]
    from django.db import connection, reset_queries
    from django.test.utils import CaptureQueriesContext

    times = []
    for _ in range(repeats):
        begin = time.perf_counter()
        function()
        times.append((time.perf_counter() - begin) * 1000)
    reset_queries()  # the log holds 9000 queries: a full one would count nothing
    with CaptureQueriesContext(connection) as queries:
        function()
    p90 = statistics.quantiles(times, n=10)[-1] if len(times) >= 2 else times[0]
    return statistics.median(times), p90, len(queries)


def main() -> None:
    parser = argparse.ArgumentParser(
        description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter
    )
    parser.add_argument("--units", type=int, default=100_000)
    parser.add_argument("--database-url", default="")
    parser.add_argument("--repeats", type=int, default=25)
    parser.add_argument(
        "--reuse",
        action="store_true",
        help="Measure the database a previous run built: no seeding, no rebuild.",
    )
    args = parser.parse_args()
    default_file = Path(tempfile.gettempdir()) / f"shopdesk-bench-owner-{args.units}.sqlite3"
    url = args.database_url or f"sqlite:///{default_file}"
    if not args.reuse:
        _prepare_database(url)
    os.environ["DATABASE_URL"] = url
    os.environ.setdefault("DJANGO_SETTINGS_MODULE", "shopdesk.settings")
    os.environ["SHOPDESK_TESTING"] = "true"

    import django

    django.setup()
    from django.conf import settings
    from django.core.management import call_command
    from django.db import connection

    settings.ALLOWED_HOSTS = ["testserver"]
    if not args.reuse:
        call_command("migrate", verbosity=0)
        started = time.perf_counter()
        call_command("seed_demo", verbosity=0)
        call_command("seed_bulk", customers=max(1, round(args.units / 1.5)), no_due_table=True, verbosity=0)
        print(f"{connection.vendor}: data set built in {time.perf_counter() - started:.0f} s")
    _describe()
    if not args.reuse:
        _rebuild()
        _reminders_sent()
    _measure(args.repeats)


def _describe() -> None:
    from django.db import connection

    from shopdesk.customers.models import Customer, Unit
    from shopdesk.workshop.models import ServiceRecord, WorkOrder

    print(
        f"{connection.vendor}: {Customer.objects.count():,} customers, {Unit.objects.count():,} units, "
        f"{WorkOrder.objects.count():,} work orders, {ServiceRecord.objects.count():,} service records"
    )


def _rebuild() -> None:
    from django.db import connection, reset_queries
    from django.test.utils import CaptureQueriesContext

    from shopdesk.owner.services import due_refresh_all

    reset_queries()  # the query log holds 9000 queries: a full one would count nothing
    with CaptureQueriesContext(connection) as queries:
        begin = time.perf_counter()
        written = due_refresh_all()
        seconds = time.perf_counter() - begin
    print(f"  due table rebuilt for every unit: {written:,} rows in {seconds:.1f} s, {len(queries)} queries")
    if connection.vendor == "postgresql":
        # What autovacuum does soon after a bulk load: statistics, and the visibility map that lets
        # a count read the index alone.
        with connection.cursor() as cursor:
            cursor.execute("VACUUM ANALYZE")
    else:
        with connection.cursor() as cursor:
            cursor.execute("ANALYZE")  # SQLite's statistics, as PRAGMA optimize would gather


def _reminders_sent() -> None:
    """Reminders already sent for one due row in ten, so that the "not reminded for" filter has work."""
    from django.utils import timezone

    from shopdesk.owner.models import DueService, Reminder

    now = timezone.now()
    sample = DueService.objects.order_by("next_due_on", "id").values_list(
        "unit_id", "service_type_id", "next_due_on"
    )
    Reminder.objects.bulk_create(
        (
            Reminder(
                unit_id=unit_id,
                service_type_id=service_type_id,
                due_on=due_on,
                email="bench@example.com",
                state=Reminder.State.SENT,
                claimed_at=now,
                sent_at=now,
            )
            for position, (unit_id, service_type_id, due_on) in enumerate(sample.iterator())
            if position % 10 == 0
        ),
        batch_size=2000,
    )


def _measure(repeats: int) -> None:
    from django.contrib.auth.models import User
    from django.test import Client
    from django.utils import timezone

    from shopdesk.calc.schedule import DueStatus
    from shopdesk.customers.models import Unit
    from shopdesk.owner.models import DueService
    from shopdesk.owner.selectors import DueFilters, due_counts, due_page, due_services
    from shopdesk.owner.services import due_refresh

    one = Unit.objects.order_by("pk")[Unit.objects.count() // 2]
    print(f"  {'computation':44} {'median ms':>10} {'p90 ms':>8} {'queries':>8}")
    for label, function in (
        ("due table for one unit (due_refresh)", lambda: due_refresh(unit=one)),
        ("overdue and due-soon counts, every unit", lambda: due_counts()),
        ("status of every unit, first 50 rows", lambda: list(due_services()[:50])),
        (
            "overdue page of 50 with both counts",
            lambda: due_page(kind=DueStatus.OVERDUE, filters=DueFilters()),
        ),
    ):
        median, p90, count = _timed(function, repeats)
        print(f"  {label:44} {median:10.1f} {p90:8.1f} {count:8d}")
    counts = due_counts()
    print(f"  ({counts['overdue']:,} overdue, {counts['due_soon']:,} due soon)")

    overdue = DueService.objects.filter(next_due_on__lt=timezone.localdate()).order_by("next_due_on", "id")
    middle = overdue[max(0, counts["overdue"] // 2)]
    half_way = f"{middle.next_due_on.isoformat()}.{middle.pk}"
    second = due_page(kind=DueStatus.OVERDUE, filters=DueFilters()).next_cursor
    service = DueService.objects.values_list("service_type_id", flat=True).order_by("service_type_id").last()
    client = Client()
    client.force_login(User.objects.get(username="owner"))
    pages = [
        ("overdue, first page", "/owner/", False),
        ("overdue, second page", f"/owner/?after={second}", False),
        ("overdue, half-way down", f"/owner/?after={half_way}", False),
        ("due soon", "/owner/?list=soon", False),
        ("consenting, one service", f"/owner/?consent=yes&service_type={service}", False),
        ("not reminded for 30 days", "/owner/?not_contacted_days=30", False),
        ("htmx: the list only, not consenting", "/owner/?consent=no", True),
    ]
    print(f"  {'dashboard page':44} {'median ms':>10} {'p90 ms':>8} {'queries':>8}")
    for label, path, htmx in pages:
        headers = {"HX-Request": "true"} if htmx else {}
        assert client.get(path, headers=headers).status_code == 200, path  # warm

        def request(path: str = path, headers: dict = headers) -> None:
            assert client.get(path, headers=headers).status_code == 200

        median, p90, count = _timed(request, repeats)
        print(f"  {label:44} {median:10.1f} {p90:8.1f} {count:8d}")


if __name__ == "__main__":
    main()
