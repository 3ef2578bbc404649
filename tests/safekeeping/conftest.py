"""A shop with a row in every table, and the comparison of two databases table by table, row by row."""

from __future__ import annotations

import datetime
import os
import shutil
import sqlite3
from collections.abc import Iterator
from decimal import Decimal
from typing import Any
from urllib.parse import quote

import pytest
from django.db import connection
from django.utils import timezone

# Tables a small shop leaves empty, and why; every other table must hold a row, so that comparing
# two databases row by row compares something in each.
EMPTY_IN_A_SMALL_SHOP: dict[str, str] = {}


@pytest.fixture
def whole_shop(work_order, role_users, technician, owner, oil_part, air_fork_model, service_types, client):
    """One job taken all the way to ready for pickup, with every kind of record the shop keeps."""
    from axes.models import AccessAttempt, AccessAttemptExpiration, AccessFailureLog, AccessLog
    from django.contrib.admin.models import CHANGE, LogEntry
    from django.contrib.auth.models import Permission
    from django.contrib.contenttypes.models import ContentType

    from shopdesk.documents.models import DocumentWording, PrintBatch
    from shopdesk.owner.models import DueService, Reminder
    from shopdesk.owner.services import due_refresh, wording_save
    from shopdesk.specs.models import ServiceInterval, StackFields
    from shopdesk.stock.services import stock_adjust
    from shopdesk.workshop import services
    from shopdesk.workshop.models import LabourEntry, Status
    from shopdesk.workshop.services.payments import payment_take, payment_void
    from shopdesk.workshop.services.revalve import shim_stack_save, stack_preset_save
    from tests.conftest import finish_bench_work

    now = timezone.now()
    ServiceInterval.objects.create(
        unit_model=air_fork_model, service_type=service_types[0], interval_hours=40, interval_months=9
    )
    stack = {"clamp_mm": 8.0, "preload_n": 0.0}
    stack_preset_save(
        unit_model=air_fork_model,
        valve="rebound",
        name="Light rider",
        values={
            **dict.fromkeys(StackFields.STACK_FIELDS),
            **stack,
            "shims": [{"od": 20.0, "thickness": 0.1, "count": 2}],
        },
        by=technician,
    )
    services.work_order_move(work_order=work_order, target=Status.ON_THE_BENCH, by=technician)
    services.spring_record_save(
        work_order=work_order,
        stage="before",
        by=technician,
        values={"positive_pressure_kpa": 650.0, "spacer_count": 1},
    )
    for stage, count in (("before", 3), ("after", 2)):
        shim_stack_save(
            work_order=work_order,
            valve="rebound",
            stage=stage,
            by=technician,
            values={**stack, "shims": [{"od": 20.0, "thickness": 0.15, "count": count}]},
        )
    services.part_use(work_order=work_order, part=oil_part, quantity=Decimal("12.5"), by=technician)
    wrong = services.labour_add(work_order=work_order, technician=technician, minutes=500, by=technician)
    services.record_void(record=wrong, reason="Typed 500 for 50", by=technician)
    assert LabourEntry.objects.get(pk=wrong.pk).voided_at is not None
    finish_bench_work(work_order, technician, oil_part)
    services.work_order_move(work_order=work_order, target=Status.FINAL_CHECK, by=technician)
    services.work_order_move(work_order=work_order, target=Status.READY_FOR_PICKUP, by=technician)
    taken = payment_take(
        work_order=work_order, amount=Decimal("20.00"), method="cash", by=role_users["front_desk"]
    )
    payment_void(payment=taken, reason="Counted twice", by=owner)
    payment_take(work_order=work_order, amount=Decimal("20.00"), method="card", by=role_users["front_desk"])
    stock_adjust(part=oil_part, quantity=Decimal("-3"), reason="Spilt on the bench", by=owner)
    due_refresh(unit=work_order.unit)
    due = DueService.objects.filter(unit=work_order.unit).order_by("pk").first()
    Reminder.objects.create(
        unit=work_order.unit,
        service_type=due.service_type,
        due_on=due.next_due_on,
        email=work_order.customer.email,
        state=Reminder.State.SENT,
        claimed_at=now,
        sent_at=now,
        sent_by=owner,
    )
    wording_save(subject="{unit} is due at {shop}", body="Hello {customer}. {unsubscribe_url}")
    DocumentWording.objects.create(block=DocumentWording.Block.NOTE, text="Ride gently for {unit}.")
    PrintBatch.objects.create(
        created_at=now,
        created_by=technician,
        numbers=[work_order.number],
        base_url="http://desk.example.com",
        state=PrintBatch.State.DONE,
        done_count=1,
        file_name="job-cards.pdf",
        pdf=b"%PDF-1.7 not really\x00\xff",
        finished_at=now,
    )
    owner.user_permissions.add(Permission.objects.get(codename="view_dashboard"))
    LogEntry.objects.create(
        user=owner,
        content_type=ContentType.objects.get_for_model(type(air_fork_model)),
        object_id=str(air_fork_model.pk),
        object_repr=str(air_fork_model),
        action_flag=CHANGE,
        change_message='[{"changed": {"fields": ["Travel mm"]}}]',
        action_time=now,
    )
    seen = {"user_agent": "Test browser", "ip_address": "192.0.2.10", "http_accept": "*/*"}
    path = {"path_info": "/accounts/sign-in/"}
    attempt = AccessAttempt.objects.create(
        username="bench", get_data="", post_data="username=bench", failures_since_start=2, **seen, **path
    )
    AccessAttemptExpiration.objects.create(
        access_attempt=attempt, expires_at=now + datetime.timedelta(minutes=15)
    )
    AccessFailureLog.objects.create(username="bench", locked_out=False, **seen, **path)
    AccessLog.objects.create(username="owner", session_hash="0" * 64, **seen, **path)
    client.force_login(owner)  # a session row
    return work_order


