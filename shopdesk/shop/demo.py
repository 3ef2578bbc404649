"""The demo shop: Hollow Pine Suspension Works, loaded from ``fixtures/demo_shop.json``.

The document is our own structure, not a Django dump, and it is loaded through the shop's real
rules: models are cleaned before they are saved, work orders are checked in with
``work_order_check_in`` and moved along the flow with ``work_order_move`` by the demo user who
holds the permission, and the bench's records are written with the bench's services, so the demo
holds nothing the shop itself could not have made. Dates in the document are day offsets from
the day of loading, so that the demo's jobs always have realistic ages.

The whole load is one transaction: a load that fails leaves nothing behind, so "the first spec
sheet exists" is a sound sign that the demo shop is loaded.
"""

from __future__ import annotations

import datetime
import itertools
import json
from collections import deque
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from decimal import Decimal
from pathlib import Path
from typing import Any, TypeVar

from django.conf import settings
from django.contrib.auth.models import Group, User
from django.contrib.auth.password_validation import validate_password
from django.db import models, transaction
from django.utils import timezone

from shopdesk.accounts import roles
from shopdesk.customers.models import Customer, Unit
from shopdesk.owner.services import ReminderRefused, due_refresh_all, reminder_send
from shopdesk.specs.models import Chamber, Oil, ServiceInterval, ServiceType, TorqueValue, UnitModel
from shopdesk.workshop import flow
from shopdesk.workshop.models import FinalCheck, Payment, SpringRecord, Status, WorkOrder
from shopdesk.workshop.services import (
    final_check_set,
    labour_add,
    oil_record_save,
    required_chambers,
    spring_record_save,
    work_order_check_in,
    work_order_move,
    work_order_take,
)
from shopdesk.workshop.services.payments import payment_state, payment_take

ModelT = TypeVar("ModelT", bound=models.Model)
ValueT = TypeVar("ValueT")

DEMO_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_shop.json"

# What a bench usually drains from a chamber, as a share of its spec volume, when the document
# gives no measurement: a lower leg loses some oil to its wipers between services.
USUAL_DRAIN_SHARE = {Chamber.Kind.LOWERS: 0.85}
USUAL_DRAIN_SHARE_OTHERS = 0.97

UNIT_SETUP_FIELDS = ("positive_pressure_kpa", "negative_pressure_kpa", "spacer_count", "coil_rate_n_mm")


class DemoDocumentError(ValueError):
    """The demo document refers to something it does not define, or breaks the shop's rules."""


@dataclass(frozen=True)
class DemoUser:
    username: str
    password: str
    role: str


@dataclass
class DemoResult:
    loaded: bool  # False when the demo shop was already there
    users: list[DemoUser]
    counts: dict[str, int] = field(default_factory=dict)


def demo_document_read(path: Path = DEMO_FILE) -> dict[str, Any]:
    with path.open(encoding="utf-8") as file:
        document: dict[str, Any] = json.load(file)
    return document


def demo_is_loaded(document: Mapping[str, Any]) -> bool:
    first = document["unit_models"][0]
    return UnitModel.objects.filter(
        maker=first["maker"], name=first["name"], year_from=first["year_from"]
    ).exists()


def demo_shop_load(
    *, document: Mapping[str, Any] | None = None, now: datetime.datetime | None = None
) -> DemoResult:
    """Load the demo shop unless it is there already; the demo users are made sure of every time."""
    document = document if document is not None else demo_document_read()
    now = now or timezone.now()
    with transaction.atomic():
        users = demo_users_ensure(document["users"])
        demo_users = [
            DemoUser(entry["username"], entry["password"], entry["role"]) for entry in document["users"]
        ]
        if demo_is_loaded(document):
            return DemoResult(loaded=False, users=demo_users)
        oils = _oils_load(document["oils"])
        service_types = _service_types_load(document["service_types"])
        unit_models = _unit_models_load(document["unit_models"], oils=oils, service_types=service_types)
        _stock_load(document.get("stock", []), oils=oils, by=users[roles.OWNER])
        units = _customers_load(document["customers"], unit_models=unit_models, now=now)
        work_orders = _work_orders_load(
            document["work_orders"], units=units, service_types=service_types, users=users, now=now
        )
        # Units the shop has never serviced count from their purchase: the whole due table, once.
        due_refresh_all()
        reminders = _reminders_load(
            document.get("reminders", []), units=units, service_types=service_types, now=now
        )
    counts = {
        "makers": len({model.maker for model in unit_models.values()}),
        "unit models": len(unit_models),
        "customers": len(document["customers"]),
        "units": len(units),
        "work orders": len(work_orders),
        "reminders sent": len(reminders),
    }
    return DemoResult(loaded=True, users=demo_users, counts=counts)


