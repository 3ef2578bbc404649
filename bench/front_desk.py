"""Server time and query count of the busiest pages on a large invented shop.

    .venv/bin/python bench/front_desk.py --customers 1000
    .venv/bin/python bench/front_desk.py --customers 50000 --database-url postgres://postgres@127.0.0.1:5432/shopdesk_bench

Builds a fresh database (a SQLite file in the temporary folder, or the PostgreSQL database named in the URL,
dropped and made anew), loads the demo shop and ``seed_bulk --customers N`` (N customers,
1.5 N units, 4 N work orders), then requests each page through Django's test client signed in
as the role that uses it: the search as typed (htmx), the status board, the bench queue and a
job page. Reports the median and 90th percentile server time over repeated requests and the
query count of one request. The query count must not grow with N. A benchmark, not a test.
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


def _prepare_database(url: str) -> None:
    if url.startswith("sqlite:///"):
        path = Path(url.removeprefix("sqlite:///"))
        for suffix in ("", "-wal", "-shm"):
            Path(f"{path}{suffix}").unlink(missing_ok=True)
        return
    import dj_database_url
    import psycopg

    config = dj_database_url.parse(url)
    with psycopg.connect(
        host=config["HOST"],
        port=config["PORT"] or 5432,
        user=config["USER"],
        dbname="postgres",
        autocommit=True,
    ) as connection:
        connection.execute(f'DROP DATABASE IF EXISTS "{config["NAME"]}"')
        connection.execute(f'CREATE DATABASE "{config["NAME"]}"')


def main() -> None:
    parser = argparse.ArgumentParser(
        description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter
    )
    parser.add_argument("--customers", type=int, default=1000)
    parser.add_argument("--database-url", default="")
    parser.add_argument("--repeats", type=int, default=25)
    args = parser.parse_args()
    default_file = Path(tempfile.gettempdir()) / f"shopdesk-bench-{args.customers}.sqlite3"
    url = args.database_url or f"sqlite:///{default_file}"
    _prepare_database(url)
    os.environ["DATABASE_URL"] = url
    os.environ.setdefault("DJANGO_SETTINGS_MODULE", "shopdesk.settings")
    os.environ["SHOPDESK_TESTING"] = "true"

    import django

    django.setup()
    from django.conf import settings
    from django.core.management import call_command
    from django.db import connection, reset_queries
    from django.test import Client
    from django.test.utils import CaptureQueriesContext

    settings.ALLOWED_HOSTS = ["testserver"]
    call_command("migrate", verbosity=0)
    started = time.perf_counter()
    call_command("seed_demo", verbosity=0)
    call_command("seed_bulk", customers=args.customers, verbosity=0)
    print(
        f"{connection.vendor}, N = {args.customers}: data set built in {time.perf_counter() - started:.0f} s"
    )

    from django.contrib.auth.models import User

    from shopdesk.customers.models import Customer, Unit
    from shopdesk.workshop.models import OPEN_STATUSES, WorkOrder

    print(
        f"  {Customer.objects.count()} customers, {Unit.objects.count()} units, "
        f"{WorkOrder.objects.count()} work orders ({WorkOrder.objects.filter(status__in=OPEN_STATUSES).count()} open)"
    )
    job = WorkOrder.objects.filter(status="on_the_bench").order_by("-id").first()
    customer = Customer.objects.order_by("id")[args.customers // 2]
    phone_part = customer.phone_digits[-5:-1]
    pages = [
        ("desk", "search as typed (phone)", f"/search/?q={phone_part}", True),
        ("desk", "search as typed (name)", f"/search/?q={customer.name.split()[-1][:4]}", True),
        ("desk", "status board", "/board/", False),
        ("bench", "bench queue", "/bench/", False),
        ("bench", "job page", job.get_absolute_url() if job else "/board/", False),
    ]
    print(f"  {'page':30} {'median ms':>10} {'p90 ms':>8} {'queries':>8}")
    for username, label, path, htmx in pages:
        client = Client()
        client.force_login(User.objects.get(username=username))
        headers = {"HX-Request": "true"} if htmx else {}
        assert client.get(path, headers=headers).status_code == 200, path  # warm
        times = []
        for _ in range(args.repeats):
            reset_queries()
            begin = time.perf_counter()
            response = client.get(path, headers=headers)
            times.append((time.perf_counter() - begin) * 1000)
            assert response.status_code == 200
        with CaptureQueriesContext(connection) as queries:
            client.get(path, headers=headers)
        p90 = statistics.quantiles(times, n=10)[-1]
        print(f"  {label:30} {statistics.median(times):10.1f} {p90:8.1f} {len(queries):8d}")


if __name__ == "__main__":
    main()
