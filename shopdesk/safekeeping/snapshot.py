"""Reading the whole database as it was at one moment while the shop keeps writing to it."""

from __future__ import annotations

import gc
import traceback
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
    try:
        with _snapshot(using):
            yield
    except BaseException as error:
        _close_abandoned_cursors(error)
        raise


def _close_abandoned_cursors(error: BaseException) -> None:
    """Close now the cursors that a reading stopped by ``error`` left open.

    On PostgreSQL Django reads ``iterator()`` through a server-side cursor, closed when the
    iterator ends. An error raised halfway (a full disk under a backup or the export) leaves the
    iterator suspended in the frames of the error's traceback, to be finalised whenever the
    garbage collector runs: in the middle of another query on the same connection, closing the
    cursor would wait for the connection that query holds, and the process would hang (a CI run
    did, in the flush after a failed backup). Here no query is running: the frames the error
    left are cleared (their iterators end and close their cursors) and anything left in a
    reference cycle is collected. The error keeps its message and where it was raised.
    """
    traceback.clear_frames(error.__traceback__)
    gc.collect()


@contextmanager
def _snapshot(using: str) -> Iterator[None]:
    """One transaction of the database's for the reading (see ``read_snapshot``)."""
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