# --- Stock ----------------------------------------------------------------------------------


def _stock_load(entries: Sequence[Mapping[str, Any]], *, oils: Mapping[str, Oil], by: User) -> dict[str, Any]:
    """The shop's parts and oils, each received into stock through the ledger."""
    from decimal import Decimal

    from shopdesk.stock.models import Part
    from shopdesk.stock.services import stock_receive

    parts = {}
    for entry in entries:
        part = Part(
            part_number=entry["part_number"],
            name=entry["name"],
            kind=entry["kind"],
            unit_of_measure=entry["unit_of_measure"],
            oil=_named(oils, entry["oil"], "oil") if entry.get("oil") else None,
            reorder_level=Decimal(entry["reorder_level"]),
            cost=Decimal(entry["cost"]),
            price=Decimal(entry["price"]),
        )
        part.full_clean()
        part.save()
        for receipt in entry.get("received", []):
            stock_receive(
                part=part, quantity=Decimal(receipt["quantity"]), by=by, lot_code=receipt.get("lot_code", "")
            )
        parts[part.part_number] = part
    return parts


# --- Users ------------------------------------------------------------------------------------


def demo_users_ensure(entries: Sequence[Mapping[str, Any]]) -> dict[str, User]:
    """The demo users, made if missing and put in their role's group.

    An existing user keeps the password it has: the command never resets a password someone
    changed on purpose.
    """
    role_names = {entry["role"] for entry in entries}
    if Group.objects.filter(name__in=role_names).count() != len(role_names):
        # The groups come from a data migration; a flushed database (a transactional test) lacks them.
        from django.apps import apps

        roles.sync_roles(apps)
    users: dict[str, User] = {}
    for entry in entries:
        user = User.objects.filter(username=entry["username"]).first()
        if user is None:
            user = User(
                username=entry["username"],
                first_name=entry["first_name"],
                last_name=entry["last_name"],
                email=entry["email"],
                is_staff=entry.get("is_staff", False),
            )
            validate_password(entry["password"], user)
            user.set_password(entry["password"])
            user.full_clean()
            user.save()
        user.groups.add(Group.objects.get(name=entry["role"]))
        users[entry["role"]] = user
    return users


# --- Spec sheets ------------------------------------------------------------------------------


def _oils_load(entries: Sequence[Mapping[str, Any]]) -> dict[str, Oil]:
    oils: dict[str, Oil] = {}
    for entry in entries:
        # An oil the shop already stocks under the same name is used as it is.
        oil = Oil.objects.filter(name=entry["name"]).first() or _saved(Oil(**entry))
        oils[oil.name] = oil
    return oils


def _service_types_load(entries: Sequence[Mapping[str, Any]]) -> dict[str, ServiceType]:
    service_types: dict[str, ServiceType] = {}
    for entry in entries:
        values = {**entry, "price": Decimal(entry["price"])}
        service_type = ServiceType.objects.filter(name=entry["name"]).first() or _saved(ServiceType(**values))
        service_types[service_type.name] = service_type
    return service_types


def _unit_models_load(
    entries: Sequence[Mapping[str, Any]], *, oils: Mapping[str, Oil], service_types: Mapping[str, ServiceType]
) -> dict[str, UnitModel]:
    unit_models: dict[str, UnitModel] = {}
    for entry in entries:
        values = {
            name: value
            for name, value in entry.items()
            if name not in {"ref", "chambers", "torque_values", "intervals"}
        }
        unit_model = _saved(UnitModel(**values))
        for order, chamber in enumerate(entry["chambers"]):
            _saved(
                Chamber(
                    unit_model=unit_model,
                    **{**chamber, "oil": _named(oils, chamber["oil"], "oil")},
                    display_order=order,
                )
            )
        for order, torque in enumerate(entry["torque_values"]):
            _saved(TorqueValue(unit_model=unit_model, **torque, display_order=order))
        for interval in entry["intervals"]:
            _saved(
                ServiceInterval(
                    unit_model=unit_model,
                    service_type=_named(service_types, interval["service_type"], "service type"),
                    interval_hours=interval["interval_hours"],
                    interval_months=interval["interval_months"],
                )
            )
        unit_models[entry["ref"]] = unit_model
    return unit_models


# --- Customers and units ----------------------------------------------------------------------