# --- Reading two databases the same way -------------------------------------------------------


def _ordered(table: str, columns: int, quote: str = '"') -> str:
    # Every column in the ORDER BY: history tables repeat the first column (the record's id), and
    # rows tied on it would otherwise come back in whatever order each database keeps them.
    order = ", ".join(str(number) for number in range(1, columns + 1))
    return f"SELECT * FROM {quote}{table}{quote} ORDER BY {order}"


def sqlite_rows(db: sqlite3.Connection) -> dict[str, list[tuple]]:
    """Every table's rows as SQLite stores them (no Django converters)."""
    tables = [
        row[0]
        for row in db.execute(
            "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%'"
        )
    ]
    out = {}
    for table in tables:
        columns = len(db.execute(f'PRAGMA table_info("{table}")').fetchall())
        out[table] = [tuple(row) for row in db.execute(_ordered(table, columns))]
    return out


def postgres_rows(db: Any) -> dict[str, list[tuple]]:
    """Every table's rows as psycopg reads them (no Django loaders)."""
    tables = [row[0] for row in db.execute("SELECT tablename FROM pg_tables WHERE schemaname = 'public'")]
    out = {}
    for table in tables:
        columns = db.execute(
            "SELECT count(*) FROM information_schema.columns WHERE table_schema = 'public' AND table_name = %s",
            (table,),
        ).fetchone()[0]
        out[table] = [tuple(row) for row in db.execute(_ordered(table, columns))]
    return out


def _server() -> dict[str, Any]:
    live = connection.settings_dict
    return {
        "host": live["HOST"] or "127.0.0.1",
        "port": live["PORT"] or 5432,
        "user": live["USER"] or "postgres",
        "password": live["PASSWORD"] or None,
    }


