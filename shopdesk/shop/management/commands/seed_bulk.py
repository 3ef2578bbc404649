"""``manage.py seed_bulk --customers N``: a large invented shop for benchmarks.

N customers, 1.5 N units and 4 N work orders over the last three years, written with
``bulk_create`` in batches inside one transaction. That is fast, but it passes by the per-row
rules, so this command fills in by hand what those rules would have written: ``phone_digits``,
each year's ``NumberSequence``, the check-in event, the settings on arrival and the service
history of finished jobs. Foreign keys are set by id, not by instance: at a million rows the
related-object descriptors cost more than the inserts.

The spec sheets, service types and users are the demo shop's; it is loaded first when missing.
"""

from __future__ import annotations

import argparse
import datetime
import random
import time
from collections.abc import Sequence
from dataclasses import dataclass
from decimal import Decimal
from typing import Any

from django.conf import settings
from django.contrib.auth.models import User
from django.core.management.base import BaseCommand, CommandError, CommandParser
from django.db import connection, transaction
from django.db.models import Max, OuterRef, Subquery
from django.db.models.functions import Coalesce
from django.utils import timezone

from shopdesk.accounts import roles
from shopdesk.customers.models import Customer, Unit, phone_digits
from shopdesk.shop.demo import demo_document_read, demo_is_loaded, demo_shop_load, demo_users_ensure
from shopdesk.specs.models import ServiceType, UnitModel
from shopdesk.workshop.models import (
    OPEN_STATUSES,
    ArrivalSettings,
    NumberSequence,
    RequestedService,
    ServiceRecord,
    Status,
    WorkOrder,
    WorkOrderEvent,
)
from shopdesk.workshop.services.bench import FULL_REBUILD_COVERS

# Invented people: ordinary first names with made-up surnames.
FIRST_NAMES = tuple(
    """Ada Alfie Amber Anwen Arlo Beth Bram Cerys Cora Dafydd Delia Eben Edie Elin Ezra Faye Finn Gareth
    Greta Hal Hana Ines Ivo Jago Jess Kit Lena Lowri Milo Nell Noor Olwen Oren Pippa Quin Rafe Rhian Rory
    Sabine Seren Silas Tamsin Teodor Ula Vera Wilf Wren Yara Zeke Nadia Kofi Mei Tariq Anya Lars Marisol
    Piotr Aoife Ravi Hamish""".split()  # noqa: SIM905 - a list literal would take sixty lines
)
LAST_NAMES = tuple(
    """Ashcombe Brackwell Caddow Drewitt Elmsworth Fallowby Gorringe Hazeldine Ibberson Jessop Kettlewell
    Lanyon Mardle Nettleford Oakenfold Pendry Quarmby Rushbrook Saltmarsh Tregarth Umpleby Vosper
    Wetherden Yeadon Abernant Birtle Coldridge Dunnock Everleigh Furnival Gadsby Hollins Ingold Jolliffe
    Kinsella Lathom Moxley Norbury Ormerod Pilling Rainford Scarrow Thackley Upshall Varley Whitlock
    Yardley Amberley Blenkin Crossthwaite Dimmock Etheridge""".split()  # noqa: SIM905
)
COMPLAINTS = (
    "Due its yearly service.",
    "Knocks when it tops out.",
    "Feels sticky over small bumps.",
    "Oil on the stanchions after every ride.",
    "Loses air between rides.",
    "Makes a slurping noise.",
    "Rebound feels too fast even fully closed.",
    "Harsh on the rocky sections.",
    "Creaks under braking.",
    "Not using all of its travel.",
    "Bought second hand; no idea when it was last serviced.",
    "Clicks on compression and the lockout does nothing.",
)
CAME_WITH = ("", "", "", "", "shock pump", "spare volume spacer", "front wheel", "frame mounting hardware")
HOURS_PER_WEEK = tuple(Decimal(hours) for hours in ("1.0", "2.0", "2.5", "3.0", "4.0", "5.0", "6.0", "8.0"))
EMAIL_DOMAINS = ("example.com", "example.org", "example.net")

