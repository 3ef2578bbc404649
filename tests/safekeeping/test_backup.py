"""backup_shop / restore_shop: a copy restored into an empty database holds every row, history included."""

from __future__ import annotations

import sqlite3
import zipfile
from io import BytesIO

import pytest
from django.core.management import call_command
from django.db import connection
from django.urls import reverse

from tests.conftest import finish_bench_work


def _rows_live() -> dict[str, list[tuple]]:
    tables = connection.introspection.table_names()
    out = {}
    with connection.cursor() as cursor:
        for table in tables:
            cursor.execute(f'SELECT * FROM "{table}" ORDER BY 1')
            out[table] = [tuple(row) for row in cursor.fetchall()]
    return out


@pytest.mark.django_db(transaction=True)
def test_a_sqlite_backup_restores_every_row_into_an_empty_database(
    tmp_path, work_order, technician, oil_part
) -> None:
    if connection.vendor != "sqlite":
        pytest.skip("the SQLite copy; PostgreSQL uses pg_dump")
    finish_bench_work(work_order, technician, oil_part)
    before = _rows_live()
    assert before["workshop_historicaloilrecord"], "the bench record left no history to compare"
    copy = tmp_path / "shop.sqlite3"
    call_command("backup_shop", str(copy))
    scratch = tmp_path / "empty.sqlite3"
    call_command("restore_shop", str(copy), database_url=f"sqlite:///{scratch}", yes=True)
    restored = sqlite3.connect(scratch)
    # The live side read raw too: Django's connection converts types, so read it through a plain
    # connection holding an in-memory page copy of the live database.
    raw = sqlite3.connect(":memory:")
    connection.connection.backup(raw)
    for table, rows in before.items():
        got = [tuple(r) for r in restored.execute(f'SELECT * FROM "{table}" ORDER BY 1').fetchall()]
        # Both sides read raw, as SQLite stores them (no Django converters).
        live = [tuple(r) for r in raw.execute(f'SELECT * FROM "{table}" ORDER BY 1')]
        assert len(live) == len(rows), table
        assert got == live, table
    restored.close()
    raw.close()


@pytest.mark.django_db(transaction=True)  # the online backup does not finish inside a test's transaction
def test_a_backup_that_fails_halfway_leaves_the_last_copy_whole(tmp_path, work_order, monkeypatch) -> None:
    if connection.vendor != "sqlite":
        pytest.skip("fails the SQLite copy halfway; the pg_dump copy writes beside its path the same way")
    from shopdesk.safekeeping import backup

    copy = tmp_path / "shop.backup"
    call_command("backup_shop", str(copy))
    last_night = copy.read_bytes()
    assert backup.kind_of(copy) == "sqlite"

    connect = sqlite3.connect

    def broken_connect(path, *args, **kwargs):
        destination = connect(path, *args, **kwargs)
        destination.execute("CREATE TABLE half (x)")  # something written, then the disk fills
        destination.commit()
        destination.close()
        raise sqlite3.OperationalError("database or disk is full")

    monkeypatch.setattr(backup.sqlite3, "connect", broken_connect)
    with pytest.raises(sqlite3.OperationalError):
        backup.backup(copy)
    assert copy.read_bytes() == last_night
    assert sorted(path.name for path in tmp_path.iterdir()) == ["shop.backup"]  # no half copy left


@pytest.mark.django_db(transaction=True)
def test_restoring_a_copy_puts_back_what_was_lost(tmp_path, work_order, technician, oil_part) -> None:
    from shopdesk.workshop.models import OilRecord, WorkOrder

    finish_bench_work(work_order, technician, oil_part)
    before = _rows_live()
    copy = tmp_path / "shop.backup"
    call_command("backup_shop", str(copy), kind="xml")
    OilRecord.history.all().delete()
    OilRecord.objects.all().delete()
    WorkOrder.objects.filter(pk=work_order.pk).update(complaint="changed after the backup")
    call_command("restore_shop", str(copy), yes=True)
    after = _rows_live()
    for table in (
        "customers_customer",
        "customers_unit",
        "workshop_workorder",
        "workshop_oilrecord",
        "workshop_historicaloilrecord",
        "stock_stockmovement",
    ):
        assert after[table] == before[table], table


@pytest.mark.django_db
def test_the_owner_downloads_everything_as_csv_files(client, role_users, work_order) -> None:
    url = reverse("safekeeping:export")
    for role in ("front_desk", "technician"):
        client.force_login(role_users[role])
        assert client.get(url).status_code == 403, role
    client.force_login(role_users["owner"])
    assert f'href="{url}"' in client.get(reverse("owner:dashboard")).content.decode()  # found from there
    response = client.get(url)
    assert response.status_code == 200
    archive = zipfile.ZipFile(BytesIO(response.content))
    names = set(archive.namelist())
    assert {
        "customers_customer.csv",
        "customers_unit.csv",
        "workshop_workorder.csv",
        "workshop_oilrecord.csv",
        "workshop_partused.csv",
        "stock_part.csv",
    } <= names
    jobs = archive.read("workshop_workorder.csv").decode().splitlines()
    assert len(jobs) == 2 and work_order.number in jobs[1]


def _require_pg_tools() -> None:
    import os
    import shutil

    missing = [tool for tool in ("pg_dump", "pg_restore") if shutil.which(tool) is None]
    if missing:
        message = f"{' and '.join(missing)} not on PATH (install PostgreSQL's client tools)"
        if os.environ.get("CI") == "true":
            pytest.fail(message)
        pytest.skip(message)


@pytest.mark.django_db(transaction=True)
def test_a_pg_dump_backup_restores_every_row_into_an_empty_database(
    tmp_path, work_order, technician, oil_part
) -> None:
    import psycopg

    from tests.conftest import skip_unless_postgresql

    skip_unless_postgresql()
    _require_pg_tools()
    finish_bench_work(work_order, technician, oil_part)
    before = _rows_live()
    assert before["workshop_historicaloilrecord"], "the bench record left no history to compare"
    copy = tmp_path / "shop.dump"
    call_command("backup_shop", str(copy))
    assert copy.read_bytes().startswith(b"PGDMP")

    live = connection.settings_dict
    scratch = f"{live['NAME']}_restore"  # beside this run's own test database
    server = {
        "host": live["HOST"] or "127.0.0.1",
        "port": live["PORT"] or 5432,
        "user": live["USER"] or "postgres",
        "password": live["PASSWORD"] or None,
    }
    with psycopg.connect(dbname="postgres", autocommit=True, **server) as admin:
        admin.execute(f'DROP DATABASE IF EXISTS "{scratch}"')
        admin.execute(f'CREATE DATABASE "{scratch}"')
    try:
        url = f"postgres://{server['user']}@{server['host']}:{server['port']}/{scratch}"
        call_command("restore_shop", str(copy), database_url=url, yes=True)
        with psycopg.connect(dbname=scratch, **server) as restored:
            for table, rows in before.items():
                got = [tuple(r) for r in restored.execute(f'SELECT * FROM "{table}" ORDER BY 1').fetchall()]
                assert got == rows, table
            tables = {
                r[0]
                for r in restored.execute(
                    "SELECT tablename FROM pg_tables WHERE schemaname = 'public'"
                ).fetchall()
            }
        assert tables == set(before)
    finally:
        with psycopg.connect(dbname="postgres", autocommit=True, **server) as admin:
            admin.execute(f'DROP DATABASE IF EXISTS "{scratch}"')
