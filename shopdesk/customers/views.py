"""Front-desk pages: find, add and edit customers and their units."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import permission_required
from django.db import transaction
from django.http import HttpRequest, HttpResponse
from django.shortcuts import get_object_or_404, redirect, render
from django.views.decorators.http import require_GET, require_http_methods

from shopdesk.customers import selectors, services
from shopdesk.customers.forms import CustomerForm, SearchForm, SetupForm, UnitForm
from shopdesk.customers.models import Customer, Unit
from shopdesk.specs.models import UnitModel
from shopdesk.workshop.models import WorkOrder
from shopdesk.workshop.selectors import work_order_from_scan


@require_GET
@permission_required("customers.view_customer", raise_exception=True)
def search(request: HttpRequest) -> HttpResponse:
    form = SearchForm(request.GET)
    query = form.query()
    template = "customers/search.html#results" if request.htmx else "customers/search.html"
    if query is None:
        return render(request, template, {"form": form, "results": None, "scanned": None})
    # A scanner types a job card's QR address or a job number, then Enter: open that job.
    scanned = work_order_from_scan(query)
    if scanned is not None and not request.htmx:
        return redirect(scanned)
    results = selectors.search(query)
    return render(request, template, {"form": form, "results": results, "scanned": scanned})


@require_http_methods(["GET", "POST"])
@permission_required("customers.add_customer", raise_exception=True)
def customer_new(request: HttpRequest) -> HttpResponse:
    form = CustomerForm(
        request.POST if request.method == "POST" else None, initial={"name": request.GET.get("name", "")}
    )
    if request.method == "POST" and form.is_valid():
        customer = services.customer_save(form=form, by=request.user)
        messages.success(request, f"{customer.name} added. Now add their fork or shock.")
        return redirect("customers:unit-new", customer_id=customer.pk)
    return render(request, "customers/customer_form.html", {"form": form, "customer": None})


@require_GET
@permission_required("customers.view_customer", raise_exception=True)
def customer_detail(request: HttpRequest, customer_id: int) -> HttpResponse:
    customer = get_object_or_404(Customer, pk=customer_id)
    units = list(selectors.customer_units(customer))
    work_orders = (
        WorkOrder.objects.filter(customer=customer)
        .select_related("unit__unit_model")
        .order_by("-checked_in_at")[:20]
    )
    return render(
        request,
        "customers/customer_detail.html",
        {"customer": customer, "units": units, "work_orders": work_orders},
    )


@require_http_methods(["GET", "POST"])
@permission_required("customers.change_customer", raise_exception=True)
def customer_edit(request: HttpRequest, customer_id: int) -> HttpResponse:
    customer = get_object_or_404(Customer, pk=customer_id)
    form = CustomerForm(request.POST if request.method == "POST" else None, instance=customer)
    if request.method == "POST" and form.is_valid():
        services.customer_save(form=form, by=request.user)
        messages.success(request, "Customer saved.")
        return redirect("customers:customer", customer_id=customer.pk)
    return render(request, "customers/customer_form.html", {"form": form, "customer": customer})


def _unit_forms(request: HttpRequest, unit: Unit | None, customer: Customer) -> tuple[UnitForm, SetupForm]:
    data = request.POST if request.method == "POST" else None
    unit_form = UnitForm(data, instance=unit, prefix="unit")
    unit_model: UnitModel | None = unit.unit_model if unit else None
    if data is not None and unit_form.is_valid():
        unit_model = unit_form.cleaned_data["unit_model"]
    initial = {name: getattr(unit, name) for name in Unit.SETUP_FIELDS} if unit else None
    setup_form = SetupForm(data, prefix="setup", unit_model=unit_model, initial=initial)
    return unit_form, setup_form


@require_http_methods(["GET", "POST"])
@permission_required("customers.add_unit", raise_exception=True)
def unit_new(request: HttpRequest, customer_id: int) -> HttpResponse:
    customer = get_object_or_404(Customer, pk=customer_id)
    unit_form, setup_form = _unit_forms(request, None, customer)
    if request.method == "POST" and unit_form.is_valid() and setup_form.is_valid():
        unit = services.unit_save(form=unit_form, setup=setup_form.setup_values(), customer=customer)
        messages.success(request, f"{unit} added to {customer.name}.")
        return redirect("customers:unit", unit_id=unit.pk)
    return render(
        request,
        "customers/unit_form.html",
        {"customer": customer, "unit": None, "form": unit_form, "setup_form": setup_form},
    )


@require_GET
@permission_required("customers.view_unit", raise_exception=True)
def unit_detail(request: HttpRequest, unit_id: int) -> HttpResponse:
    unit = get_object_or_404(Unit.objects.select_related("customer", "unit_model"), pk=unit_id)
    from shopdesk.workshop.selectors import unit_due_dates, unit_revalves, unit_service_history

    work_orders = unit.work_orders.order_by("-checked_in_at")[:20]
    return render(
        request,
        "customers/unit_detail.html",
        {
            "unit": unit,
            "work_orders": work_orders,
            "due_dates": unit_due_dates(unit),
            "history": unit_service_history(unit),
            "revalves": unit_revalves(unit),
        },
    )


@require_http_methods(["GET", "POST"])
@permission_required("customers.change_unit", raise_exception=True)
def unit_edit(request: HttpRequest, unit_id: int) -> HttpResponse:
    unit = get_object_or_404(Unit.objects.select_related("customer", "unit_model"), pk=unit_id)
    unit_form, setup_form = _unit_forms(request, unit, unit.customer)
    if request.method == "POST" and unit_form.is_valid() and setup_form.is_valid():
        with transaction.atomic():
            services.unit_save(form=unit_form, setup=setup_form.setup_values(), customer=unit.customer)
        messages.success(request, "Unit saved.")
        return redirect("customers:unit", unit_id=unit.pk)
    return render(
        request,
        "customers/unit_form.html",
        {"customer": unit.customer, "unit": unit, "form": unit_form, "setup_form": setup_form},
    )
