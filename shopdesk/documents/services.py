"""Batches of job cards: one PDF for many jobs, rendered away from the request.

``print_batch_start`` records the batch and hands it to a background thread once the row is
committed (``SHOP_PRINT_IN_BACKGROUND``; tests render in the request). ``print_batch_render`` is
the worker: it renders through the one renderer, counting each card so the page can show
progress, and keeps the PDF on the batch's row, where any app server can read it. A failure is
logged with its traceback and kept on the row with its reason (the owner's admin shows it); the
batch's page says in plain words that it failed, never the exception's text, which may name files
and settings of the server.
"""

from __future__ import annotations

import logging
import threading
from collections.abc import Sequence

from django.conf import settings
from django.contrib.auth.models import AbstractBaseUser
from django.core.exceptions import ValidationError
from django.db import connection, transaction
from django.utils import timezone

from shopdesk.documents.models import PrintBatch
from shopdesk.documents.renderer import render_job_cards
from shopdesk.workshop.models import WorkOrder

logger = logging.getLogger(__name__)

MAX_BATCH = 200  # a morning's check-ins at a busy shop, with room to spare


def print_batch_start(*, numbers: Sequence[str], by: AbstractBaseUser, base_url: str) -> PrintBatch:
    """Record a batch of job cards for ``numbers`` (in that order) and start rendering it."""
    numbers = list(dict.fromkeys(numbers))  # once each, first order kept
    if not numbers:
        raise ValidationError("Pick at least one job to print.")
    if len(numbers) > MAX_BATCH:
        raise ValidationError(f"A batch holds at most {MAX_BATCH} job cards; pick fewer.")
    known = set(WorkOrder.objects.filter(number__in=numbers).values_list("number", flat=True))
    unknown = [number for number in numbers if number not in known]
    if unknown:
        raise ValidationError(f"No job numbered {unknown[0]}.")
    with transaction.atomic():
        now = timezone.now()
        # Batches are paper already printed: the old ones go, with the PDFs they keep.
        PrintBatch.objects.filter(created_at__lt=now - PrintBatch.KEPT_FOR).delete()
        batch = PrintBatch(created_at=now, created_by=by, numbers=numbers, base_url=base_url)
        batch.full_clean()
        batch.save()
        if settings.SHOP_PRINT_IN_BACKGROUND:
            transaction.on_commit(lambda: _start_thread(batch.pk))
    if not settings.SHOP_PRINT_IN_BACKGROUND:
        print_batch_render(batch_id=batch.pk)
        batch.refresh_from_db()
    return batch


def _start_thread(batch_id: int) -> None:
    threading.Thread(
        target=_render_in_thread, args=(batch_id,), name=f"print-batch-{batch_id}", daemon=True
    ).start()


def _render_in_thread(batch_id: int) -> None:
    try:
        print_batch_render(batch_id=batch_id)
    finally:
        connection.close()  # the thread's own connection; requests keep theirs


def print_batch_render(*, batch_id: int) -> PrintBatch:
    """Render a waiting batch: every job card in one PDF. Marks the batch done or failed."""
    # Take the batch in one conditional update, so that two workers never render it twice.
    taken = PrintBatch.objects.filter(pk=batch_id, state=PrintBatch.State.WAITING).update(
        state=PrintBatch.State.RENDERING
    )
    batch = PrintBatch.objects.defer("pdf").get(pk=batch_id)
    if not taken:
        return batch
    try:
        by_number = {
            work_order.number: work_order
            for work_order in WorkOrder.objects.filter(number__in=batch.numbers).select_related(
                "customer", "unit__unit_model", "checked_in_by", "arrival"
            )
        }
        work_orders = [by_number[number] for number in batch.numbers if number in by_number]

        def progress(count: int) -> None:
            PrintBatch.objects.filter(pk=batch_id).update(done_count=count)

        document = render_job_cards(
            work_orders, base_url=batch.base_url, progress=progress, filename=f"job-cards-{batch_id}.pdf"
        )
    except Exception as error:  # the page must say it failed, whatever the cause
        logger.exception("Print batch %s failed", batch_id)
        PrintBatch.objects.filter(pk=batch_id).update(
            state=PrintBatch.State.FAILED,
            error=f"{type(error).__name__}: {error}"[:500],
            finished_at=timezone.now(),
        )
    else:
        PrintBatch.objects.filter(pk=batch_id).update(
            state=PrintBatch.State.DONE,
            done_count=len(work_orders),
            file_name=document.filename,
            pdf=document.content,
            finished_at=timezone.now(),
        )
    return PrintBatch.objects.defer("pdf").get(pk=batch_id)
