"""Milliseconds per job card (warm) and for a batch of 50 cards, with peak memory.

    .venv/bin/python bench/documents.py [--repeats 20] [--batch 50] [--database-url URL]

Builds a fresh database (a SQLite file in the system's temporary folder, or the PostgreSQL
database named in the URL, dropped and made anew), loads the demo shop and
``seed_bulk --customers 20`` for enough jobs, then:

- renders one job's card ``--repeats`` times after three warm-up renders (median and p90);
- renders a service report the same way, when a job is ready for pickup;
- renders ``--batch`` job cards as one PDF through the batch worker, started as the page starts
  it (a background thread, the status polled every 100 ms), and reports the wall time.

Peak memory: the process's peak resident size (getrusage); with ``--trace-memory`` also the
Python heap's peak during a second, untimed batch (tracemalloc). Targets from issue 6: under 300 ms a card, under 15 s for 50.
A benchmark, not a test.
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "bench"))

from front_desk import _prepare_database  # noqa: E402  (the same fresh database as the page bench)


def _timed(render, repeats: int) -> tuple[float, float, float]:
    """Median and p90 wall time, and median CPU time, in ms (CPU time shows a shared machine's load)."""
    for _ in range(3):
        render()
    times, cpu = [], []
    for _ in range(repeats):
        begin, begin_cpu = time.perf_counter(), time.process_time()
        render()
        times.append((time.perf_counter() - begin) * 1000)
        cpu.append((time.process_time() - begin_cpu) * 1000)
    return statistics.median(times), statistics.quantiles(times, n=10)[-1], statistics.median(cpu)


def main() -> None:
    parser = argparse.ArgumentParser(
        description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter
    )
    parser.add_argument("--repeats", type=int, default=20)
    parser.add_argument("--batch", type=int, default=50)
    parser.add_argument("--database-url", default="")
    parser.add_argument("--trace-memory", action="store_true", help="also measure the Python heap (slow)")
    args = parser.parse_args()
    url = args.database_url or f"sqlite:///{Path(tempfile.gettempdir()) / 'shopdesk-bench-documents.sqlite3'}"
    _prepare_database(url)
    os.environ["DATABASE_URL"] = url
    os.environ.setdefault("DJANGO_SETTINGS_MODULE", "shopdesk.settings")
    os.environ.setdefault("DEBUG", "true")  # development settings: DEBUG is off unless set

    import django

    django.setup()
    from django.conf import settings
    from django.contrib.auth.models import User
    from django.core.management import call_command
    from django.db import connection

    from shopdesk.documents import services
    from shopdesk.documents.models import PrintBatch
    from shopdesk.documents.renderer import render_document
    from shopdesk.workshop.models import Status, WorkOrder

    settings.SHOP_PRINT_IN_BACKGROUND = True  # the batch as the page runs it
    call_command("migrate", verbosity=0)
    call_command("seed_demo", verbosity=0)
    call_command("seed_bulk", customers=20, verbosity=0)
    jobs = list(WorkOrder.objects.select_related("customer", "unit__unit_model").order_by("id"))
    load = os.getloadavg()[0]
    print(
        f"{connection.vendor}: {len(jobs)} work orders; paper {settings.SHOP_PAPER_SIZE}; load average {load:.1f} on {os.cpu_count()} cores"
    )

    job = jobs[0]
    median, p90, cpu = _timed(lambda: render_document(job, "job_card"), args.repeats)
    size = len(render_document(job, "job_card").content)
    print(
        f"  job card (warm)        median {median:6.1f} ms  p90 {p90:6.1f} ms  CPU {cpu:6.1f} ms  ({size / 1024:.0f} KiB)"
    )
    ready = next((j for j in jobs if j.status == Status.READY_FOR_PICKUP), None)
    if ready is not None:
        median, p90, cpu = _timed(lambda: render_document(ready, "service_report"), args.repeats)
        print(f"  service report (warm)  median {median:6.1f} ms  p90 {p90:6.1f} ms  CPU {cpu:6.1f} ms")

    numbers = [j.number for j in jobs[: args.batch]]
    user = User.objects.order_by("id").first()
    elapsed, batch, polls = _batch(services, PrintBatch, numbers, user)
    rss_peak_mib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # kilobytes on Linux
    size = len(PrintBatch.objects.get(pk=batch.pk).pdf)
    print(
        f"  batch of {batch.done_count} cards       {elapsed:6.2f} s  "
        f"({elapsed / batch.done_count * 1000:.0f} ms a card, {polls} polls, {size / 1024:.0f} KiB)"
    )
    print(
        f"  peak memory: process RSS {rss_peak_mib:.0f} MiB (the whole process, Django and WeasyPrint loaded)"
    )
    if args.trace_memory:
        # tracemalloc slows Python several times over: a second batch, measured but not timed.
        tracemalloc.start()
        _batch(services, PrintBatch, numbers, user)
        _, heap_peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        print(
            f"  peak Python heap during a batch of {len(numbers)} (tracemalloc): {heap_peak / 2**20:.0f} MiB"
        )


def _batch(services, PrintBatch, numbers, user):  # type: ignore[no-untyped-def]
    """Start a batch as the page does (a background thread) and poll it as the page does."""
    begin = time.perf_counter()
    batch = services.print_batch_start(numbers=numbers, by=user, base_url="http://127.0.0.1:8000/")
    polls = 0
    while not batch.finished:
        time.sleep(0.1)
        polls += 1
        batch.refresh_from_db()
    assert batch.state == PrintBatch.State.DONE, batch.error
    return time.perf_counter() - begin, batch, polls


if __name__ == "__main__":
    main()
