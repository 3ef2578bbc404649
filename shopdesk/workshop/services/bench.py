"""The bench's rules: saving each record, voiding one, the final checks, the price, the close-out.

Every save runs in one transaction, locks the record it changes, refuses a save made from an
older version than the one stored (``RecordConflict``, carrying the stored record so that the
page can show the other person's values), and writes a line to the job's timeline.
"""

from __future__ import annotations

import datetime
from collections.abc import Mapping
from dataclasses import dataclass
from decimal import Decimal
from typing import Any, TypeVar

from django.conf import settings
from django.contrib.auth.models import AbstractBaseUser
from django.core.exceptions import ValidationError
from django.db import models, transaction
from django.utils import timezone

from shopdesk.shop.money import Total, round_money, total_with_tax
from shopdesk.specs.models import Chamber, ServiceType, UnitModel
from shopdesk.stock import services as stock_services
from shopdesk.workshop.models import (
    BenchRecord,
    FinalCheck,
    LabourEntry,
    OilRecord,
    PartUsed,
    RequestedService,
    ServiceRecord,
    SpringRecord,
    Status,
    WorkOrder,
    WorkOrderEvent,
)

Record = TypeVar("Record", bound=BenchRecord)

# Statuses in which the bench may write records.
RECORDING_STATUSES = {Status.CHECKED_IN, Status.WAITING_FOR_PARTS, Status.ON_THE_BENCH, Status.FINAL_CHECK}


class RecordConflict(Exception):
    """Someone else saved this record since the form was opened."""

    def __init__(self, current: models.Model) -> None:
        self.current = current
        who = getattr(current, "recorded_by", None)
        super().__init__(
            f"{who.get_full_name() or who.get_username() if who else 'Someone'} saved this record "
            "while you were editing it. Their values are shown; nothing of yours was saved."
        )


def expected_version(record: models.Model | None, version: int | None) -> int | None:
    """The version a change to a saved record was made from.

    A post that changes a saved record without saying which version it saw (a stale page, a
    hand-made request) is a conflict, never an overwrite: nothing saved is lost.
    """
    if record is None:
        return None
    if version is None:
        raise RecordConflict(record)
    return version


class RecordRefused(ValidationError):
    """A record the job's state does not allow."""


def _check_job_open(work_order: WorkOrder) -> None:
    if work_order.status == Status.CANCELLED:
        raise RecordRefused(f"{work_order.number} is cancelled: its records can no longer change.")
    if work_order.status not in RECORDING_STATUSES:
        raise RecordRefused(
            f"{work_order.number} is {work_order.get_status_display().lower()}: "
            "bench records can change only while the job is on the bench."
        )


def _event(work_order: WorkOrder, by: AbstractBaseUser, message: str, now: datetime.datetime) -> None:
    WorkOrderEvent.objects.create(
        work_order=work_order, at=now, by=by, kind=WorkOrderEvent.Kind.RECORD, message=message[:500]
    )


def _locked(record: Record, expected_version: int | None) -> Record:
    current = type(record).objects.select_for_update().get(pk=record.pk)
    if expected_version is not None and current.version != expected_version:
        raise RecordConflict(current)
    if current.is_void:
        raise RecordRefused("This record was voided; add a new one instead.")
    return current


def _apply(
    record: Record, *, values: Mapping[str, Any], by: AbstractBaseUser, now: datetime.datetime, creating: bool
) -> list[str]:
    changed = [
        f"{name.replace('_', ' ')} {_shown(getattr(record, name))} → {_shown(value)}"
        for name, value in values.items()
        if not creating and getattr(record, name) != value
    ]
    for name, value in values.items():
        setattr(record, name, value)
    record.recorded_by = by
    record.recorded_at = now
    if not creating:
        record.version += 1
    record.full_clean()
    record.save()
    return changed


def _shown(value: Any) -> str:
    if value is None or value == "":
        return "—"
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


# --- Oil ----------------------------------------------------------------------------------------

OIL_FIELDS = (
    "drained_ml",
    "drained_weighed_g",
    "condition",
    "filled_ml",
    "oil_part",
    "oil_lot",
    "fill_confirmed",
    "notes",
)


