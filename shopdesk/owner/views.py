"""The owner's pages: what is due (with a reminder per row), the reminder's wording, the unsubscribe
page a customer reaches from a reminder, and a unit's due dates as a calendar file."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_not_required, permission_required
from django.core import signing
from django.http import HttpRequest, HttpResponse
from django.shortcuts import get_object_or_404, redirect, render
from django.views.decorators.http import require_GET, require_http_methods, require_POST

from shopdesk.calc.schedule import DueStatus
from shopdesk.customers.models import Customer, Unit
from shopdesk.customers.services import customer_consent_set
from shopdesk.owner import selectors, services
from shopdesk.owner.forms import DueFilterForm, WordingForm
from shopdesk.owner.models import DueService
from shopdesk.shop.redirects import safe_next


@require_GET
@permission_required("owner.view_dashboard", raise_exception=True)
def dashboard(request: HttpRequest) -> HttpResponse:
    form = DueFilterForm(request.GET or None)
    kind = DueStatus.OVERDUE
    page = None
    if form.is_bound and not form.is_valid():
        pass  # the errors show at their fields; no list until they are put right
    else:
        cleaned = form.cleaned_data if form.is_bound else {}
        kind = DueStatus.DUE_SOON if cleaned.get("list") == "soon" else DueStatus.OVERDUE
        page = selectors.due_page(
            kind=kind,
            filters=form.filters() if form.is_bound else selectors.DueFilters(),
            after=cleaned.get("after"),
        )
    query = request.GET.copy()
    query.pop("after", None)
    query.pop("list", None)
    context = {
        "form": form,
        "kind": kind.value,
        "page": page,
        "glance": selectors.at_a_glance(),
        "filters_query": query.urlencode(),
        "here": request.get_full_path(),
    }
    template = "owner/dashboard.html#due-list" if request.htmx else "owner/dashboard.html"
    return render(request, template, context)


@require_POST
@permission_required("owner.send_reminder", raise_exception=True)
def remind(request: HttpRequest, due_id: int) -> HttpResponse:
    due = get_object_or_404(
        DueService.objects.select_related("unit__customer", "unit__unit_model", "service_type"), pk=due_id
    )
    try:
        reminder = services.reminder_send(due=due, by=request.user)
    except services.ReminderRefused as refusal:
        messages.error(request, str(refusal))
    except Exception as error:  # the mail server refused or is down: say so, nothing is recorded
        messages.error(request, f"The reminder did not go ({error.__class__.__name__}); try again later.")
    else:
        if reminder is None:
            messages.info(request, "Another reminder run is sending this one right now.")
        else:
            messages.success(
                request,
                f"Reminder sent to {due.unit.customer.name} ({reminder.email}) for {due.service_type}.",
            )
    return redirect(safe_next(request, request.POST.get("next"), fallback="owner:dashboard"))


@require_http_methods(["GET", "POST"])
@permission_required("owner.change_messagewording", raise_exception=True)
def wording(request: HttpRequest) -> HttpResponse:
    current = selectors.wording_current()
    form = WordingForm(
        request.POST if request.method == "POST" else None,  # an empty post is checked, not ignored
        initial={"subject": current.subject, "body": current.body},
    )
    if request.method == "POST" and form.is_valid():
        services.wording_save(subject=form.cleaned_data["subject"], body=form.cleaned_data["body"])
        messages.success(request, "The reminder's wording is saved; the next reminders use it.")
        return redirect("owner:wording")
    sample = DueService.objects.select_related("unit__customer", "unit__unit_model", "service_type").first()
    preview = services.reminder_message(due=sample) if sample is not None else None
    return render(request, "owner/wording.html", {"form": form, "current": current, "preview": preview})


@login_not_required
@require_http_methods(["GET", "POST"])
def unsubscribe(request: HttpRequest, token: str) -> HttpResponse:
    """From a reminder's link, without signing in: GET asks, POST withdraws consent. A forged or
    expired link gets a plain page saying so (200, as every public page: the words carry the meaning)."""
    try:
        customer_id = services.unsubscribe_customer_id(token)
    except signing.SignatureExpired:
        return render(request, "owner/unsubscribe.html", {"problem": "expired"})
    except signing.BadSignature:
        return render(request, "owner/unsubscribe.html", {"problem": "forged"})
    customer = Customer.objects.filter(pk=customer_id).first()
    if customer is None:
        return render(request, "owner/unsubscribe.html", {"problem": "gone"})
    if request.method == "POST":
        customer = customer_consent_set(customer_id=customer_id, consent=False)
        return render(request, "owner/unsubscribe.html", {"customer": customer, "done": True})
    return render(request, "owner/unsubscribe.html", {"customer": customer, "done": False})


@require_GET
@permission_required("customers.view_unit", raise_exception=True)
def unit_calendar(request: HttpRequest, unit_id: int) -> HttpResponse:
    from shopdesk.owner.calendar import unit_calendar_render

    unit = get_object_or_404(Unit.objects.select_related("customer", "unit_model"), pk=unit_id)
    filename, mimetype, content = unit_calendar_render(unit=unit, rows=selectors.unit_due_rows(unit))
    response = HttpResponse(content, content_type=mimetype)
    response["Content-Disposition"] = f'attachment; filename="{filename}"'
    return response
