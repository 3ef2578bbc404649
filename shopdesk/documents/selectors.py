"""What each printed document shows: the reads behind the job card and the service report.

A job card must stay one page whatever the job holds, so every text and list that can grow has
an explicit limit here; what passes it is shortened with a visible mark, never cut silently.
"""

from __future__ import annotations

import datetime
from dataclasses import dataclass
from typing import Any

import segno
from django.conf import settings
from django.utils import timezone

from shopdesk.customers.models import Unit
from shopdesk.documents.models import DocumentWording
from shopdesk.specs.models import Chamber, TorqueValue
from shopdesk.workshop import diagnosis, selectors, services
from shopdesk.workshop.models import OilRecord, PartUsed, ServiceRecord, SpringRecord, Status, WorkOrder
from shopdesk.workshop.services.payments import payment_state

CONTINUED = "… (continued on the job page)"

# The job card's limits, chosen so that the fullest card still fits one A4 or Letter page.
COMPLAINT_CHARACTERS = 480
CAME_WITH_CHARACTERS = 120
LINE_CHARACTERS = 60  # a service, chamber, oil or fastener name in a table cell
MAX_SERVICES = 6
MAX_CHAMBERS = 6
MAX_TORQUE_VALUES = 12
MAX_FINAL_CHECKS = 6

# A service report is for a job whose work is done.
REPORT_STATUSES = (Status.READY_FOR_PICKUP, Status.COLLECTED)


class DocumentRefused(Exception):
    """A document that cannot be made for this job yet; the message says why."""