HISTORY_DAYS = 3 * 365
OPENS_AT_MINUTES = 9 * 60
OPEN_MINUTES = 8 * 60 + 30
OPEN_SHARE = 0.03  # the newest jobs, spread over the open statuses
CANCELLED_SHARE = 0.02
OPEN_WEIGHTS = {
    Status.CHECKED_IN: 30,
    Status.WAITING_FOR_PARTS: 15,
    Status.ON_THE_BENCH: 25,
    Status.FINAL_CHECK: 10,
    Status.READY_FOR_PICKUP: 20,
}
# service_history_write runs when a job becomes ready for pickup.
FINISHED_STATUSES = (Status.READY_FOR_PICKUP, Status.COLLECTED)
SCOPES_BY_KIND = {
    UnitModel.Kind.FORK: (ServiceType.Scope.LOWERS, ServiceType.Scope.AIR_SPRING, ServiceType.Scope.DAMPER),
    UnitModel.Kind.REAR_SHOCK: (ServiceType.Scope.AIR_SPRING, ServiceType.Scope.DAMPER),
}


def positive_int(raw: str) -> int:
    """An argparse type: a whole number of at least 1, with the reason when it is not."""
    try:
        value = int(raw)
    except ValueError:
        value = 0
    if value < 1:
        raise argparse.ArgumentTypeError(f"must be a positive whole number, not {raw!r}")
    return value


class Command(BaseCommand):
    help = (
        "Make a large invented shop for benchmarks: N customers, 1.5 N units and 4 N work orders, "
        "written in bulk in one transaction. Loads the demo shop first when it is missing."
    )

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("--customers", type=positive_int, required=True, help="How many customers.")
        parser.add_argument(
            "--seed", type=int, default=2026, help="Random seed: the same seed, the same shop."
        )
        parser.add_argument(
            "--no-history",
            action="store_true",
            help="Skip the service history of finished jobs (a third of the rows and of the time).",
        )
        parser.add_argument(
            "--no-due-table",
            action="store_true",
            help="Leave the owner's due table empty (a benchmark that times its rebuild itself).",
        )
        parser.add_argument(
            "--batch-size", type=positive_int, default=2000, help="Rows per INSERT batch (default 2000)."
        )

    def handle(self, *args: Any, **options: Any) -> None:
        customers, batch_size = options["customers"], options["batch_size"]
        for name, value in (("--customers", customers), ("--batch-size", batch_size)):
            if not isinstance(value, int) or value < 1:
                raise CommandError(f"{name} must be a positive whole number, not {value!r}.")
        started = time.perf_counter()
        document = demo_document_read()
        if connection.vendor == "sqlite":
            # A page cache that holds the new tables' indexes (for this connection only): index
            # upkeep on a million rows otherwise goes back to the file for every other row.
            with connection.cursor() as cursor:
                cursor.execute("PRAGMA cache_size = -262144")  # KiB: 256 MiB
        with transaction.atomic():
            if not demo_is_loaded(document):
                self.stdout.write("The demo shop is missing: loading it first for its spec sheets and users.")
                demo_shop_load(document=document)
            users = demo_users_ensure(document["users"])
            shop = BulkShop(rng=random.Random(options["seed"]), batch_size=batch_size, users=users)
            made = shop.make(customers=customers, history=not options["no_history"])
            if not options["no_due_table"]:
                # Bulk rows pass by the services that keep the owner's due table: fill it once.
                from shopdesk.owner.services import due_refresh_all

                made["due dates"] = due_refresh_all()
        elapsed = time.perf_counter() - started
        summary = ", ".join(f"{count:,} {what}" for what, count in made.items())
        self.stdout.write(self.style.SUCCESS(f"Made {summary} in {elapsed:.1f} s."))


@dataclass(frozen=True)
class Job:
    checked_in_at: datetime.datetime
    unit: Unit


