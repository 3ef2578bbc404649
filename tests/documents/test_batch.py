"""Batches of job cards: today's check-ins or a picked set, as one PDF, with progress on a page."""

from __future__ import annotations

import datetime
import logging

import pytest
from django.urls import reverse
from django.utils import timezone

from shopdesk.documents import selectors, services
from shopdesk.documents.models import PrintBatch
from shopdesk.workshop.services import work_order_check_in
from tests.documents.conftest import pdf_pages, pdf_text


@pytest.fixture
def three_jobs(work_order, unit, front_desk, service_types):
    yesterday = timezone.now() - datetime.timedelta(days=1)
    older = work_order_check_in(unit=unit, by=front_desk, service_types=service_types, now=yesterday)
    newer = work_order_check_in(unit=unit, by=front_desk, service_types=service_types[:1])
    return {"today": [work_order, newer], "yesterday": older}


def test_today_means_the_jobs_checked_in_today(three_jobs):
    assert selectors.checked_in_today() == [job.number for job in three_jobs["today"]]


def test_the_worker_renders_one_card_a_page_in_order(three_jobs, front_desk, tmp_path):
    numbers = [three_jobs["yesterday"].number, three_jobs["today"][0].number]
    batch = PrintBatch.objects.create(
        created_at=timezone.now(), created_by=front_desk, numbers=numbers, base_url="http://desk.example/"
    )
    done = services.print_batch_render(batch_id=batch.pk)
    assert done.state == PrintBatch.State.DONE
    assert done.done_count == 2
    assert done.file_name == f"job-cards-{batch.pk}.pdf"
    pdf = bytes(PrintBatch.objects.get(pk=batch.pk).pdf)  # on the row: any app server can hand it over
    assert pdf_pages(pdf, tmp_path) == 2
    text = pdf_text(pdf, tmp_path)
    assert text.index(numbers[0]) < text.index(numbers[1])
    # A second worker finds the batch taken and leaves it alone.
    assert services.print_batch_render(batch_id=batch.pk).finished_at == done.finished_at


def test_a_failed_batch_says_so_plainly_and_logs_the_details(
    client, three_jobs, front_desk, monkeypatch, caplog
):
    def no_fonts(*args, **kwargs):
        raise OSError("no usable font found in /usr/share/fonts")

    monkeypatch.setattr(services, "render_job_cards", no_fonts)
    batch = PrintBatch.objects.create(
        created_at=timezone.now(),
        created_by=front_desk,
        numbers=[three_jobs["yesterday"].number],
        base_url="/",
    )
    with caplog.at_level(logging.ERROR, logger="shopdesk.documents.services"):
        failed = services.print_batch_render(batch_id=batch.pk)
    assert failed.state == PrintBatch.State.FAILED
    assert not PrintBatch.objects.get(pk=batch.pk).pdf
    assert failed.error == "OSError: no usable font found in /usr/share/fonts"  # the owner's admin only
    # The log has the details, traceback and all.
    [record] = [r for r in caplog.records if r.name == "shopdesk.documents.services"]
    assert record.getMessage() == f"Print batch {batch.pk} failed"
    assert record.exc_info[0] is OSError
    assert "no usable font found in /usr/share/fonts" in caplog.text
    # The page, and the fragment it polls, say it plainly and show nothing of the exception.
    client.force_login(front_desk)
    for headers in ({}, {"HTTP_HX_REQUEST": "true"}):
        page = client.get(reverse("documents:batch", args=[batch.pk]), **headers).content.decode()
        assert (
            "The job cards could not be made. Try again; if it keeps failing, the owner can find the "
            "details in the server's log." in page
        )
        assert "OSError" not in page and "no usable font" not in page and "/usr/share" not in page
        assert reverse("documents:batch-new") in page  # the way to try again


def test_the_page_prints_todays_check_ins_and_offers_the_file(client, front_desk, three_jobs, tmp_path):
    client.force_login(front_desk)
    page = client.get(reverse("documents:batch-new")).content.decode()
    assert "Print today's 2 job cards" in page
    response = client.post(reverse("documents:batch-new"), {"which": "today"})
    batch = PrintBatch.objects.get()
    assert response["Location"] == reverse("documents:batch", args=[batch.pk])
    assert batch.numbers == [job.number for job in three_jobs["today"]]
    status = client.get(response["Location"]).content.decode()
    assert reverse("documents:batch-file", args=[batch.pk]) in status
    assert 'hx-trigger="every 1s"' not in status  # done: the page stops polling
    download = client.get(reverse("documents:batch-file", args=[batch.pk]))
    assert download["Content-Disposition"] == f'attachment; filename="job-cards-{batch.pk}.pdf"'
    assert pdf_pages(download.content, tmp_path) == 2


def test_the_page_prints_a_picked_set(client, front_desk, three_jobs):
    client.force_login(front_desk)
    picked = three_jobs["yesterday"].number
    client.post(reverse("documents:batch-new"), {"which": "picked", "numbers": [picked]})
    assert PrintBatch.objects.get().numbers == [picked]


