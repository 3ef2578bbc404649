"""The bench: the queue, taking a job, and the job page's records, each saved inline (htmx) or as a plain form."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from django.contrib import messages
from django.contrib.auth.decorators import permission_required
from django.core.exceptions import PermissionDenied, ValidationError
from django.http import Http404, HttpRequest, HttpResponse
from django.shortcuts import get_object_or_404, redirect, render
from django.views.decorators.http import require_GET, require_POST

from shopdesk.calc import Q_
from shopdesk.calc import oil as oil_calc
from shopdesk.specs.models import Chamber
from shopdesk.workshop import diagnosis, flow, selectors, services
from shopdesk.workshop.bench_forms import (
    LabourForm,
    OilRecordForm,
    PartUsedForm,
    SpringRecordForm,
    VoidForm,
    shop_temperature,
)
from shopdesk.workshop.charts import spring_plot
from shopdesk.workshop.forms import PaymentForm, PaymentVoidForm
from shopdesk.workshop.models import (
    FinalCheck,
    LabourEntry,
    OilRecord,
    PartUsed,
    Payment,
    ShimStackRecord,
    SpringRecord,
    WorkOrder,
)
from shopdesk.workshop.services.payments import payment_state

RECORD_MODELS: dict[str, type] = {
    "oil": OilRecord,
    "spring": SpringRecord,
    "part": PartUsed,
    "labour": LabourEntry,
    "stack": ShimStackRecord,
}
RECORD_PERMISSIONS = {
    "oil": "workshop.change_oilrecord",
    "spring": "workshop.change_springrecord",
    "part": "workshop.change_partused",
    "labour": "workshop.change_labourentry",
    "stack": "workshop.change_shimstackrecord",
}


@dataclass
class ChamberRow:
    chamber: Chamber
    record: OilRecord | None
    form: OilRecordForm
    findings: list[diagnosis.Finding]
    grams_to_weigh: float | None
    conflict: str = ""


@dataclass
class SpringRow:
    stage: str
    label: str
    record: SpringRecord | None
    form: SpringRecordForm
    conflict: str = ""


@dataclass(frozen=True)
class VoidRefusal:
    """A void that was refused: the posted form, back at the record's void button with its reason
    kept and the refusal in it. Where the page shows no void button for the record (already void;
    a part or labour on a closed job), the refusal is shown above the records instead."""

    kind: str
    record_id: int
    form: VoidForm
    shown: bool = True

    @property
    def errors(self) -> list[str]:
        return [error for errors in self.form.errors.values() for error in errors]


@dataclass
class Overrides:
    """Forms bound to what was just posted, shown in place of the fresh ones."""

    oil: dict[int, tuple[OilRecordForm, str]] = field(default_factory=dict)
    spring: dict[str, tuple[SpringRecordForm, str]] = field(default_factory=dict)
    part: PartUsedForm | None = None
    labour: LabourForm | None = None
    payment: PaymentForm | None = None
    payment_void: tuple[int, PaymentVoidForm] | None = None
    void: VoidRefusal | None = None


def _job(number: str) -> WorkOrder:
    work_order = selectors.work_order_for_page(number).first()
    if work_order is None:
        raise Http404(f"No job numbered {number}.")
    return work_order


def _grams_to_weigh(chamber: Chamber) -> float | None:
    if chamber.volume_ml is None or chamber.oil is None:
        return None
    mass = oil_calc.mass_for_volume(
        volume=Q_(chamber.volume_ml, "mL"),
        rho15=Q_(chamber.oil.density_15c_kg_m3, "kg/m**3"),
        temperature=shop_temperature(),
    )
    return float(mass.to("g").magnitude)


def job_context(work_order: WorkOrder, user: Any, overrides: Overrides | None = None) -> dict[str, Any]:
    """Everything the job page shows, in a fixed number of queries whatever the records on the job."""
    overrides = overrides or Overrides()
    unit_model = work_order.unit.unit_model
    oil_records = list(
        OilRecord.objects.filter(work_order=work_order).select_related(
            "oil_part", "oil_lot", "chamber", "recorded_by", "voided_by"
        )
    )
    live_oil = {record.chamber_id: record for record in oil_records if not record.is_void}
    spec_chambers = list(unit_model.chambers.select_related("oil"))
    chambers = []
    oil_choices = None  # read by the first chamber's form, shown by every one
    for chamber in spec_chambers:
        record = live_oil.get(chamber.pk)
        form, conflict = overrides.oil.get(chamber.pk, (None, ""))
        if form is None:
            form = OilRecordForm(
                prefix=f"oil-{chamber.pk}",
                chamber=chamber,
                initial=OilRecordForm.initial_for(record),
                choices=oil_choices,
            )
            oil_choices = oil_choices or form.share_choices()
        chambers.append(
            ChamberRow(
                chamber=chamber,
                record=record,
                form=form,
                findings=diagnosis.drained_findings(
                    chamber=chamber,
                    drained_ml=record.drained_ml if record else None,
                    condition=record.condition if record else "",
                ),
                grams_to_weigh=_grams_to_weigh(chamber),
                conflict=conflict,
            )
        )
    spring_records = list(SpringRecord.objects.filter(work_order=work_order).select_related("recorded_by"))
    live_spring = {record.stage: record for record in spring_records if not record.is_void}
    springs = []
    for stage, label in SpringRecord.Stage.choices:
        record = live_spring.get(stage)
        form, conflict = overrides.spring.get(stage, (None, ""))
        if form is None:
            form = SpringRecordForm(
                prefix=f"spring-{stage}",
                unit_model=unit_model,
                initial=SpringRecordForm.initial_for(record, unit_model),
            )
        springs.append(SpringRow(stage=stage, label=label, record=record, form=form, conflict=conflict))
    parts = list(
        PartUsed.objects.filter(work_order=work_order).select_related(
            "part", "lot", "recorded_by", "voided_by"
        )
    )
    labour = list(LabourEntry.objects.filter(work_order=work_order).select_related("technician", "voided_by"))
    checks = list(work_order.final_checks.select_related("done_by"))
    requested = list(work_order.services.select_related("service_type"))
    # The rules below read the records this page has just read, not the database again.
    records = services.JobRecords(
        services=requested,
        chambers=spec_chambers,
        oil=oil_records,
        spring=spring_records,
        parts=parts,
        labour=labour,
        checks=checks,
    )
    may_override = user.has_perm("stock.override_stock")
    price = services.job_price(work_order, records)
    payment = payment_state(
        work_order,
        total=price.total.total,
        payments=work_order.payments.select_related("taken_by", "voided_by"),
    )
    return {
        "work_order": work_order,
        "unit_model": unit_model,
        "requested": requested,
        "events": list(work_order.events.select_related("by")),
        "moves": flow.moves_from(work_order.status),
        "chambers": chambers,
        "required_chambers": {chamber.pk for chamber in services.required_chambers(work_order, records)},
        "voided_oil": [record for record in oil_records if record.is_void],
        "springs": springs,
        "stack_summaries": selectors.stack_summaries(work_order),
        "spring_plot": spring_plot(unit_model, live_spring),
        "voided_springs": [record for record in spring_records if record.is_void],
        "parts": parts,
        "part_form": overrides.part or PartUsedForm(prefix="part", may_override=may_override),
        "labour": labour,
        "labour_minutes": sum(entry.minutes for entry in labour if not entry.is_void),
        "labour_form": overrides.labour or LabourForm(prefix="labour"),
        "checks": checks,
        "missing": services.missing_before_ready(work_order, records),
        "price": price,
        "payment": payment,
        "payment_form": overrides.payment
        or PaymentForm(prefix="payment", initial={"amount": payment.owed, "method": Payment.Method.CARD}),
        "payment_rows": [
            (
                entry,
                overrides.payment_void[1]
                if overrides.payment_void and overrides.payment_void[0] == entry.pk
                else PaymentVoidForm(prefix=f"void-payment-{entry.pk}"),
            )
            for entry in payment.payments
        ],
        "void_refused": overrides.void,
        "torque_values": list(unit_model.torque_values.all()),
        "can_record": work_order.status in services.bench.RECORDING_STATUSES,
        "shop_temperature_c": shop_temperature().magnitude,
    }


def _render_job(
    request: HttpRequest, work_order: WorkOrder, overrides: Overrides | None = None
) -> HttpResponse:
    """The job page again, with the posted forms and their errors in place (htmx: the bench part only)."""
    work_order = _job(work_order.number)  # fresh: the save may have changed it
    context = job_context(work_order, request.user, overrides)
    template = "workshop/work_order.html#bench" if request.htmx else "workshop/work_order.html"
    return render(request, template, context)


@require_GET
@permission_required("workshop.view_workorder", raise_exception=True)
def work_order_detail(request: HttpRequest, number: str) -> HttpResponse:
    return render(request, "workshop/work_order.html", job_context(_job(number), request.user))


def _after_save(request: HttpRequest, work_order: WorkOrder, anchor: str, message: str) -> HttpResponse:
    messages.success(request, message)
    if request.htmx:
        return _render_job(request, work_order)
    return redirect(f"{work_order.get_absolute_url()}#{anchor}")


@require_POST
@permission_required("workshop.change_oilrecord", raise_exception=True)
def oil_save(request: HttpRequest, number: str, chamber_id: int) -> HttpResponse:
    work_order = _job(number)
    chamber = get_object_or_404(
        Chamber.objects.select_related("oil"), pk=chamber_id, unit_model=work_order.unit.unit_model
    )
    form = OilRecordForm(request.POST, prefix=f"oil-{chamber.pk}", chamber=chamber)
    if form.is_valid():
        record = OilRecord.objects.filter(
            work_order=work_order, chamber=chamber, voided_at__isnull=True
        ).first()
        try:
            services.oil_record_save(
                work_order=work_order,
                chamber=chamber,
                values=form.record_values(),
                by=request.user,
                record=record,
                version=services.expected_version(record, form.cleaned_data.get("version")),
            )
        except services.RecordConflict as conflict:
            fresh = OilRecordForm(
                prefix=f"oil-{chamber.pk}",
                chamber=chamber,
                initial=OilRecordForm.initial_for(conflict.current),
            )
            return _render_job(request, work_order, Overrides(oil={chamber.pk: (fresh, str(conflict))}))
        except ValidationError as error:
            _add_errors(form, error)
        else:
            return _after_save(request, work_order, f"chamber-{chamber.pk}", f"Oil for {chamber.name} saved.")
    return _render_job(request, work_order, Overrides(oil={chamber.pk: (form, "")}))


@require_POST
@permission_required("workshop.change_springrecord", raise_exception=True)
def spring_save(request: HttpRequest, number: str, stage: str) -> HttpResponse:
    work_order = _job(number)
    if stage not in SpringRecord.Stage.values:
        raise Http404("No such spring stage.")
    unit_model = work_order.unit.unit_model
    form = SpringRecordForm(request.POST, prefix=f"spring-{stage}", unit_model=unit_model)
    if form.is_valid():
        record = SpringRecord.objects.filter(
            work_order=work_order, stage=stage, voided_at__isnull=True
        ).first()
        try:
            services.spring_record_save(
                work_order=work_order,
                stage=stage,
                values=form.record_values(),
                by=request.user,
                record=record,
                version=services.expected_version(record, form.cleaned_data.get("version")),
            )
        except services.RecordConflict as conflict:
            fresh = SpringRecordForm(
                prefix=f"spring-{stage}",
                unit_model=unit_model,
                initial=SpringRecordForm.initial_for(conflict.current, unit_model),
            )
            return _render_job(request, work_order, Overrides(spring={stage: (fresh, str(conflict))}))
        except ValidationError as error:
            _add_errors(form, error)
        else:
            label = SpringRecord.Stage(stage).label.lower()
            return _after_save(request, work_order, f"spring-{stage}", f"Spring setup {label} saved.")
    return _render_job(request, work_order, Overrides(spring={stage: (form, "")}))


@require_POST
@permission_required("workshop.add_partused", raise_exception=True)
def part_add(request: HttpRequest, number: str) -> HttpResponse:
    from shopdesk.stock.services import StockRefused

    work_order = _job(number)
    may_override = request.user.has_perm("stock.override_stock")
    form = PartUsedForm(request.POST, prefix="part", may_override=may_override)
    if form.is_valid():
        try:
            services.part_use(
                work_order=work_order,
                part=form.cleaned_data["part"],
                quantity=form.cleaned_data["quantity"],
                lot=form.cleaned_data["lot"],
                serial_number=form.cleaned_data["serial_number"],
                override_reason=form.cleaned_data.get("override_reason", ""),
                by=request.user,
            )
        except StockRefused as refusal:
            form.add_error("quantity", str(refusal.message if hasattr(refusal, "message") else refusal))
        except ValidationError as error:
            _add_errors(form, error)
        else:
            return _after_save(request, work_order, "parts", f"{form.cleaned_data['part'].name} fitted.")
    return _render_job(request, work_order, Overrides(part=form))


@require_POST
@permission_required("workshop.add_labourentry", raise_exception=True)
def labour_save(request: HttpRequest, number: str) -> HttpResponse:
    work_order = _job(number)
    form = LabourForm(request.POST, prefix="labour")
    if form.is_valid():
        try:
            services.labour_add(
                work_order=work_order,
                technician=request.user,
                minutes=form.cleaned_data["minutes"],
                charged_as_extra=form.cleaned_data["charged_as_extra"],
                note=form.cleaned_data["note"],
                by=request.user,
            )
        except ValidationError as error:
            _add_errors(form, error)
        else:
            return _after_save(request, work_order, "labour", "Labour recorded.")
    return _render_job(request, work_order, Overrides(labour=form))


@require_POST
@permission_required("workshop.change_finalcheck", raise_exception=True)
def check_set(request: HttpRequest, number: str, check_id: int) -> HttpResponse:
    work_order = _job(number)
    check = get_object_or_404(FinalCheck, pk=check_id, work_order=work_order)
    try:
        services.final_check_set(check=check, done=request.POST.get("done") == "on", by=request.user)
    except ValidationError as error:
        messages.error(request, " ".join(error.messages))
    if request.htmx:
        return _render_job(request, work_order)
    return redirect(f"{work_order.get_absolute_url()}#checks")


@require_POST
def record_void(request: HttpRequest, number: str, kind: str, record_id: int) -> HttpResponse:
    if kind not in RECORD_MODELS:
        raise Http404("No such record.")
    if not request.user.has_perm(RECORD_PERMISSIONS[kind]):
        raise PermissionDenied("You may not void bench records.")
    work_order = _job(number)
    record = get_object_or_404(RECORD_MODELS[kind], pk=record_id, work_order=work_order)
    form = VoidForm(request.POST)
    if form.is_valid():
        try:
            services.record_void(record=record, reason=form.cleaned_data["reason"], by=request.user)
        except ValidationError as error:
            _add_errors(form, error)
        else:
            messages.success(request, "Record voided; it stays on the job, marked void.")
            if kind == "stack":
                return redirect("workshop:valve", work_order.number, record.valve)
            if request.htmx:
                return _render_job(request, work_order)
            return redirect(work_order)
    # Refused: the page again (200), the reason typed kept and the refusal at the void form.
    shown = not record.is_void and (
        kind in {"oil", "spring"} or work_order.status in services.bench.RECORDING_STATUSES
    )
    refusal = VoidRefusal(kind=kind, record_id=record.pk, form=form, shown=shown)
    if kind == "stack":
        from shopdesk.workshop.revalve_views import render_valve_void_refused

        return render_valve_void_refused(request, work_order, record, refusal)
    return _render_job(request, work_order, Overrides(void=refusal))


def _add_errors(form: Any, error: ValidationError) -> None:
    if hasattr(error, "error_dict"):
        for name, errors in error.message_dict.items():
            form.add_error(name if name in form.fields else None, errors)
    else:
        form.add_error(None, error.messages)


# --- The bench queue ----------------------------------------------------------------------------


@require_GET
@permission_required("workshop.move_on_bench_workorder", raise_exception=True)
def bench_queue(request: HttpRequest) -> HttpResponse:
    jobs = selectors.bench_queue(user=request.user)
    return render(request, "workshop/bench_queue.html", {"jobs": jobs})


@require_POST
@permission_required("workshop.move_on_bench_workorder", raise_exception=True)
def take(request: HttpRequest, number: str) -> HttpResponse:
    work_order = get_object_or_404(WorkOrder, number=number)
    try:
        services.work_order_take(work_order=work_order, by=request.user)
    except services.MoveRefused as refusal:
        messages.error(request, str(refusal))
        return redirect("workshop:bench")
    messages.success(request, f"{work_order.number} is yours.")
    return redirect(work_order)