def live_rows() -> dict[str, list[tuple]]:
    """The test database's rows, read the way ``rows_of`` reads a restored one."""
    if connection.vendor == "sqlite":
        # The tests' SQLite database is in memory: read a page copy of it through a plain connection.
        connection.ensure_connection()
        raw = sqlite3.connect(":memory:")
        try:
            connection.connection.backup(raw)
            return sqlite_rows(raw)
        finally:
            raw.close()
    import psycopg

    with psycopg.connect(dbname=connection.settings_dict["NAME"], **_server()) as db:
        return postgres_rows(db)


def rows_of(database: str) -> dict[str, list[tuple]]:
    """A restored database's rows: an SQLite file's path, or a PostgreSQL database's name."""
    if connection.vendor == "sqlite" or database.endswith(".sqlite3"):
        db = sqlite3.connect(database)
        try:
            return sqlite_rows(db)
        finally:
            db.close()
    import psycopg

    with psycopg.connect(dbname=database, **_server()) as db:
        return postgres_rows(db)


def _link_tables() -> set[str]:
    """The tables Django makes for a many-to-many field (a user's groups, a group's permissions)."""
    from django.apps import apps

    return {
        field.remote_field.through._meta.db_table
        for model in apps.get_models()
        for field in model._meta.many_to_many
        if field.remote_field.through._meta.auto_created
    }


def assert_same_rows(
    before: dict[str, list[tuple]], after: dict[str, list[tuple]], *, by_dumpdata: bool = False
) -> None:
    """The same tables, each with the same rows; and the comparison compares something in each.

    ``by_dumpdata``: the copy went through dumpdata and loaddata, which keep every row and its id
    but two things of Django's own: when each migration ran (migrate made the target's tables)
    and the ids of the rows that link a user to a group or a group to a permission, which
    dumpdata writes as the list on the user or the group and loaddata numbers anew. Nothing
    points at those ids; the links themselves must be the same."""
    assert sorted(after) == sorted(before)
    empty = sorted(table for table, rows in before.items() if not rows and table not in EMPTY_IN_A_SMALL_SHOP)
    assert not empty, f"tables with no row to compare: {empty}"
    links = _link_tables() if by_dumpdata else set()
    for table, rows in before.items():
        if by_dumpdata and table == "django_migrations":
            assert sorted(row[1:3] for row in after[table]) == sorted(row[1:3] for row in rows)
        elif table in links:
            assert sorted(row[1:] for row in after[table]) == sorted(row[1:] for row in rows), table
        else:
            assert after[table] == rows, table


# --- A scratch PostgreSQL database beside the test database ------------------------------------


def require_pg_tools() -> None:
    missing = [tool for tool in ("pg_dump", "pg_restore") if shutil.which(tool) is None]
    if missing:
        message = f"{' and '.join(missing)} not on PATH (install PostgreSQL's client tools)"
        if os.environ.get("CI") == "true":
            pytest.fail(message)
        pytest.skip(message)


@pytest.fixture
def empty_database(tmp_path) -> Iterator[tuple[str, str]]:
    """An empty database of the test database's kind: (its URL, what ``rows_of`` reads it by).

    On PostgreSQL its name is the test database's own with ``_restore`` added, so that two runs of
    the suite on one server (each with its own test database) never share one."""
    if connection.vendor == "sqlite":
        file = tmp_path / "empty.sqlite3"
        yield f"sqlite:///{file}", str(file)
        return
    import psycopg

    scratch = f"{connection.settings_dict['NAME']}_restore"
    server = _server()
    with psycopg.connect(dbname="postgres", autocommit=True, **server) as admin:
        admin.execute(f'DROP DATABASE IF EXISTS "{scratch}"')
        admin.execute(f'CREATE DATABASE "{scratch}"')
    login = quote(server["user"]) + (f":{quote(server['password'])}" if server["password"] else "")
    try:
        yield f"postgres://{login}@{server['host']}:{server['port']}/{scratch}", scratch
    finally:
        with psycopg.connect(dbname="postgres", autocommit=True, **server) as admin:
            admin.execute(f'DROP DATABASE IF EXISTS "{scratch}" WITH (FORCE)')