def test_picking_nothing_or_an_unknown_job_says_so(client, front_desk, three_jobs):
    client.force_login(front_desk)
    response = client.post(reverse("documents:batch-new"), {"which": "picked"})
    assert response.status_code == 400
    assert "Pick at least one job to print." in response.content.decode()
    response = client.post(reverse("documents:batch-new"), {"which": "picked", "numbers": ["2099-0001"]})
    assert "No job numbered 2099-0001." in response.content.decode()
    assert not PrintBatch.objects.exists()


def test_a_running_batch_polls_and_has_a_plain_refresh(client, front_desk, three_jobs):
    batch = PrintBatch.objects.create(
        created_at=timezone.now(),
        created_by=front_desk,
        numbers=[three_jobs["yesterday"].number],
        base_url="/",
    )
    client.force_login(front_desk)
    page = client.get(reverse("documents:batch", args=[batch.pk])).content.decode()
    assert 'hx-trigger="every 1s"' in page
    assert '<noscript><meta http-equiv="refresh" content="2"></noscript>' in page
    assert "0 of 1 cards done" in page
    part = client.get(reverse("documents:batch", args=[batch.pk]), HTTP_HX_REQUEST="true").content.decode()
    assert part.lstrip().startswith('<section id="batch-status"')
    assert client.get(reverse("documents:batch-file", args=[batch.pk])).status_code == 404  # not done yet


def test_a_batch_needs_the_permission_to_print(client, front_desk, three_jobs, django_user_model):
    stranger = django_user_model.objects.create_user(username="visitor", password="correct-horse-battery-9")
    client.force_login(stranger)
    assert client.get(reverse("documents:batch-new")).status_code == 403
    assert client.post(reverse("documents:batch-new"), {"which": "today"}).status_code == 403


def test_a_batch_left_unfinished_by_a_stopped_server_says_to_print_it_again(client, front_desk, three_jobs):
    started = timezone.now() - PrintBatch.STALLED_AFTER - datetime.timedelta(minutes=1)
    batch = PrintBatch.objects.create(
        created_at=started,
        created_by=front_desk,
        numbers=[three_jobs["yesterday"].number],
        base_url="/",
        state=PrintBatch.State.RENDERING,
    )
    client.force_login(front_desk)
    page = client.get(reverse("documents:batch", args=[batch.pk])).content.decode()
    assert "The batch stopped at 0 of 1 cards" in page
    assert 'hx-trigger="every 1s"' not in page and "http-equiv" not in page  # no endless polling
    fresh = PrintBatch.objects.create(
        created_at=timezone.now(), created_by=front_desk, numbers=batch.numbers, base_url="/"
    )
    assert not fresh.stalled


def test_a_new_batch_removes_batches_older_than_they_are_kept(client, front_desk, three_jobs):
    old = PrintBatch.objects.create(
        created_at=timezone.now() - PrintBatch.KEPT_FOR - datetime.timedelta(days=1),
        created_by=front_desk,
        numbers=[three_jobs["yesterday"].number],
        base_url="/",
        state=PrintBatch.State.DONE,
        pdf=b"%PDF-1.7 last month's cards",
    )
    recent = PrintBatch.objects.create(
        created_at=timezone.now() - PrintBatch.KEPT_FOR + datetime.timedelta(days=1),
        created_by=front_desk,
        numbers=[three_jobs["yesterday"].number],
        base_url="/",
    )
    client.force_login(front_desk)
    client.post(reverse("documents:batch-new"), {"which": "today"})
    assert not PrintBatch.objects.filter(pk=old.pk).exists()
    assert PrintBatch.objects.filter(pk=recent.pk).exists()
    assert PrintBatch.objects.count() == 2


def test_a_finished_batch_without_its_pdf_says_it_is_gone(client, front_desk, three_jobs):
    batch = PrintBatch.objects.create(
        created_at=timezone.now(),
        created_by=front_desk,
        numbers=[three_jobs["yesterday"].number],
        base_url="/",
        state=PrintBatch.State.DONE,
        file_name="job-cards-1.pdf",
    )
    client.force_login(front_desk)
    response = client.get(reverse("documents:batch-file", args=[batch.pk]))
    assert response.status_code == 404


@pytest.mark.parametrize("number", ["\x00", "2026-00\x0042", "٢٠٢٦-٠٠٠١", "2026-0001 ", "x" * 5000])
def test_a_ticked_value_that_is_no_job_number_is_refused_at_the_ticks(client, front_desk, three_jobs, number):
    # A NUL went to the number__in query, which PostgreSQL refuses in any text: a 500 there.
    client.force_login(front_desk)
    kept = three_jobs["yesterday"].number
    response = client.post(reverse("documents:batch-new"), {"which": "picked", "numbers": [kept, number]})
    assert response.status_code == 400
    assert response.context["form"].has_error("numbers")
    page = response.content.decode()
    assert "is not a job number" in page
    assert f'value="{kept}" checked' in page  # the good tick is kept for the next try
    assert not PrintBatch.objects.exists()


@pytest.mark.parametrize("which", ["", "everything", "today\x00"])
def test_a_button_value_that_is_neither_print_button_is_refused(client, front_desk, three_jobs, which):
    # Anything but "picked" printed today's cards before.
    client.force_login(front_desk)
    response = client.post(reverse("documents:batch-new"), {"which": which})
    assert response.status_code == 400
    assert "Press one of the two print buttons." in response.content.decode()
    assert not PrintBatch.objects.exists()