def _customers_load(
    entries: Sequence[Mapping[str, Any]], *, unit_models: Mapping[str, UnitModel], now: datetime.datetime
) -> dict[str, Unit]:
    today = timezone.localdate(now)
    units: dict[str, Unit] = {}
    for entry in entries:
        customer = Customer(
            name=entry["name"],
            phone=entry["phone"],
            email=entry["email"],
            notes=entry["notes"],
            reminder_consent=entry["reminder_consent"],
            # As customer_save does: a consent given is stamped with its moment.
            consent_changed_at=now if entry["reminder_consent"] else None,
        )
        _saved(customer)
        for unit_entry in entry["units"]:
            serial_number = unit_entry["serial_number"]
            if serial_number in units:
                raise DemoDocumentError(f"The serial number {serial_number} is used twice.")
            days_ago = unit_entry.get("purchased_days_ago")
            unit = Unit(
                customer=customer,
                unit_model=_named(unit_models, unit_entry["unit_model"], "unit model"),
                serial_number=serial_number,
                model_year=unit_entry["model_year"],
                travel_mm=unit_entry["travel_mm"],
                hours_per_week=Decimal(unit_entry["hours_per_week"]),
                purchased_on=today - datetime.timedelta(days=days_ago) if days_ago is not None else None,
                notes=unit_entry.get("notes", ""),
                **unit_entry.get("setup", {}),
            )
            units[serial_number] = _saved(unit)
    return units


# --- Work orders ------------------------------------------------------------------------------


def flow_route(target: str) -> list[Status]:
    """The shortest run of statuses from checked in to ``target`` that the flow allows."""
    start = Status.CHECKED_IN
    previous: dict[Status, Status | None] = {start: None}
    queue = deque([start])
    while queue:
        status = queue.popleft()
        for move in flow.moves_from(status):
            if move.target not in previous:
                previous[move.target] = status
                queue.append(move.target)
    goal = Status(target)
    if goal not in previous:
        raise DemoDocumentError(f"The flow cannot reach “{goal.label}”.")
    route: list[Status] = []
    step: Status | None = goal
    while step is not None and step != start:
        route.append(step)
        step = previous[step]
    return route[::-1]


def _work_orders_load(
    entries: Sequence[Mapping[str, Any]],
    *,
    units: Mapping[str, Unit],
    service_types: Mapping[str, ServiceType],
    users: Mapping[str, User],
    now: datetime.datetime,
) -> list[WorkOrder]:
    # Check the jobs in oldest first, so that their numbers run in the order they came in.
    timed = sorted(
        ((_checked_in_at(entry, index, now), index, entry) for index, entry in enumerate(entries)),
        key=lambda item: (item[0], item[1]),
    )
    today = timezone.localdate(now)
    work_orders = []
    for checked_in_at, _, entry in timed:
        unit = _named(units, entry["unit"], "unit")
        _entered_by(unit, checked_in_at)
        promised = entry.get("promised_days_from_today")
        work_order = work_order_check_in(
            unit=unit,
            by=users[roles.FRONT_DESK],
            service_types=[_named(service_types, name, "service type") for name in entry["services"]],
            complaint=entry["complaint"],
            came_with=entry.get("came_with", ""),
            promised_on=today + datetime.timedelta(days=promised) if promised is not None else None,
            arrival=entry.get("arrival", {}),
            now=checked_in_at,
        )
        route = (
            [Status(status) for status in entry["route"]] if "route" in entry else flow_route(entry["status"])
        )
        if (route[-1] if route else Status.CHECKED_IN) != entry["status"]:
            raise DemoDocumentError(
                f"The route of the job for {entry['unit']} does not end at {entry['status']}."
            )
        _work_order_walk(work_order, route=route, entry=entry, users=users, now=now)
        work_orders.append(work_order)
    return work_orders


def _entered_by(unit: Unit, at: datetime.datetime) -> None:
    """Date the unit and its customer back to their first job: the shop typed them in at the desk then.

    The unit's service history counts riding hours from it when no purchase date is known.
    """
    if unit.created_at > at:
        Unit.objects.filter(pk=unit.pk).update(created_at=at)
        unit.created_at = at
    Customer.objects.filter(pk=unit.customer_id, created_at__gt=at).update(created_at=at)


def _checked_in_at(entry: Mapping[str, Any], index: int, now: datetime.datetime) -> datetime.datetime:
    # Mornings at the desk, a few minutes apart, never later than a while ago.
    minutes = 9 * 60 + (index * 23) % 240
    at = _on_day(now, days_ago=entry["checked_in_days_ago"], minutes=minutes)
    return min(at, now - datetime.timedelta(minutes=60 + index))


