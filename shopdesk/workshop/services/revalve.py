"""Revalving: saving a valve's shim stack before and after, and the shop's library of stacks."""

from __future__ import annotations

import datetime
from collections.abc import Mapping
from typing import Any

from django.contrib.auth.models import AbstractBaseUser
from django.core.exceptions import ValidationError
from django.db import IntegrityError, transaction
from django.utils import timezone

from shopdesk.specs.models import StackFields, StackPreset, UnitModel, Valve
from shopdesk.workshop.models import ShimStackRecord, WorkOrder
from shopdesk.workshop.services.bench import RecordConflict, _apply, _check_job_open, _event, _locked


def shim_stack_save(
    *,
    work_order: WorkOrder,
    valve: str,
    stage: str,
    values: Mapping[str, Any],
    by: AbstractBaseUser,
    record: ShimStackRecord | None = None,
    version: int | None = None,
    now: datetime.datetime | None = None,
) -> ShimStackRecord:
    """Save a valve's stack as found (before) or as built (after); the timeline keeps the old stack."""
    now = now or timezone.now()
    with transaction.atomic():
        job = WorkOrder.objects.select_for_update().get(pk=work_order.pk)
        _check_job_open(job)
        if record is None:
            existing = ShimStackRecord.objects.filter(
                work_order=job, valve=valve, stage=stage, voided_at__isnull=True
            ).first()
            if existing is not None:
                raise RecordConflict(existing)
            record = ShimStackRecord(work_order=job, valve=valve, stage=stage)
            creating = True
        else:
            record = _locked(record, version)
            creating = False
        before = None if creating else record.lines_text()
        _apply(record, values={**values, "valve": valve}, by=by, now=now, creating=creating)
        where = f"{Valve(valve).label}, {ShimStackRecord.Stage(stage).label.lower()}"
        if creating:
            _event(job, by, f"Shim stack, {where}: recorded {record.lines_text()}.", now)
        else:
            _event(job, by, f"Shim stack, {where}: changed from {before} to {record.lines_text()}.", now)
    return record


def stack_preset_save(
    *,
    unit_model: UnitModel,
    valve: str,
    name: str,
    values: Mapping[str, Any],
    by: AbstractBaseUser,
    notes: str = "",
) -> StackPreset:
    """Keep a stack in the unit model's library under a name; a name already used is refused."""
    name = " ".join(name.split())
    if not name:
        raise ValidationError({"name": "Give the stack a name."})
    preset = StackPreset(
        unit_model=unit_model,
        valve=valve,
        name=name,
        notes=notes,
        created_by=by,
        **{field: values[field] for field in StackFields.STACK_FIELDS},
    )
    preset.full_clean()
    try:
        with transaction.atomic():
            preset.save()
    except IntegrityError:
        raise ValidationError(
            {"name": "The library already has a stack of that name for this valve."}
        ) from None
    return preset
