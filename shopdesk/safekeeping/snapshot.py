"""Reading the whole database as it was at one moment while the shop keeps writing to it."""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager

from django.db import DEFAULT_DB_ALIAS, connections, transaction


@contextmanager
def read_snapshot(using: str = DEFAULT_DB_ALIAS) -> Iterator[None]:
    """Every query inside reads the same moment of the database, however long the reading takes.

    A copy or an export reads one table after another; without this, a job checked in between
    reading the jobs and reading their services would leave services whose job is not in the copy
    (a dumpdata copy would then refuse to load).
    """
    connection = connections[using]
    if connection.in_atomic_block:
        # The caller's own transaction (a test's, for one): its reads are already the caller's.
        yield
        return
    if connection.vendor == "postgresql":
        # REPEATABLE READ is a snapshot in PostgreSQL; READ ONLY takes no locks that writers wait on.
        with transaction.atomic(using=using):
            with connection.cursor() as cursor:
                cursor.execute("SET TRANSACTION ISOLATION LEVEL REPEATABLE READ, READ ONLY")
            yield
    elif connection.vendor == "sqlite":
        # Django's transactions on the shop's SQLite begin IMMEDIATE (the write lock), which would
        # stop every writer for as long as the reading takes. A deferred transaction that only reads
        # holds a snapshot (WAL) and lets writers go on; it is opened on the connection directly,
        # which is in autocommit mode and starts none of its own.
        connection.ensure_connection()
        with connection.wrap_database_errors:
            connection.connection.execute("BEGIN DEFERRED")
        try:
            yield
        finally:
            if connection.connection.in_transaction:
                with connection.wrap_database_errors:
                    connection.connection.execute("ROLLBACK")  # it only read: nothing to keep
    else:
        with transaction.atomic(using=using):
            yield