def oil_record_save(
    *,
    work_order: WorkOrder,
    chamber: Chamber,
    values: Mapping[str, Any],
    by: AbstractBaseUser,
    record: OilRecord | None = None,
    version: int | None = None,
    now: datetime.datetime | None = None,
) -> OilRecord:
    """Save what was drained from and filled into one chamber.

    The oil filled is drawn from stock in mL: a changed fill returns the earlier draw and
    takes the new one, so the ledger always matches the record.
    """
    now = now or timezone.now()
    if chamber.unit_model_id != work_order.unit.unit_model_id:
        raise RecordRefused("That chamber is not on this unit's spec sheet.")
    unknown = set(values) - set(OIL_FIELDS)
    if unknown:
        raise ValueError(f"Not oil-record fields: {sorted(unknown)}")
    with transaction.atomic():
        job = WorkOrder.objects.select_for_update().get(pk=work_order.pk)
        _check_job_open(job)
        if record is None:
            existing = OilRecord.objects.filter(
                work_order=job, chamber=chamber, voided_at__isnull=True
            ).first()
            if existing is not None:
                raise RecordConflict(existing)
            record = OilRecord(work_order=job, chamber=chamber)
            creating = True
        else:
            record = _locked(record, version)
            creating = False
        old_movement = record.movement
        old_fill = (record.filled_ml, record.oil_part_id, record.oil_lot_id)
        changed = _apply(record, values=values, by=by, now=now, creating=creating)
        new_fill = (record.filled_ml, record.oil_part_id, record.oil_lot_id)
        if new_fill != old_fill or creating:
            if old_movement is not None:
                stock_services.stock_return_from_job(movement=old_movement, by=by, reason="Oil fill changed")
            record.movement = None
            if record.oil_part is not None and record.filled_ml:
                record.movement = stock_services.stock_use_on_job(
                    part=record.oil_part,
                    quantity=Decimal(str(round(record.filled_ml, 1))),
                    work_order=job,
                    by=by,
                    lot=record.oil_lot,
                )
            record.save(update_fields=["movement"])
        summary = "; ".join(changed) or "no change"
        _event(job, by, f"Oil, {chamber.name}: {'recorded' if creating else 'changed ' + summary}.", now)
    return record


# --- Spring -------------------------------------------------------------------------------------

SPRING_FIELDS = (
    "positive_pressure_kpa",
    "negative_pressure_kpa",
    "spacer_count",
    "spacer_volume_cc",
    "coil_rate_n_mm",
    "sag_mm",
    "notes",
)


def spring_record_save(
    *,
    work_order: WorkOrder,
    stage: str,
    values: Mapping[str, Any],
    by: AbstractBaseUser,
    record: SpringRecord | None = None,
    version: int | None = None,
    now: datetime.datetime | None = None,
) -> SpringRecord:
    """Save the spring setup before or after the work; the pressures must respect the spec's maximum."""
    now = now or timezone.now()
    unit_model: UnitModel = work_order.unit.unit_model
    maximum = unit_model.max_pressure_kpa
    for name in ("positive_pressure_kpa", "negative_pressure_kpa"):
        value = values.get(name)
        if maximum and value is not None and value > maximum:
            raise ValidationError({name: "Above the spec sheet's maximum pressure. Never exceed it."})
    with transaction.atomic():
        job = WorkOrder.objects.select_for_update().get(pk=work_order.pk)
        _check_job_open(job)
        if record is None:
            existing = SpringRecord.objects.filter(
                work_order=job, stage=stage, voided_at__isnull=True
            ).first()
            if existing is not None:
                raise RecordConflict(existing)
            record = SpringRecord(work_order=job, stage=stage)
            creating = True
        else:
            record = _locked(record, version)
            creating = False
        changed = _apply(record, values=values, by=by, now=now, creating=creating)
        stage_label = SpringRecord.Stage(stage).label.lower()
        summary = "; ".join(changed) or "no change"
        _event(job, by, f"Spring {stage_label}: {'recorded' if creating else 'changed ' + summary}.", now)
    if stage == SpringRecord.Stage.AFTER:
        # The unit's current setup is what it leaves with.
        unit = job.unit
        for name in ("positive_pressure_kpa", "negative_pressure_kpa", "spacer_count", "coil_rate_n_mm"):
            setattr(unit, name, getattr(record, name))
        unit.save(
            update_fields=["positive_pressure_kpa", "negative_pressure_kpa", "spacer_count", "coil_rate_n_mm"]
        )
    return record