def shorten(text: str, limit: int) -> str:
    """``text`` as it is when it fits ``limit`` characters, else cut at a word and marked as continued."""
    text = " ".join((text or "").split())
    if len(text) <= limit:
        return text
    room = max(limit - len(CONTINUED), 1)
    cut = text[:room]
    if " " in cut[room // 2 :]:
        cut = cut[: cut.rindex(" ")]
    return cut.rstrip(" ,;.") + " " + CONTINUED


@dataclass(frozen=True)
class Shown:
    """The first items of a list that fit, and how many more there are."""

    items: list[Any]
    more: int

    @property
    def more_text(self) -> str:
        return f"… and {self.more} more {CONTINUED.removeprefix('… ')}" if self.more else ""

    @property
    def pairs(self) -> list[tuple[Any, Any]]:
        """The items two to a line, left then right (the last right one None when they are odd):
        one table of two columns costs WeasyPrint less than two tables side by side."""
        return [
            (self.items[i], self.items[i + 1] if i + 1 < len(self.items) else None)
            for i in range(0, len(self.items), 2)
        ]


def first(items: list[Any], limit: int) -> Shown:
    return Shown(items=items[:limit], more=max(len(items) - limit, 0))


def qr_png(address: str) -> str:
    """The job's address as a QR code (segno): a black-and-white PNG as a ``data:`` address.

    A picture, not SVG: WeasyPrint draws an SVG path of ~700 segments through its own SVG code,
    a twentieth of a card's time; a PNG is decoded by Pillow in a fraction of a millisecond.
    ``image-rendering: pixelated`` in the print CSS asks viewers and printers not to smooth it;
    four pixels a module (150 dpi at the card's 25 mm) keep the modules' edges sharp in one that
    smooths anyway, and segno writes it in about a millisecond.
    """
    code = segno.make(address, error="m", micro=False)
    return code.png_data_uri(scale=4, border=2)


@dataclass(frozen=True)
class ChamberLine:
    name: str
    oil: str
    volume_ml: float | None
    level_mm: float | None
    sealed: bool


@dataclass(frozen=True)
class TorqueLine:
    fastener: str
    torque_nm: float
    safety_critical: bool


def job_card_context(work_order: WorkOrder, *, job_address: str) -> dict[str, Any]:
    unit = work_order.unit
    unit_model = unit.unit_model
    chambers = [
        ChamberLine(
            name=shorten(chamber.name, LINE_CHARACTERS),
            oil=shorten(chamber.oil.name, LINE_CHARACTERS) if chamber.oil else "",
            volume_ml=chamber.volume_ml,
            level_mm=chamber.level_mm,
            sealed=chamber.sealed,
        )
        for chamber in Chamber.objects.filter(unit_model=unit_model).select_related("oil")
    ]
    torque_values = [
        TorqueLine(
            fastener=shorten(torque.fastener, LINE_CHARACTERS),
            torque_nm=torque.torque_nm,
            safety_critical=torque.safety_critical,
        )
        for torque in TorqueValue.objects.filter(unit_model=unit_model)
    ]
    requested = [
        shorten(line.service_type.name, LINE_CHARACTERS)
        for line in work_order.services.select_related("service_type")
    ]
    return {
        "work_order": work_order,
        "unit": unit,
        "unit_model": unit_model,
        "arrival": getattr(work_order, "arrival", None),
        "complaint": shorten(work_order.complaint, COMPLAINT_CHARACTERS),
        "came_with": shorten(work_order.came_with, CAME_WITH_CHARACTERS),
        "customer_name": shorten(work_order.customer.name, LINE_CHARACTERS),
        "customer_email": shorten(work_order.customer.email, LINE_CHARACTERS),
        "requested": first(requested, MAX_SERVICES),
        "chambers": first(chambers, MAX_CHAMBERS),
        "torque_values": first(torque_values, MAX_TORQUE_VALUES),
        "has_spec_sheet": bool(chambers or torque_values),
        "final_checks": first(
            [shorten(c.label, 80) for c in work_order.final_checks.all()], MAX_FINAL_CHECKS
        ),
        "job_address": job_address,
        "qr_png": qr_png(job_address),
    }


def checked_in_today(*, today: datetime.date | None = None) -> list[str]:
    """The numbers of every job checked in today (the shop's local day), oldest first."""
    day = today or timezone.localdate()
    start = timezone.make_aware(datetime.datetime.combine(day, datetime.time.min))
    return list(
        WorkOrder.objects.filter(
            checked_in_at__gte=start, checked_in_at__lt=start + datetime.timedelta(days=1)
        )
        .order_by("checked_in_at", "sequence")
        .values_list("number", flat=True)
    )


def batch_candidates(*, limit: int = 200) -> list[WorkOrder]:
    """Open jobs to pick from for a batch, newest first."""
    return list(selectors.open_work_orders().order_by("-checked_in_at")[:limit])


# --- The service report -------------------------------------------------------------------------


def wording(work_order: WorkOrder) -> dict[str, str]:
    """The owner's words for the report, each block filled in; the default where a block is empty."""
    unit_model = work_order.unit.unit_model
    values = {
        "customer": work_order.customer.name,
        "number": work_order.number,
        "shop": settings.SHOP_NAME,
        "unit": f"{unit_model.maker} {unit_model.name}",
    }
    own = {row.block: row.text for row in DocumentWording.objects.all() if row.text.strip()}
    result = {}
    for block in DocumentWording.Block:
        text = own.get(block.value) or DocumentWording.DEFAULTS[block]
        try:
            result[block.value] = text.format(**values)
        except (KeyError, ValueError, IndexError):
            # Saved before the check existed, or edited around it: fall back rather than fail.
            result[block.value] = DocumentWording.DEFAULTS[block].format(**values)
    return result


@dataclass(frozen=True)
class OilFinding:
    chamber: str
    drained_ml: float | None
    filled_ml: float | None
    spec_ml: float | None
    condition: str
    findings: list[str]


def service_report_context(work_order: WorkOrder, *, today: datetime.date | None = None) -> dict[str, Any]:
    if work_order.status not in REPORT_STATUSES:
        raise DocumentRefused(
            f"Job {work_order.number} is {work_order.get_status_display().lower()}: the service report "
            "is made once the job is ready for pickup."
        )
    from shopdesk.workshop.charts import spring_plot  # the job page's own spring curve

    unit: Unit = work_order.unit
    unit_model = unit.unit_model
    oil = []
    for record in OilRecord.objects.filter(work_order=work_order, voided_at__isnull=True).select_related(
        "chamber"
    ):
        oil.append(
            OilFinding(
                chamber=record.chamber.name,
                drained_ml=record.drained_ml,
                filled_ml=record.filled_ml,
                spec_ml=record.chamber.volume_ml,
                condition=record.get_condition_display() if record.condition else "",
                findings=[
                    finding.message
                    for finding in diagnosis.drained_findings(
                        chamber=record.chamber, drained_ml=record.drained_ml, condition=record.condition
                    )
                ],
            )
        )
    springs = {
        record.stage: record
        for record in SpringRecord.objects.filter(work_order=work_order, voided_at__isnull=True)
    }
    stacks = [
        {
            "label": row["label"],
            "before": row["records"]["before"].lines_text(),
            "after": row["records"]["after"].lines_text(),
            "words": row["words"],
        }
        for row in selectors.stack_summaries(work_order)
        if "before" in row["records"] and "after" in row["records"]
    ]
    parts = list(
        PartUsed.objects.filter(work_order=work_order, voided_at__isnull=True).select_related("part", "lot")
    )
    price = services.job_price(work_order)
    return {
        "work_order": work_order,
        "unit": unit,
        "unit_model": unit_model,
        "wording": wording(work_order),
        "requested": [line.service_type.name for line in work_order.services.select_related("service_type")],
        "checks_done": [check.label for check in work_order.final_checks.all() if check.done],
        "oil": oil,
        "spring_before": springs.get(SpringRecord.Stage.BEFORE),
        "spring_after": springs.get(SpringRecord.Stage.AFTER),
        "spring_plot": spring_plot(unit_model, springs),
        "stacks": stacks,
        "parts": parts,
        "price": price,
        "payment": payment_state(work_order, total=price.total.total),
        "due_dates": selectors.unit_due_dates(unit, today=today),
        "done_on": ServiceRecord.objects.filter(work_order=work_order)
        .order_by("-done_on")
        .values_list("done_on", flat=True)
        .first(),
    }
