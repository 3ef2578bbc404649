"""Stock pages: the list of parts with what is on hand, a part's ledger, and the owner's forms."""

from __future__ import annotations

from django import forms
from django.contrib import messages
from django.contrib.auth.decorators import permission_required
from django.core.exceptions import ValidationError
from django.core.paginator import Paginator
from django.http import Http404, HttpRequest, HttpResponse
from django.shortcuts import redirect, render
from django.views.decorators.http import require_GET, require_http_methods

from shopdesk.stock import selectors, services
from shopdesk.stock.forms import AdjustForm, PartForm, ReceiveForm, StockFilterForm
from shopdesk.stock.models import Part

PARTS_PER_PAGE = 50
LEDGER_PER_PAGE = 50


def _part(part_id: int) -> Part:
    part = selectors.part_for_page(part_id)
    if part is None:
        raise Http404("No such part.")
    return part


def _show_refusal(form: forms.Form, error: ValidationError) -> None:
    """Put a service's refusal at the form's field it names, or above the form."""
    if isinstance(error, services.StockRefused):
        form.add_error(error.field if error.field in form.fields else None, error.message)
        return
    if hasattr(error, "error_dict"):
        for field, field_errors in error.error_dict.items():
            form.add_error(field if field in form.fields else None, field_errors)
        return
    form.add_error(None, error)


@require_GET
@permission_required("stock.view_part", raise_exception=True)
def stock_list(request: HttpRequest) -> HttpResponse:
    filters = StockFilterForm(request.GET or None)
    parts = selectors.part_list(**filters.values())
    page = Paginator(parts, PARTS_PER_PAGE).get_page(request.GET.get("page"))
    query = request.GET.copy()
    query.pop("page", None)
    context = {"filters": filters, "page": page, "query": query.urlencode()}
    if request.htmx:
        return render(request, "stock/list.html#parts", context)
    if request.user.has_perm("stock.view_stockmovement"):
        context["movements"] = list(selectors.recent_movements())
    return render(request, "stock/list.html", context)


@require_GET
@permission_required("stock.view_part", raise_exception=True)
def part_detail(request: HttpRequest, part_id: int) -> HttpResponse:
    part = _part(part_id)
    context: dict[str, object] = {"part": part}
    if request.user.has_perm("stock.view_stocklot"):
        context["lots"] = list(selectors.lots_for(part))
    if request.user.has_perm("stock.view_stockmovement"):
        context["ledger"] = Paginator(selectors.part_ledger(part), LEDGER_PER_PAGE).get_page(
            request.GET.get("page")
        )
    return render(request, "stock/part_detail.html", context)


@require_http_methods(["GET", "POST"])
@permission_required("stock.add_part", raise_exception=True)
def part_new(request: HttpRequest) -> HttpResponse:
    form = PartForm(request.POST if request.method == "POST" else None)
    if request.method == "POST" and form.is_valid():
        try:
            part = services.part_save(part=form.save(commit=False), by=request.user)
        except ValidationError as error:
            _show_refusal(form, error)
        else:
            messages.success(request, f"{part.part_number} added. Receive its stock when it comes in.")
            return redirect(part)
    return render(request, "stock/part_form.html", {"form": form, "part": None})


@require_http_methods(["GET", "POST"])
@permission_required("stock.change_part", raise_exception=True)
def part_edit(request: HttpRequest, part_id: int) -> HttpResponse:
    part = _part(part_id)
    # The form changes its own copy, so that the page's heading keeps the stored values.
    form = PartForm(request.POST if request.method == "POST" else None, instance=Part.objects.get(pk=part.pk))
    if request.method == "POST" and form.is_valid():
        try:
            saved = services.part_save(part=form.save(commit=False), by=request.user)
        except ValidationError as error:
            _show_refusal(form, error)
        else:
            messages.success(request, f"{saved.part_number} saved.")
            return redirect(saved)
    return render(request, "stock/part_form.html", {"form": form, "part": part})


@require_http_methods(["GET", "POST"])
@permission_required("stock.receive_stock", raise_exception=True)
def part_receive(request: HttpRequest, part_id: int) -> HttpResponse:
    part = _part(part_id)
    form = ReceiveForm(request.POST if request.method == "POST" else None, part=part)
    if request.method == "POST" and form.is_valid():
        try:
            movement = services.stock_receive(
                part=part,
                quantity=form.cleaned_data["quantity"],
                lot_code=form.cleaned_data["lot_code"],
                cost=form.cleaned_data["cost"],
                by=request.user,
            )
        except ValidationError as error:
            _show_refusal(form, error)
        else:
            lot = f", lot {movement.lot.lot_code}" if movement.lot else ""
            messages.success(request, f"Received {movement.quantity.normalize():f} {part.unit_label}{lot}.")
            return redirect(part)
    return render(
        request,
        "stock/movement_form.html",
        {"form": form, "part": part, "title": f"Receive {part.part_number}", "button": "Receive"},
    )


@require_http_methods(["GET", "POST"])
@permission_required("stock.adjust_stock", raise_exception=True)
def part_adjust(request: HttpRequest, part_id: int) -> HttpResponse:
    part = _part(part_id)
    form = AdjustForm(request.POST if request.method == "POST" else None, part=part)
    if request.method == "POST" and form.is_valid():
        try:
            movement = services.stock_adjust(
                part=part,
                quantity=form.cleaned_data["quantity"],
                reason=form.cleaned_data["reason"],
                by=request.user,
            )
        except ValidationError as error:
            _show_refusal(form, error)
        else:
            messages.success(
                request, f"Count adjusted by {movement.quantity.normalize():f} {part.unit_label}."
            )
            return redirect(part)
    return render(
        request,
        "stock/movement_form.html",
        {"form": form, "part": part, "title": f"Adjust the count of {part.part_number}", "button": "Adjust"},
    )