class BulkShop:
    """Generates the rows in dependency order and writes each kind in batches."""

    def __init__(self, *, rng: random.Random, batch_size: int, users: dict[str, User]) -> None:
        self.rng = rng
        self.batch_size = batch_size
        self.desk_id = users[roles.FRONT_DESK].pk
        self.bench_id = users[roles.TECHNICIAN].pk
        self.now = timezone.now()  # in UTC
        self.zone = timezone.get_current_timezone()
        self.today = self.now.astimezone(self.zone).date()
        self.unit_models = list(UnitModel.objects.order_by("pk"))
        self.service_types = list(ServiceType.objects.filter(active=True).order_by("display_order", "pk"))
        if not self.unit_models or not self.service_types:
            raise CommandError("No spec sheets or service types: run `manage.py seed_demo` first.")
        self.by_scope = {service.scope: service for service in self.service_types}
        self.offered = {unit_model.pk: self._services_for(unit_model) for unit_model in self.unit_models}
        self.units: dict[int, Unit] = {}

    def make(self, *, customers: int, history: bool = True) -> dict[str, int]:
        customer_rows = self._customers(customers)
        units = self._units(customer_rows)
        work_orders = self._work_orders(self._jobs(units, count=4 * customers))
        services = self._requested_services(work_orders)
        self._arrivals(first_work_order_id=work_orders[0].pk)
        self._events(work_orders, services)
        records = self._service_history(work_orders, services) if history else 0
        self._dates_from_first_job(first_customer_id=customer_rows[0].pk, first_unit_id=units[0].pk)
        return {
            "customers": len(customer_rows),
            "units": len(units),
            "work orders": len(work_orders),
            "requested services": sum(len(lines) for lines in services.values()),
            "service records": records,
        }

    # --- Time -----------------------------------------------------------------------------

    def _local_date(self, at: datetime.datetime) -> datetime.date:
        return at.astimezone(self.zone).date()

    def _during_opening_hours(self, days_ago: int) -> datetime.datetime:
        """A moment of the shop's day (09:00 to 17:30) ``days_ago`` days back, never in the future."""
        day = self.today - datetime.timedelta(days=days_ago)
        minutes = OPENS_AT_MINUTES + self.rng.randint(0, OPEN_MINUTES) + self.rng.random()
        local = datetime.datetime.combine(day, datetime.time(), tzinfo=self.zone) + datetime.timedelta(
            minutes=minutes
        )
        # Kept in UTC: the database adapter then has no time-zone conversion to make per value.
        at = min(local, self.now - datetime.timedelta(minutes=self.rng.uniform(5, 120)))
        return at.astimezone(datetime.UTC)

    # --- Customers and units --------------------------------------------------------------

    def _customers(self, count: int) -> list[Customer]:
        rng = self.rng
        base = Customer.objects.aggregate(last=Max("pk"))["last"] or 0
        rows = []
        for index in range(base + 1, base + 1 + count):
            first, last = rng.choice(FIRST_NAMES), rng.choice(LAST_NAMES)
            reach = rng.random()
            phone = self._phone(index) if reach < 0.85 else ""
            email = f"{first}.{last}.{index}@{rng.choice(EMAIL_DOMAINS)}".lower() if reach > 0.15 else ""
            consent = rng.random() < 0.6
            rows.append(
                Customer(
                    name=f"{first} {last}",
                    phone=phone,
                    phone_digits=phone_digits(phone),  # bulk_create skips save(), which fills it
                    email=email,
                    reminder_consent=consent,
                    consent_changed_at=self.now if consent else None,
                )
            )
        return Customer.objects.bulk_create(rows, batch_size=self.batch_size)

    @staticmethod
    def _phone(index: int) -> str:
        # Numbers reserved for fiction: US 555-0100 to 0199 in each area code gives 79,900 distinct
        # numbers; one customer in ten has a UK 01632 960xxx number, which repeat after a thousand.
        if index % 10 == 0:
            return f"01632 960 {index // 10 % 1000:03d}"
        return f"({201 + index // 100 % 799}) 555-01{index % 100:02d}"

    def _units(self, customers: Sequence[Customer]) -> list[Unit]:
        rng = self.rng
        base = Unit.objects.aggregate(last=Max("pk"))["last"] or 0
        rows = []
        for position, customer in enumerate(customers):
            # Every other customer has a second unit: 1.5 units per customer.
            for _ in range(2 if position % 2 == 0 else 1):
                unit_model = rng.choice(self.unit_models)
                serial = base + len(rows) + 1  # above every unit there is: unique per model too
                unit = Unit(
                    customer_id=customer.pk,
                    unit_model_id=unit_model.pk,
                    serial_number=f"BULK-{unit_model.pk:02d}-{serial:07d}",
                    model_year=rng.randint(unit_model.year_from, unit_model.year_to or self.today.year),
                    travel_mm=unit_model.travel_mm,
                    hours_per_week=rng.choice(HOURS_PER_WEEK),
                    **self._setup(unit_model),
                )
                unit.unit_model = unit_model  # cached for the rows below, without a query
                rows.append(unit)
        created = Unit.objects.bulk_create(rows, batch_size=self.batch_size)
        self.units = {unit.pk: unit for unit in created}
        return created

    def _setup(self, unit_model: UnitModel) -> dict[str, Any]:
        rng = self.rng
        setup: dict[str, Any] = {
            "rebound_clicks": rng.randint(4, 14),
            "compression_clicks": rng.randint(0, 12),
        }
        if unit_model.is_air and unit_model.max_pressure_kpa:
            setup["positive_pressure_kpa"] = round(unit_model.max_pressure_kpa * rng.uniform(0.4, 0.8))
            setup["spacer_count"] = rng.randint(0, unit_model.max_spacers or 0)
        else:
            fork = unit_model.kind == UnitModel.Kind.FORK
            setup["coil_rate_n_mm"] = round(rng.uniform(7, 11) if fork else rng.uniform(55, 95), 1)
        return setup

    # --- Work orders ----------------------------------------------------------------------

    def _jobs(self, units: Sequence[Unit], *, count: int) -> list[Job]:
        rng = self.rng
        jobs = [
            Job(self._during_opening_hours(rng.randint(0, HISTORY_DAYS)), rng.choice(units))
            for _ in range(count)
        ]
        jobs.sort(key=lambda job: job.checked_in_at)
        return jobs

    def _work_orders(self, jobs: Sequence[Job]) -> list[WorkOrder]:
        rng = self.rng
        last_numbers = dict(NumberSequence.objects.values_list("year", "last_number"))
        open_from = len(jobs) - round(len(jobs) * OPEN_SHARE)
        # One open job per unit at most, counting the ones already in the shop.
        open_units = set(WorkOrder.objects.filter(status__in=OPEN_STATUSES).values_list("unit_id", flat=True))
        statuses, weights = list(OPEN_WEIGHTS), list(OPEN_WEIGHTS.values())
        rows = []
        for position, job in enumerate(jobs):
            checked_in_on = self._local_date(job.checked_in_at)
            year = checked_in_on.year
            sequence = last_numbers.get(year, 0) + 1
            last_numbers[year] = sequence
            days_ago = (self.today - checked_in_on).days
            if position >= open_from and job.unit.pk not in open_units:
                status = rng.choices(statuses, weights)[0]
                open_units.add(job.unit.pk)
                changed_days_ago = rng.randint(0, days_ago)
            else:
                status = Status.CANCELLED if rng.random() < CANCELLED_SHARE else Status.COLLECTED
                changed_days_ago = max(days_ago - rng.randint(2, 14), 0)
            changed = max(self._during_opening_hours(changed_days_ago), job.checked_in_at)
            rows.append(
                WorkOrder(
                    number=f"{year}-{sequence:04d}",
                    year=year,
                    sequence=sequence,
                    customer_id=job.unit.customer_id,
                    unit_id=job.unit.pk,
                    status=status,
                    complaint=rng.choice(COMPLAINTS),
                    came_with=rng.choice(CAME_WITH),
                    promised_on=checked_in_on + datetime.timedelta(days=rng.randint(3, 10)),
                    tax_rate=settings.SHOP_TAX_RATE,
                    checked_in_at=job.checked_in_at,
                    checked_in_by_id=self.desk_id,
                    assigned_to_id=None if status == Status.CHECKED_IN else self.bench_id,
                    status_changed_at=job.checked_in_at if status == Status.CHECKED_IN else changed,
                )
            )
        work_orders = WorkOrder.objects.bulk_create(rows, batch_size=self.batch_size)
        # Later check-ins continue each year's numbers.
        for year, last_number in last_numbers.items():
            NumberSequence.objects.update_or_create(year=year, defaults={"last_number": last_number})
        return work_orders

    def _services_for(self, unit_model: UnitModel) -> list[ServiceType]:
        scopes = [
            scope
            for scope in SCOPES_BY_KIND[UnitModel.Kind(unit_model.kind)]
            if scope != ServiceType.Scope.AIR_SPRING or unit_model.is_air
        ]
        return [self.by_scope[scope] for scope in scopes if scope in self.by_scope]

    def _requested_services(self, work_orders: Sequence[WorkOrder]) -> dict[int, list[ServiceType]]:
        rng = self.rng
        full = self.by_scope.get(ServiceType.Scope.FULL)
        revalve = self.by_scope.get(ServiceType.Scope.REVALVE)
        damper = self.by_scope.get(ServiceType.Scope.DAMPER)
        chosen: dict[int, list[ServiceType]] = {}
        rows = []
        for work_order in work_orders:
            roll = rng.random()
            if full is not None and roll < 0.2:
                services = [full]
            elif revalve is not None and damper is not None and roll < 0.23:
                services = [damper, revalve]
            else:
                offered = self.offered[self.units[work_order.unit_id].unit_model_id]
                services = rng.sample(offered, k=min(len(offered), 1 if rng.random() < 0.6 else 2))
            chosen[work_order.pk] = services
            rows.extend(
                RequestedService(
                    work_order_id=work_order.pk,
                    service_type_id=service.pk,
                    price=service.price,
                    labour_minutes=service.labour_minutes,
                )
                for service in services
            )
        RequestedService.objects.bulk_create(rows, batch_size=self.batch_size)
        return chosen

    def _arrivals(self, *, first_work_order_id: int) -> None:
        """The settings on arrival: each unit's current settings, what the desk would have read off it.

        One INSERT … SELECT, the SELECT compiled by the ORM for the database at hand: the rows need
        nothing from Python, and a model instance per job would cost more than the insert.
        """
        fields = Unit.SETUP_FIELDS
        select = (
            WorkOrder.objects.filter(pk__gte=first_work_order_id)
            .order_by()
            .values_list("pk", *(f"unit__{name}" for name in fields))
        )
        sql, params = select.query.sql_with_params()
        quote = connection.ops.quote_name
        meta = ArrivalSettings._meta
        columns = ", ".join(quote(meta.get_field(name).column) for name in ("work_order", *fields))
        with connection.cursor() as cursor:
            cursor.execute(f"INSERT INTO {quote(meta.db_table)} ({columns}) {sql}", params)

    def _events(self, work_orders: Sequence[WorkOrder], services: dict[int, list[ServiceType]]) -> None:
        WorkOrderEvent.objects.bulk_create(
            (
                WorkOrderEvent(
                    work_order_id=work_order.pk,
                    at=work_order.checked_in_at,
                    by_id=self.desk_id,
                    kind=WorkOrderEvent.Kind.CHECKED_IN,
                    to_status=Status.CHECKED_IN,
                    message="Checked in for "
                    + ", ".join(line.name for line in services[work_order.pk])
                    + ".",
                )
                for work_order in work_orders
            ),
            batch_size=self.batch_size,
        )

    def _service_history(
        self, work_orders: Sequence[WorkOrder], services: dict[int, list[ServiceType]]
    ) -> int:
        """As ``service_history_write`` records a finished job: each service done, a full rebuild
        also covering the services it includes, with the riding hours since the previous one."""
        covered_by_full = [self.by_scope[scope] for scope in FULL_REBUILD_COVERS if scope in self.by_scope]
        first_seen: dict[int, datetime.date] = {}
        for work_order in work_orders:  # in check-in order
            first_seen.setdefault(work_order.unit_id, self._local_date(work_order.checked_in_at))
        previous: dict[tuple[int, int], datetime.date] = {}
        rows = []
        finished = sorted(
            (work_order for work_order in work_orders if work_order.status in FINISHED_STATUSES),
            key=lambda work_order: work_order.status_changed_at,
        )
        for work_order in finished:
            unit = self.units[work_order.unit_id]
            done_on = self._local_date(work_order.status_changed_at)
            done = services[work_order.pk]
            lines: list[tuple[ServiceType, ServiceType | None]] = [(service, None) for service in done]
            full = next((service for service in done if service.scope == ServiceType.Scope.FULL), None)
            if full is not None:
                have = {service.scope for service in done}
                lines.extend(
                    (service, full)
                    for service in covered_by_full
                    if service.scope not in have
                    and (service.scope != ServiceType.Scope.AIR_SPRING or unit.unit_model.is_air)
                )
            for service, part_of in lines:
                since = previous.get((unit.pk, service.pk)) or unit.purchased_on or first_seen[unit.pk]
                previous[(unit.pk, service.pk)] = done_on
                weeks = Decimal(max((done_on - since).days, 0)) / Decimal(7)
                rows.append(
                    ServiceRecord(
                        unit_id=unit.pk,
                        service_type_id=service.pk,
                        done_on=done_on,
                        unit_hours=round(weeks * unit.hours_per_week, 1),
                        work_order_id=work_order.pk,
                        as_part_of_id=part_of.pk if part_of else None,
                    )
                )
        ServiceRecord.objects.bulk_create(rows, batch_size=self.batch_size)
        return len(rows)

    def _dates_from_first_job(self, *, first_customer_id: int, first_unit_id: int) -> None:
        # auto_now_add stamps every bulk row with today; a customer and a unit really came in with
        # their first job. One UPDATE each, with a correlated subquery on the indexed foreign key.
        jobs = WorkOrder.objects.order_by("checked_in_at").values("checked_in_at")
        Customer.objects.filter(pk__gte=first_customer_id).update(
            created_at=Coalesce(Subquery(jobs.filter(customer=OuterRef("pk"))[:1]), "created_at")
        )
        Unit.objects.filter(pk__gte=first_unit_id).update(
            created_at=Coalesce(Subquery(jobs.filter(unit=OuterRef("pk"))[:1]), "created_at")
        )
