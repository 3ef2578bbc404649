"""Check-in, the job page and the status board."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import permission_required
from django.core.exceptions import ValidationError
from django.http import HttpRequest, HttpResponse
from django.shortcuts import get_object_or_404, redirect, render
from django.views.decorators.http import require_GET, require_http_methods, require_POST

from shopdesk.customers.forms import SetupForm
from shopdesk.customers.models import Unit
from shopdesk.workshop import selectors, services
from shopdesk.workshop.forms import CheckInForm, MoveForm
from shopdesk.workshop.models import Status, WorkOrder


def _check_in_forms(request: HttpRequest, unit: Unit) -> tuple[CheckInForm, SetupForm]:
    data = request.POST if request.method == "POST" else None
    initial = {name: getattr(unit, name) for name in Unit.SETUP_FIELDS}
    return (
        CheckInForm(data, prefix="job"),
        SetupForm(data, prefix="arrival", unit_model=unit.unit_model, initial=initial),
    )


@require_http_methods(["GET", "POST"])
@permission_required("workshop.check_in_workorder", raise_exception=True)
def check_in(request: HttpRequest, unit_id: int) -> HttpResponse:
    unit = get_object_or_404(Unit.objects.select_related("customer", "unit_model"), pk=unit_id)
    form, setup_form = _check_in_forms(request, unit)
    if request.method == "POST" and form.is_valid() and setup_form.is_valid():
        try:
            work_order = services.work_order_check_in(
                unit=unit,
                by=request.user,
                service_types=form.cleaned_data["service_types"],
                complaint=form.cleaned_data["complaint"],
                came_with=form.cleaned_data["came_with"],
                promised_on=form.cleaned_data["promised_on"],
                arrival=setup_form.setup_values(),
            )
        except ValidationError as error:
            form.add_error(None, error)
        else:
            messages.success(request, f"Checked in as {work_order.number}.")
            if request.POST.get("then") == "print" and request.user.has_perm("documents.print_job_card"):
                # The job page starts the job card's download (documents/partials/print_now.html).
                return redirect(f"{work_order.get_absolute_url()}?print=job-card")
            return redirect(work_order)
    services_chosen = form.cleaned_data.get("service_types", []) if form.is_bound and form.is_valid() else []
    return render(
        request,
        "workshop/check_in.html",
        {
            "unit": unit,
            "form": form,
            "setup_form": setup_form,
            "quote": services.quote(service_types=services_chosen),
        },
    )


@require_POST
@permission_required("workshop.check_in_workorder", raise_exception=True)
def quote(request: HttpRequest) -> HttpResponse:
    """The quote for the ticked services, as the front desk ticks them. The ticks go through the
    check-in form's own field (ids of active services, ASCII digits); a refused tick is named in
    the quote and nothing is quoted for it."""
    form = CheckInForm(request.POST, prefix="job")
    form.is_valid()
    chosen = form.cleaned_data.get("service_types", [])
    refused = [] if form.has_error("service_types", "required") else form.errors.get("service_types", [])
    return render(
        request,
        "workshop/check_in.html#quote",
        {"quote": services.quote(service_types=chosen), "quote_errors": refused},
    )


@require_GET
@permission_required("workshop.view_workorder", raise_exception=True)
def status_board(request: HttpRequest) -> HttpResponse:
    columns = selectors.status_board(may=request.user.has_perm)
    template = "workshop/board.html#board" if request.htmx else "workshop/board.html"
    return render(request, template, {"columns": columns})


@require_POST
@permission_required("workshop.view_workorder", raise_exception=True)
def move(request: HttpRequest, number: str) -> HttpResponse:
    work_order = get_object_or_404(WorkOrder, number=number)
    form = MoveForm(request.POST)
    if not form.is_valid():
        messages.error(request, "Choose where the job should go.")
    else:
        try:
            services.work_order_move(
                work_order=work_order,
                target=form.cleaned_data["to"],
                by=request.user,
                note=form.cleaned_data["note"],
            )
        except services.MoveRefused as refusal:
            messages.error(request, str(refusal))
        else:
            messages.success(
                request, f"{work_order.number} is now {Status(work_order.status).label.lower()}."
            )
    if request.POST.get("from") == "board":
        if request.htmx:
            return render(
                request,
                "workshop/board.html#board",
                {"columns": selectors.status_board(may=request.user.has_perm)},
            )
        return redirect("workshop:board")
    return redirect(work_order)