def _on_day(now: datetime.datetime, *, days_ago: int, minutes: int) -> datetime.datetime:
    return _on_day_of(timezone.localdate(now) - datetime.timedelta(days=days_ago), minutes=minutes)


def _on_day_of(day: datetime.date, *, minutes: int) -> datetime.datetime:
    naive = datetime.datetime.combine(day, datetime.time()) + datetime.timedelta(minutes=minutes)
    return timezone.make_aware(naive)


def _work_order_walk(
    work_order: WorkOrder,
    *,
    route: Sequence[Status],
    entry: Mapping[str, Any],
    users: Mapping[str, User],
    now: datetime.datetime,
) -> None:
    """Move the job along ``route``, spread over its days, doing the bench's work on the way."""
    if not route:
        return
    start = work_order.checked_in_at
    last = _on_day(now, days_ago=entry.get("last_move_days_ago", 0), minutes=16 * 60 + 30)
    last = min(last, now - datetime.timedelta(minutes=5))
    if last <= start:
        last = start + (now - start) / 2
    # Two moments per move: the bench's work half-way, then the move itself.
    moments = _move_times(start, last, 2 * len(route))
    notes: Mapping[str, str] = entry.get("move_notes", {})
    bench_notes: Mapping[str, Any] = entry.get("bench", {})
    bench_work_done = False
    for target, halfway, at in zip(route, moments[0::2], moments[1::2], strict=True):
        if target == Status.FINAL_CHECK and not bench_work_done:
            bench_work_done = True
            _bench_work_record(work_order, bench=bench_notes, users=users, at=halfway)
        if target == Status.READY_FOR_PICKUP:
            _final_checks_tick(work_order, by=users[roles.TECHNICIAN], at=halfway)
        if target == Status.COLLECTED:
            # Paid at the counter as it went back to the customer.
            owed = payment_state(work_order).owed
            if owed:
                payment_take(
                    work_order=work_order,
                    amount=owed,
                    method=entry.get("paid_by", Payment.Method.CARD),
                    by=users[roles.FRONT_DESK],
                    now=at - datetime.timedelta(minutes=1),
                )
        note = notes.get(target, "")
        if target == Status.ON_THE_BENCH and work_order.assigned_to_id is None:
            # The technician takes the job: it is assigned to them and, from checked in, put on the bench.
            work_order_take(work_order=work_order, by=users[roles.TECHNICIAN], now=at)
        if work_order.status != target:
            work_order_move(
                work_order=work_order, target=target, by=_mover(target, work_order, users), note=note, now=at
            )


# The bench's working day, on which the demo's moves fall: 09:00 to 17:00.
WORKDAY_START_MINUTES = 9 * 60
WORKDAY_MINUTES = 8 * 60


def _move_times(start: datetime.datetime, last: datetime.datetime, count: int) -> list[datetime.datetime]:
    """``count`` moments after ``start``, the last at ``last``, spread over the working hours between."""
    first_day = timezone.localdate(start)

    def to_work_minutes(at: datetime.datetime) -> int:
        local = timezone.localtime(at)
        minute = local.hour * 60 + local.minute - WORKDAY_START_MINUTES
        return (local.date() - first_day).days * WORKDAY_MINUTES + min(max(minute, 0), WORKDAY_MINUTES - 1)

    def from_work_minutes(value: float) -> datetime.datetime:
        day, minute = divmod(int(value), WORKDAY_MINUTES)
        return _on_day_of(first_day + datetime.timedelta(days=day), minutes=WORKDAY_START_MINUTES + minute)

    begin, end = to_work_minutes(start), to_work_minutes(last)
    times = [from_work_minutes(begin + (end - begin) * number / count) for number in range(1, count)] + [last]
    moments = [start, *times]
    if all(earlier < later for earlier, later in itertools.pairwise(moments)):
        return times
    # Too little of the working day in between (a job checked in this morning): spread evenly instead.
    return [start + (last - start) * number / count for number in range(1, count + 1)]


def _mover(target: Status, work_order: WorkOrder, users: Mapping[str, User]) -> User:
    """The demo user who would make this move: the bench where it may, else the desk, else the owner."""
    move = flow.find_move(work_order.status, target)
    if move is None:
        raise DemoDocumentError(
            f"{work_order.number}: the flow has no move from {work_order.status} to {target}."
        )
    for role in (roles.TECHNICIAN, roles.FRONT_DESK, roles.OWNER):
        user = users[role]
        if any(user.has_perm(permission) for permission in move.permissions):
            return user
    raise DemoDocumentError(f"No demo user may move a job to “{target.label}”.")


