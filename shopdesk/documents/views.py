"""The printed documents' pages: a job's card and report as PDF, and batches of job cards."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import permission_required
from django.core.exceptions import ValidationError
from django.http import Http404, HttpRequest, HttpResponse
from django.shortcuts import get_object_or_404, redirect, render
from django.views.decorators.http import require_GET, require_http_methods

from shopdesk.documents import selectors, services
from shopdesk.documents.forms import BatchForm
from shopdesk.documents.models import PrintBatch
from shopdesk.documents.renderer import PDF, Document, render_document
from shopdesk.workshop.models import WorkOrder
from shopdesk.workshop.selectors import work_order_for_page


def _job(number: str) -> WorkOrder:
    work_order = work_order_for_page(number).first()
    if work_order is None:
        raise Http404(f"No job numbered {number}.")
    return work_order


def _base_url(request: HttpRequest) -> str:
    return request.build_absolute_uri("/")


def _pdf(document: Document, *, download: bool) -> HttpResponse:
    response = HttpResponse(document.content, content_type=document.mime_type)
    disposition = "attachment" if download else "inline"
    response["Content-Disposition"] = f'{disposition}; filename="{document.filename}"'
    return response


@require_GET
@permission_required("documents.print_job_card", raise_exception=True)
def job_card(request: HttpRequest, number: str) -> HttpResponse:
    document = render_document(_job(number), "job_card", base_url=_base_url(request))
    return _pdf(document, download=request.GET.get("download") == "1")


@require_GET
@permission_required("documents.print_service_report", raise_exception=True)
def service_report(request: HttpRequest, number: str) -> HttpResponse:
    work_order = _job(number)
    try:
        document = render_document(work_order, "service_report", base_url=_base_url(request))
    except selectors.DocumentRefused as refusal:
        messages.error(request, str(refusal))
        return redirect(work_order)
    return _pdf(document, download=request.GET.get("download") == "1")


@require_http_methods(["GET", "POST"])
@permission_required("documents.print_job_card", raise_exception=True)
def batch_new(request: HttpRequest) -> HttpResponse:
    """Pick the jobs: every unit checked in today, or the ticked ones; then render them as one PDF."""
    today = selectors.checked_in_today()
    form = BatchForm(request.POST if request.method == "POST" else None)
    # The ticks come back as they were posted, even those refused (only matching jobs are shown).
    picked = request.POST.getlist("numbers") if request.method == "POST" else []
    if request.method == "POST" and form.is_valid():
        which = form.cleaned_data["which"]
        numbers = form.cleaned_data["numbers"] if which == "picked" else today
        try:
            batch = services.print_batch_start(numbers=numbers, by=request.user, base_url=_base_url(request))
        except ValidationError as refusal:
            # At the button pressed: today's, or the ticked jobs'.
            form.add_error("numbers" if which == "picked" else "which", refusal.messages)
        else:
            return redirect("documents:batch", batch_id=batch.pk)
    refused = form.is_bound and bool(form.errors)
    return render(
        request,
        "documents/batch_new.html",
        {
            "today": today,
            "candidates": selectors.batch_candidates(),
            "picked": set(picked),
            "form": form,
            "recent": PrintBatch.objects.defer("pdf").select_related("created_by")[:5],
        },
        status=400 if refused else 200,
    )


@require_GET
@permission_required("documents.print_job_card", raise_exception=True)
def batch_detail(request: HttpRequest, batch_id: int) -> HttpResponse:
    """The batch's progress; htmx polls the status part every second until it is done."""
    batch = get_object_or_404(PrintBatch.objects.defer("pdf"), pk=batch_id)
    template = "documents/batch.html#status" if request.htmx else "documents/batch.html"
    return render(request, template, {"batch": batch})


@require_GET
@permission_required("documents.print_job_card", raise_exception=True)
def batch_file(request: HttpRequest, batch_id: int) -> HttpResponse:
    batch = get_object_or_404(PrintBatch, pk=batch_id, state=PrintBatch.State.DONE)
    if not batch.pdf:  # a batch from before the PDFs were kept on the row
        raise Http404("The batch's file is gone; print the batch again.")
    document = Document(filename=batch.file_name, mime_type=PDF, content=bytes(batch.pdf))
    return _pdf(document, download=True)