# --- Parts --------------------------------------------------------------------------------------


def part_use(
    *,
    work_order: WorkOrder,
    part: Any,
    quantity: Decimal,
    by: AbstractBaseUser,
    lot: Any = None,
    serial_number: str = "",
    override_reason: str = "",
    now: datetime.datetime | None = None,
) -> PartUsed:
    """Fit a part from stock on the job: the stock ledger records its use."""
    now = now or timezone.now()
    with transaction.atomic():
        job = WorkOrder.objects.select_for_update().get(pk=work_order.pk)
        _check_job_open(job)
        movement = stock_services.stock_use_on_job(
            part=part, quantity=quantity, work_order=job, by=by, lot=lot, override_reason=override_reason
        )
        used = PartUsed(
            work_order=job,
            part=part,
            quantity=quantity,
            lot=lot,
            serial_number=serial_number.strip(),
            unit_price=part.price,
            movement=movement,
            recorded_by=by,
            recorded_at=now,
        )
        used.full_clean()
        used.save()
        _event(job, by, f"Part fitted: {quantity.normalize():f} × {part.part_number} {part.name}.", now)
    return used


# --- Labour -------------------------------------------------------------------------------------


def labour_add(
    *,
    work_order: WorkOrder,
    technician: AbstractBaseUser,
    minutes: int,
    by: AbstractBaseUser,
    charged_as_extra: bool = False,
    note: str = "",
    now: datetime.datetime | None = None,
) -> LabourEntry:
    now = now or timezone.now()
    with transaction.atomic():
        job = WorkOrder.objects.select_for_update().get(pk=work_order.pk)
        _check_job_open(job)
        entry = LabourEntry(
            work_order=job,
            technician=technician,
            minutes=minutes,
            charged_as_extra=charged_as_extra,
            note=note.strip(),
            recorded_by=by,
            recorded_at=now,
        )
        entry.full_clean()
        entry.save()
        extra = " (charged as extra)" if charged_as_extra else ""
        _event(job, by, f"Labour: {minutes} min by {technician.get_username()}{extra}.", now)
    return entry


# --- Voiding ------------------------------------------------------------------------------------


def record_void(
    *, record: BenchRecord, reason: str, by: AbstractBaseUser, now: datetime.datetime | None = None
) -> BenchRecord:
    """Void a wrong record: it stays on the job, marked void with the reason. Stock it drew goes back."""
    now = now or timezone.now()
    reason = " ".join(reason.split())
    if not reason:
        raise ValidationError({"void_reason": "Say why the record is wrong."})
    with transaction.atomic():
        job = WorkOrder.objects.select_for_update().get(pk=record.work_order_id)
        _check_job_open(job)
        current = type(record).objects.select_for_update().get(pk=record.pk)
        if current.is_void:
            raise RecordRefused("This record is already void.")
        current.voided_at = now
        current.voided_by = by
        current.void_reason = reason[:200]
        current.version += 1
        movement = getattr(current, "movement", None)
        if movement is not None:
            returned = stock_services.stock_return_from_job(
                movement=movement, by=by, reason=f"Voided: {reason}"
            )
            if isinstance(current, PartUsed):
                current.return_movement = returned
        current.save()
        _event(job, by, f"Voided {current}: {reason}", now)
    return current


# --- Final checks -------------------------------------------------------------------------------


@dataclass(frozen=True)
class CheckItem:
    code: str
    label: str


def final_check_items(work_order: WorkOrder) -> list[CheckItem]:
    """The checklist for this job, from the services asked for and the kind of unit."""
    unit_model = work_order.unit.unit_model
    scopes = {line.service_type.scope for line in work_order.services.select_related("service_type")}
    items = [CheckItem("torque", "Every fastener at the spec sheet's torque (crown, steerer and axle first)")]
    if unit_model.is_air:
        items.append(CheckItem("pressure", "Air pressures set, every chamber, within the maximum"))
    items.append(CheckItem("clickers", "Clickers set back to the customer's settings on arrival"))
    items.append(CheckItem("cycled", "Cycled through the travel and checked for leaks and noises"))
    if scopes & {ServiceType.Scope.LOWERS, ServiceType.Scope.FULL} and unit_model.kind == UnitModel.Kind.FORK:
        items.append(CheckItem("lowers", "Lowers and stanchions wiped clean"))
    return items