def _bench_work_record(
    work_order: WorkOrder, *, bench: Mapping[str, Any], users: Mapping[str, User], at: datetime.datetime
) -> None:
    """What the technician records before the final check: oil out and in, spring, labour."""
    technician = users[roles.TECHNICIAN]
    drained: Mapping[str, float] = bench.get("drained_ml", {})
    conditions: Mapping[str, str] = bench.get("condition", {})
    for chamber in required_chambers(work_order):
        spec = chamber.volume_ml or 0.0
        usual = round(spec * USUAL_DRAIN_SHARE.get(chamber.kind, USUAL_DRAIN_SHARE_OTHERS) * 2) / 2
        oil_record_save(
            work_order=work_order,
            chamber=chamber,
            values={
                "drained_ml": drained.get(chamber.name, usual),
                "condition": conditions.get(chamber.name, "clean"),
                "filled_ml": spec,
                "oil_part": _oil_part_for(chamber),
            },
            by=technician,
            now=at,
        )
    arrival = work_order.arrival
    before = {name: getattr(arrival, name) for name in UNIT_SETUP_FIELDS}
    spacer_volume = work_order.unit.unit_model.spacer_volume_cc
    if work_order.unit.unit_model.is_air:
        before["spacer_volume_cc"] = spacer_volume
    spring_record_save(
        work_order=work_order, stage=SpringRecord.Stage.BEFORE, values=before, by=technician, now=at
    )
    after = {**before, **bench.get("spring_after", {})}
    spring_record_save(
        work_order=work_order, stage=SpringRecord.Stage.AFTER, values=after, by=technician, now=at
    )
    minutes = bench.get("labour_minutes") or sum(line.labour_minutes for line in work_order.services.all())
    labour_add(
        work_order=work_order,
        technician=technician,
        minutes=minutes,
        by=technician,
        charged_as_extra=False,
        note=bench.get("note", ""),
        now=at,
    )


def _oil_part_for(chamber: Any) -> Any:
    """The stock bottle of the chamber's spec oil, so that the fill draws the ledger down."""
    from shopdesk.stock.models import Part

    if chamber.oil_id is None:
        return None
    return Part.objects.filter(kind=Part.Kind.OIL, oil_id=chamber.oil_id).order_by("id").first()


def _final_checks_tick(work_order: WorkOrder, *, by: User, at: datetime.datetime) -> None:
    for check in FinalCheck.objects.filter(work_order=work_order, done_at__isnull=True):
        final_check_set(check=check, done=True, by=by, now=at)


# --- Reminders already sent -----------------------------------------------------------------------


def _reminders_load(
    entries: Sequence[Mapping[str, Any]],
    *,
    units: Mapping[str, Unit],
    service_types: Mapping[str, ServiceType],
    now: datetime.datetime,
) -> list[Any]:
    """Reminders sent some days ago, through ``reminder_send`` with a mail backend that sends nothing."""
    from django.core.mail import get_connection

    from shopdesk.owner.models import DueService

    nowhere = get_connection("django.core.mail.backends.dummy.EmailBackend")
    sent = []
    for entry in entries:
        unit = _named(units, entry["unit"], "unit")
        service = _named(service_types, entry["service"], "service type")
        due = (
            DueService.objects.select_related("unit__customer", "unit__unit_model", "service_type")
            .filter(unit=unit, service_type=service)
            .first()
        )
        if due is None:
            raise DemoDocumentError(
                f"{entry['unit']} is never due a {entry['service']}: no reminder to send."
            )
        try:
            reminder = reminder_send(
                due=due, connection=nowhere, now=now - datetime.timedelta(days=entry["sent_days_ago"])
            )
        except ReminderRefused as refusal:
            raise DemoDocumentError(f"The reminder for {entry['unit']}: {refusal}") from None
        sent.append(reminder)
    return sent


# --- Helpers ----------------------------------------------------------------------------------


def _saved(instance: ModelT) -> ModelT:
    instance.full_clean()
    instance.save()
    return instance


def _named(mapping: Mapping[str, ValueT], name: str, what: str) -> ValueT:
    try:
        return mapping[name]
    except KeyError:
        raise DemoDocumentError(f"The demo document names a {what} it does not define: {name!r}.") from None
