"""backup_shop / restore_shop: a copy restored into an empty database holds every row, history included."""

from __future__ import annotations

import sqlite3

import pytest
from django.core.management import call_command
from django.db import connection

from shopdesk.safekeeping import backup
from tests.safekeeping.conftest import assert_same_rows, live_rows, require_pg_tools, rows_of


@pytest.mark.django_db(transaction=True)
def test_a_sqlite_backup_restores_every_row_into_an_empty_database(tmp_path, whole_shop) -> None:
    if connection.vendor != "sqlite":
        pytest.skip("the SQLite copy; PostgreSQL uses pg_dump")
    copy = tmp_path / "shop.sqlite3"
    call_command("backup_shop", str(copy))
    assert backup.kind_of(copy) == "sqlite"
    scratch = tmp_path / "empty.sqlite3"
    call_command("restore_shop", str(copy), database_url=f"sqlite:///{scratch}", yes=True)
    assert_same_rows(live_rows(), rows_of(str(scratch)))


@pytest.mark.django_db(transaction=True)
def test_a_pg_dump_backup_restores_every_row_into_an_empty_database(
    tmp_path, whole_shop, empty_database
) -> None:
    from tests.conftest import skip_unless_postgresql

    skip_unless_postgresql()
    require_pg_tools()
    copy = tmp_path / "shop.dump"
    call_command("backup_shop", str(copy))
    assert backup.kind_of(copy) == "pg_dump"
    url, name = empty_database
    call_command("restore_shop", str(copy), database_url=url, yes=True)
    assert_same_rows(live_rows(), rows_of(name))


@pytest.mark.django_db(transaction=True)
def test_a_dumpdata_backup_restores_every_row_into_an_empty_database(
    tmp_path, whole_shop, empty_database
) -> None:
    """The copy made where neither SQLite's backup nor pg_dump applies (PostgreSQL without its tools)."""
    copy = tmp_path / "shop.backup"
    call_command("backup_shop", str(copy), kind="xml")
    assert backup.kind_of(copy) == "xml"
    url, name = empty_database
    call_command("restore_shop", str(copy), database_url=url, yes=True)
    assert_same_rows(live_rows(), rows_of(name), by_dumpdata=True)


@pytest.mark.django_db(transaction=True)
def test_restoring_a_dumpdata_copy_over_the_shop_puts_back_what_was_lost(tmp_path, whole_shop) -> None:
    from shopdesk.customers.models import Customer
    from shopdesk.workshop.models import OilRecord, WorkOrder

    before = live_rows()
    copy = tmp_path / "shop.backup"
    call_command("backup_shop", str(copy), kind="xml")
    OilRecord.history.all().delete()
    OilRecord.objects.all().delete()
    WorkOrder.objects.filter(pk=whole_shop.pk).update(complaint="changed after the backup")
    Customer.objects.create(name="Came in after the backup")
    call_command("restore_shop", str(copy), yes=True)
    assert_same_rows(before, live_rows(), by_dumpdata=True)


def test_pg_dump_is_given_the_connection_options_libpq_knows_and_the_password_apart() -> None:
    dbname, env = backup._pg_connection(
        {
            "NAME": "shop",
            "HOST": "db.example.com",
            "PORT": 5433,
            "USER": "desk",
            "PASSWORD": "s3cret pass",
            "OPTIONS": {"sslmode": "verify-full", "prepare_threshold": 5, "server_side_binding": True},
        }
    )
    from psycopg.conninfo import conninfo_to_dict

    assert conninfo_to_dict(dbname) == {
        "dbname": "shop",
        "host": "db.example.com",
        "port": "5433",
        "user": "desk",
        "sslmode": "verify-full",
    }
    assert env["PGPASSWORD"] == "s3cret pass"


@pytest.mark.django_db(transaction=True)
def test_a_snapshot_reads_one_moment_while_others_write(customer) -> None:
    """What keeps a dumpdata copy and the CSV export whole while the shop goes on working."""
    from tests.conftest import skip_unless_postgresql

    skip_unless_postgresql()
    import psycopg

    from shopdesk.customers.models import Customer
    from shopdesk.safekeeping.snapshot import read_snapshot
    from tests.safekeeping.conftest import _server

    with read_snapshot():
        assert Customer.objects.count() == 1
        with psycopg.connect(dbname=connection.settings_dict["NAME"], autocommit=True, **_server()) as desk:
            desk.execute(
                "INSERT INTO customers_customer (name, phone, phone_digits, email, notes, reminder_consent, created_at)"
                " SELECT 'Walked in', '', '', '', '', false, now()"
            )
        assert Customer.objects.count() == 1
    assert Customer.objects.count() == 2


@pytest.mark.django_db(transaction=True)
def test_a_snapshot_on_sqlite_is_a_read_transaction_that_ends(customer) -> None:
    if connection.vendor != "sqlite":
        pytest.skip("the SQLite snapshot")
    from shopdesk.customers.models import Customer
    from shopdesk.safekeeping.snapshot import read_snapshot

    with read_snapshot():
        assert Customer.objects.count() == 1
        assert connection.connection.in_transaction
    assert not connection.connection.in_transaction
    Customer.objects.create(name="After the snapshot")  # Django's own transactions work again
    assert Customer.objects.count() == 2


@pytest.mark.django_db(transaction=True)  # the online backup does not finish inside a test's transaction
def test_a_backup_that_fails_halfway_leaves_the_last_copy_whole(tmp_path, work_order, monkeypatch) -> None:
    if connection.vendor != "sqlite":
        pytest.skip("fails the SQLite copy halfway; the pg_dump copy writes beside its path the same way")
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