def final_checks_create(*, work_order: WorkOrder) -> None:
    """Make the job's checklist (again, if services changed); ticks already given are kept."""
    for order, item in enumerate(final_check_items(work_order)):
        FinalCheck.objects.get_or_create(
            work_order=work_order, code=item.code, defaults={"label": item.label, "display_order": order}
        )


def final_check_set(
    *, check: FinalCheck, done: bool, by: AbstractBaseUser, now: datetime.datetime | None = None
) -> FinalCheck:
    now = now or timezone.now()
    with transaction.atomic():
        job = WorkOrder.objects.select_for_update().get(pk=check.work_order_id)
        _check_job_open(job)
        current = FinalCheck.objects.select_for_update().get(pk=check.pk)
        current.done_at = now if done else None
        current.done_by = by if done else None
        current.save()
        _event(job, by, f"Check {'ticked' if done else 'cleared'}: {current.label}.", now)
    return current


# --- Ready for pickup ---------------------------------------------------------------------------

OIL_SCOPES = {
    Chamber.Kind.LOWERS: {ServiceType.Scope.LOWERS, ServiceType.Scope.FULL},
    Chamber.Kind.DAMPER: {ServiceType.Scope.DAMPER, ServiceType.Scope.FULL, ServiceType.Scope.REVALVE},
    Chamber.Kind.RESERVOIR: {ServiceType.Scope.DAMPER, ServiceType.Scope.FULL, ServiceType.Scope.REVALVE},
    Chamber.Kind.SPRING: {ServiceType.Scope.AIR_SPRING, ServiceType.Scope.FULL},
}


@dataclass(frozen=True)
class JobRecords:
    """What the ready-for-pickup and price rules read of a job, read once. The job page passes the
    records it reads to show anyway; a rule given none reads them itself. Voided records are in
    the lists: each rule looks at the live ones."""

    services: list[RequestedService]  # with their service types
    chambers: list[Chamber]  # the spec sheet's
    oil: list[OilRecord]  # with the oil part and the chamber
    spring: list[SpringRecord]
    parts: list[PartUsed]  # with the part
    labour: list[LabourEntry]
    checks: list[FinalCheck]

    @classmethod
    def read(cls, work_order: WorkOrder) -> JobRecords:
        return cls(
            services=list(work_order.services.select_related("service_type")),
            chambers=list(work_order.unit.unit_model.chambers.all()),
            oil=list(OilRecord.objects.filter(work_order=work_order).select_related("oil_part", "chamber")),
            spring=list(SpringRecord.objects.filter(work_order=work_order)),
            parts=list(PartUsed.objects.filter(work_order=work_order).select_related("part")),
            labour=list(LabourEntry.objects.filter(work_order=work_order)),
            checks=list(work_order.final_checks.all()),
        )


def required_chambers(work_order: WorkOrder, records: JobRecords | None = None) -> list[Chamber]:
    """The chambers whose oil the job's services must record."""
    if records is None:
        lines = list(work_order.services.select_related("service_type"))
        chambers = list(work_order.unit.unit_model.chambers.all())
    else:
        lines, chambers = records.services, records.chambers
    scopes = {line.service_type.scope for line in lines}
    return [chamber for chamber in chambers if scopes & OIL_SCOPES.get(chamber.kind, set())]


def missing_before_ready(work_order: WorkOrder, records: JobRecords | None = None) -> list[str]:
    """What must still be recorded before the job may be ready for pickup, in plain words."""
    records = records or JobRecords.read(work_order)
    missing: list[str] = []
    if not records.services:
        missing.append("No service is on the job.")
    live_oil = {record.chamber_id: record for record in records.oil if record.voided_at is None}
    for chamber in required_chambers(work_order, records):
        record = live_oil.get(chamber.pk)
        if record is None or record.filled_ml is None:
            missing.append(f"Oil filled in “{chamber.name}”.")
        elif record.drained_ml is None:
            missing.append(f"Oil drained from “{chamber.name}”.")
    scopes = {line.service_type.scope for line in records.services}
    spring_scopes = {ServiceType.Scope.AIR_SPRING, ServiceType.Scope.FULL, ServiceType.Scope.REVALVE}
    if scopes & spring_scopes and not any(
        record.stage == SpringRecord.Stage.AFTER and record.voided_at is None for record in records.spring
    ):
        missing.append("The spring setup after the work.")
    if not any(entry.voided_at is None for entry in records.labour):
        missing.append("Labour minutes.")
    for check in records.checks:
        if check.done_at is None:
            missing.append(f"Check: {check.label}.")
    if not records.checks:
        missing.append("The final checklist.")
    return missing


