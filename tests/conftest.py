"""Shared fixtures: one user per role, a small spec sheet, a customer with a unit."""

from __future__ import annotations

import os
from decimal import Decimal

import pytest
from django.contrib.auth.models import Group, User
from django.db import connection
from hypothesis import settings as hypothesis_settings

from shopdesk.accounts import roles

# Hypothesis draws new examples on every run; in CI it draws the same ones each time, so that a
# red run is a change in the code, not the luck of the draw. Runs elsewhere keep exploring.
hypothesis_settings.register_profile("ci", derandomize=True, database=None, print_blob=True)
if os.environ.get("CI") == "true":
    hypothesis_settings.load_profile("ci")

PASSWORD = "correct-horse-battery-9"

# Playwright's sync API runs an event loop in the test's thread; the live server and the ORM
# in the same test need Django to allow that.
os.environ.setdefault("DJANGO_ALLOW_ASYNC_UNSAFE", "true")


def _user(username: str, role: str | None, **extra: object) -> User:
    user = User.objects.create_user(
        username=username, password=PASSWORD, first_name=username.capitalize(), **extra
    )
    if role:
        if not Group.objects.filter(name=role).exists():
            # A transactional test flushed the tables that the roles' data migration filled.
            from django.apps import apps

            roles.sync_roles(apps)
        user.groups.add(Group.objects.get(name=role))
    return user


@pytest.fixture
def front_desk(db: None) -> User:
    return _user("desk", roles.FRONT_DESK)


@pytest.fixture
def technician(db: None) -> User:
    return _user("bench", roles.TECHNICIAN)


@pytest.fixture
def owner(db: None) -> User:
    return _user("owner", roles.OWNER, is_staff=True)


@pytest.fixture
def role_users(front_desk: User, technician: User, owner: User) -> dict[str, User]:
    return {"front_desk": front_desk, "technician": technician, "owner": owner}


@pytest.fixture
def oil(db: None):
    from shopdesk.specs.models import Oil

    return Oil.objects.create(
        name="Test 5 wt", viscosity_40c_mm2s=16.0, viscosity_100c_mm2s=4.2, density_15c_kg_m3=865.0
    )


@pytest.fixture
def air_fork_model(db: None, oil):
    from shopdesk.specs.models import Chamber, TorqueValue, UnitModel

    model = UnitModel.objects.create(
        maker="Testmaker",
        name="Ridge 34",
        year_from=2022,
        kind=UnitModel.Kind.FORK,
        spring_kind=UnitModel.SpringKind.AIR,
        damper_kind=UnitModel.DamperKind.IFP_SPRING,
        travel_mm=140,
        stanchion_diameter_mm=34,
        air_piston_diameter_mm=32,
        positive_volume_cc=165,
        negative_volume_cc=90,
        spacer_volume_cc=10,
        max_spacers=4,
        shaft_diameter_mm=10,
        ifp_diameter_mm=20,
        max_pressure_kpa=1100,
    )
    Chamber.objects.create(
        unit_model=model, name="Damper cartridge", kind="damper", sealed=True, oil=oil, volume_ml=95
    )
    Chamber.objects.create(unit_model=model, name="Lower leg, left", kind="lowers", oil=oil, volume_ml=15)
    TorqueValue.objects.create(
        unit_model=model, fastener="Crown pinch bolts", torque_nm=6, safety_critical=True
    )
    return model


@pytest.fixture
def service_types(db: None):
    from shopdesk.specs.models import ServiceType

    return [
        ServiceType.objects.create(
            name="Lower-leg service",
            scope="lowers",
            default_interval_hours=50,
            default_interval_months=12,
            price=Decimal("45.00"),
            labour_minutes=45,
            display_order=1,
        ),
        ServiceType.objects.create(
            name="Damper service",
            scope="damper",
            default_interval_hours=100,
            default_interval_months=24,
            price=Decimal("89.50"),
            labour_minutes=90,
            display_order=2,
        ),
    ]


@pytest.fixture
def customer(db: None):
    from shopdesk.customers.models import Customer

    return Customer.objects.create(name="Ada Marsh", phone="01632 960 412", email="ada@example.com")


@pytest.fixture
def unit(customer, air_fork_model):
    from shopdesk.customers.models import Unit

    return Unit.objects.create(
        customer=customer,
        unit_model=air_fork_model,
        serial_number="RF34-0001",
        model_year=2023,
        travel_mm=140,
    )


@pytest.fixture
def work_order(unit, front_desk, service_types):
    from shopdesk.workshop.services import work_order_check_in

    return work_order_check_in(
        unit=unit, by=front_desk, service_types=service_types, complaint="Knocks on rebound."
    )


def skip_unless_postgresql() -> None:
    """Locking and concurrency tests mean nothing on SQLite, where select_for_update does nothing."""
    if connection.vendor != "postgresql":
        pytest.skip(
            "needs PostgreSQL: runs in the PostgreSQL pass of `make test` "
            "(DATABASE_URL=postgres://…, or a server at 127.0.0.1:5432)"
        )


@pytest.fixture
def oil_part(db: None, oil, owner):
    from shopdesk.stock.models import Part
    from shopdesk.stock.services import stock_receive

    part = Part.objects.create(
        part_number="OIL-5WT",
        name="Test 5 wt oil",
        kind=Part.Kind.OIL,
        unit_of_measure=Part.UnitOfMeasure.ML,
        oil=oil,
        reorder_level=Decimal("500"),
        cost=Decimal("0.0100"),
        price=Decimal("0.0300"),
    )
    stock_receive(part=part, quantity=Decimal("2000"), by=owner, lot_code="L24-117")
    return part


def finish_bench_work(work_order, technician, oil_part) -> None:
    """Record everything a job needs before it may be ready for pickup (used by flow tests)."""
    from shopdesk.workshop import services
    from shopdesk.workshop.models import Status

    if work_order.status == Status.CHECKED_IN:
        services.work_order_move(work_order=work_order, target=Status.ON_THE_BENCH, by=technician)
    for chamber in services.required_chambers(work_order):
        services.oil_record_save(
            work_order=work_order,
            chamber=chamber,
            by=technician,
            values={
                "drained_ml": chamber.volume_ml,
                "filled_ml": chamber.volume_ml,
                "oil_part": oil_part,
                "condition": "dark",
            },
        )
    if work_order.unit.unit_model.is_air:
        services.spring_record_save(
            work_order=work_order, stage="after", by=technician, values={"positive_pressure_kpa": 580.0}
        )
    services.labour_add(work_order=work_order, technician=technician, minutes=75, by=technician)
    for check in work_order.final_checks.all():
        services.final_check_set(check=check, done=True, by=technician)


def finished_print_batch(work_order, by, created_at=None):
    """A batch of job cards that has finished printing ``work_order``'s card, its PDF stored
    (the security tests fetch its pages and its file)."""
    from django.utils import timezone

    from shopdesk.documents.models import PrintBatch

    return PrintBatch.objects.create(
        created_at=created_at or timezone.now(),
        created_by=by,
        numbers=[work_order.number],
        base_url="http://testserver/",
        state=PrintBatch.State.DONE,
        done_count=1,
        file_name="job-cards-1.pdf",
        pdf=b"%PDF-1.7 a batch",
    )