# Services whose work a full rebuild includes (DOMAIN: "all of the above").
FULL_REBUILD_COVERS = (ServiceType.Scope.LOWERS, ServiceType.Scope.AIR_SPRING, ServiceType.Scope.DAMPER)


def service_history_write(*, work_order: WorkOrder, done_on: datetime.date) -> list[ServiceRecord]:
    """Write the unit's service history for a finished job: each service done, the date, its hours.

    The hours are estimated from the rider's usual week since the previous service of the same
    type (or since the unit was bought or first came in).
    """
    unit = work_order.unit
    done = [line.service_type for line in work_order.services.select_related("service_type")]
    covered: list[tuple[ServiceType, ServiceType | None]] = [(service, None) for service in done]
    if any(service.scope == ServiceType.Scope.FULL for service in done):
        full = next(service for service in done if service.scope == ServiceType.Scope.FULL)
        have = {service.scope for service in done}
        for service in ServiceType.objects.filter(scope__in=FULL_REBUILD_COVERS, active=True):
            if service.scope not in have:
                if service.scope == ServiceType.Scope.AIR_SPRING and not unit.unit_model.is_air:
                    continue
                if service.scope == ServiceType.Scope.LOWERS and unit.unit_model.kind != UnitModel.Kind.FORK:
                    continue  # a rear shock has no lower legs
                covered.append((service, full))
    records = []
    for service, part_of in covered:
        previous = (
            ServiceRecord.objects.filter(unit=unit, service_type=service, done_on__lt=done_on)
            .order_by("-done_on")
            .values_list("done_on", flat=True)
            .first()
        )
        since = previous or unit.purchased_on or timezone.localdate(unit.created_at)
        weeks = Decimal(max((done_on - since).days, 0)) / Decimal(7)
        hours = round(weeks * unit.hours_per_week, 1)
        record, _ = ServiceRecord.objects.update_or_create(
            work_order=work_order,
            service_type=service,
            defaults={"unit": unit, "done_on": done_on, "unit_hours": hours, "as_part_of": part_of},
        )
        records.append(record)
    return records


# --- Price --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class PriceLine:
    description: str
    quantity: Decimal
    unit_price: Decimal
    amount: Decimal


@dataclass(frozen=True)
class JobPrice:
    lines: list[PriceLine]
    total: Total


def job_price(work_order: WorkOrder, records: JobRecords | None = None) -> JobPrice:
    """Services at their quoted price, parts at price, extra labour at the shop's rate, tax once."""
    records = records or JobRecords.read(work_order)
    lines = [
        PriceLine(line.service_type.name, Decimal(1), line.price, line.price) for line in records.services
    ]
    for used in records.parts:
        if used.voided_at is not None:
            continue
        lines.append(
            PriceLine(
                f"{used.part.name} ({used.part.part_number})",
                used.quantity,
                used.unit_price,
                round_money(used.quantity * used.unit_price),
            )
        )
    for record in records.oil:
        if record.voided_at is not None or record.oil_part_id is None or record.filled_ml is None:
            continue
        quantity = Decimal(str(round(record.filled_ml, 1)))
        price = record.oil_part.price
        lines.append(
            PriceLine(
                f"{record.oil_part.name}, {record.chamber.name} (mL)",
                quantity,
                price,
                round_money(quantity * price),
            )
        )
    extra = sum(
        entry.minutes for entry in records.labour if entry.voided_at is None and entry.charged_as_extra
    )
    if extra:
        rate = settings.SHOP_LABOUR_RATE
        hours = Decimal(extra) / Decimal(60)
        lines.append(PriceLine(f"Extra labour, {extra} min", hours, rate, round_money(hours * rate)))
    return JobPrice(
        lines=lines, total=total_with_tax((line.amount for line in lines), tax_rate=work_order.tax_rate)
    )
