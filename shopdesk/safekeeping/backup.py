"""A consistent copy of the shop's database while it runs, and putting one back.

Three kinds of copy, told apart by their first bytes:

- SQLite: the online backup API (``sqlite3.Connection.backup``), a page-by-page copy that
  other processes may keep writing during; the copy is a plain SQLite file.
- PostgreSQL with ``pg_dump`` on PATH: ``pg_dump -Fc`` (custom format), put back with
  ``pg_restore --clean --if-exists`` in one transaction.
- Otherwise (PostgreSQL without its client tools, or ``--kind xml``): Django's ``dumpdata`` of
  every table by primary key, as XML (which keeps microseconds; JSON rounds them), read from one
  snapshot of the database. It restores into SQLite or PostgreSQL alike: ``migrate`` makes the
  tables, then every table is emptied and loaded in one transaction.

A restore goes into the shop's own database, or with ``database_url`` into another one (to check
a copy, or to move the shop); an SQLite or a pg_dump copy goes into a database of its own kind.
"""

from __future__ import annotations

import os
import shutil
import sqlite3
import subprocess
import tempfile
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from xml.sax import SAXException

import dj_database_url
from django.apps import apps
from django.contrib.contenttypes.models import ContentType
from django.core.exceptions import FieldDoesNotExist, ValidationError
from django.core.management import call_command
from django.core.management.base import CommandError
from django.core.serializers.base import DeserializationError
from django.db import DEFAULT_DB_ALIAS, DatabaseError, connection, connections, transaction
from django.db.backends.base.base import BaseDatabaseWrapper
from django.db.utils import load_backend

from shopdesk.safekeeping.snapshot import read_snapshot

SQLITE_MAGIC = b"SQLite format 3\x00"
PG_MAGIC = b"PGDMP"
KINDS = ("sqlite", "pg_dump", "xml")
ENGINES = {"django.db.backends.sqlite3": "SQLite", "django.db.backends.postgresql": "PostgreSQL"}
TARGET_ALIAS = "safekeeping_target"

# What `migrate` writes into an empty database by itself; rows there are not the shop's.
MADE_BY_MIGRATE = {"django_content_type", "auth_permission", "auth_group", "auth_group_permissions"}
# What the question before a restore counts, so that the person sees which shop they would replace.
COUNTED = [
    ("customers_customer", "customer", "customers"),
    ("workshop_workorder", "job", "jobs"),
    ("auth_user", "user", "users"),
]


def _dumped_excluded() -> list[str]:
    """What the dumpdata copy leaves out: models without a table only (safekeeping.Export, which
    only carries a permission). Everything else is kept, as the SQLite and pg_dump copies keep it,
    so that a restore holds row for row what was copied:

    - content types and permissions, with their ids: the roles' permissions and the admin's log
      point at them by id (the ones ``migrate`` made in the target are removed before the load);
    - ``admin.LogEntry``: the admin's log of who changed spec sheets, prices and users;
    - ``axes``: the log of sign-ins and failed ones, and the locks; a lock put back ends when it
      would have ended, and the owner can clear it in the admin;
    - sessions: who was signed in when the copy was made.
    """
    return [model._meta.label for model in apps.get_models() if not model._meta.managed]


class BackupError(Exception):
    """A backup or restore that could not be made; the message says why."""


@dataclass(frozen=True)
class Restored:
    kind: str  # the kind of copy put back
    into: str  # the database it went into, as a person reads it


@dataclass(frozen=True)
class Target:
    """The database a restore replaces: its name as a person reads it, and what it holds."""

    name: str
    holds: str  # e.g. "12 customers, 30 jobs, 4 users and other records"; empty when nothing would be lost


def kind_of(path: Path) -> str:
    path = Path(path)
    if not path.exists():
        raise BackupError(f"{path} does not exist.")
    if not path.is_file():
        raise BackupError(f"{path} is not a file.")
    with path.open("rb") as file:
        head = file.read(64)  # only the first bytes: a backup may be gigabytes
    if head.startswith(SQLITE_MAGIC):
        return "sqlite"
    if head.startswith(PG_MAGIC):
        return "pg_dump"
    if head.lstrip().startswith(b"<?xml"):
        return "xml"
    raise BackupError(f"{path} is not a ShopDesk backup (neither SQLite, pg_dump nor dumpdata XML).")


def _database_name(settings_dict: dict[str, Any]) -> str:
    """The database as the person running the command knows it; never its password."""
    engine = ENGINES.get(settings_dict["ENGINE"], settings_dict["ENGINE"])
    if settings_dict["ENGINE"] == "django.db.backends.sqlite3":
        return f"the SQLite database {settings_dict['NAME']}"
    where = settings_dict.get("HOST") or "this machine"
    if settings_dict.get("PORT"):
        where = f"{where}:{settings_dict['PORT']}"
    return f"the {engine} database {settings_dict['NAME']} on {where}"


def _sqlite_file(settings_dict: dict[str, Any]) -> Path | None:
    """The file of an SQLite database; None for one in memory (the tests')."""
    name = str(settings_dict["NAME"])
    if name == ":memory:" or name.startswith("file:") or "mode=memory" in name:
        return None
    return Path(name).resolve()


def _refuse_its_own_file(path: Path, settings_dict: dict[str, Any], doing: str) -> None:
    # Writing a copy onto the database it copies (or restoring a file onto itself) would leave
    # neither: refuse before anything is opened.
    if settings_dict["ENGINE"] != "django.db.backends.sqlite3":
        return
    database = _sqlite_file(settings_dict)
    if database is None:
        return
    own = {database, *(database.with_name(database.name + end) for end in ("-wal", "-shm", "-journal"))}
    if path.resolve() in own:
        raise BackupError(f"{path} is the database itself: {doing} it needs another path.")


def _pg_connection(settings_dict: dict[str, Any]) -> tuple[str, dict[str, str]]:
    """pg_dump's and pg_restore's --dbname (a libpq connection string) and environment.

    The connection options of DATABASE_URL that libpq knows (sslmode, sslrootcert, …) go with it;
    psycopg's own (prepare_threshold, …) do not. The password goes in the environment, where
    ``ps`` does not show it.
    """
    from psycopg import conninfo, pq

    libpq = {option.keyword.decode() for option in pq.Conninfo.get_defaults()} - {"password"}
    params = {key: value for key, value in (settings_dict.get("OPTIONS") or {}).items() if key in libpq}
    for key, setting in (("dbname", "NAME"), ("host", "HOST"), ("port", "PORT"), ("user", "USER")):
        if settings_dict.get(setting):
            params[key] = settings_dict[setting]
    env = dict(os.environ)
    if settings_dict.get("PASSWORD"):
        env["PGPASSWORD"] = str(settings_dict["PASSWORD"])
    return conninfo.make_conninfo(**{key: str(value) for key, value in params.items()}), env


def _run(command: list[str], env: dict[str, str]) -> None:
    try:
        result = subprocess.run(command, env=env, capture_output=True, text=True, check=False)
    except OSError as error:
        raise BackupError(f"{command[0]} could not be started: {error}") from error
    if result.returncode != 0:
        raise BackupError(f"{command[0]} failed: {result.stderr.strip()}")


def _kind_chosen(kind: str | None) -> str:
    vendor = connection.vendor
    has_pg_dump = shutil.which("pg_dump") is not None
    if kind is None:
        if vendor == "sqlite":
            return "sqlite"
        return "pg_dump" if vendor == "postgresql" and has_pg_dump else "xml"
    if kind not in KINDS:
        raise BackupError(f"Unknown kind of copy {kind!r}: choose {', '.join(KINDS)}.")
    if kind == "sqlite" and vendor != "sqlite":
        raise BackupError(f"An SQLite copy needs an SQLite database; the shop's is {vendor}.")
    if kind == "pg_dump" and vendor != "postgresql":
        raise BackupError(f"A pg_dump copy needs a PostgreSQL database; the shop's is {vendor}.")
    if kind == "pg_dump" and not has_pg_dump:
        raise BackupError("pg_dump is not on PATH: install PostgreSQL's client tools, or use --kind xml.")
    return kind


def backup(path: Path, *, kind: str | None = None) -> str:
    """Write a copy of the default database to ``path``; returns the kind of copy made.

    The copy is written beside ``path`` and moved onto it when whole: last night's copy stays
    until tonight's is complete, and a copy that fails (a full disk) leaves nothing half written.
    """
    path = Path(path)
    kind = _kind_chosen(kind)
    _refuse_its_own_file(path, connection.settings_dict, "a copy of")
    partial = path.with_name(f".{path.name}.partial")
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        partial.unlink(missing_ok=True)
        if kind == "sqlite":
            connection.ensure_connection()
            destination = sqlite3.connect(partial)
            try:
                connection.connection.backup(destination)
                # The shop's database runs in WAL mode and the copy would too: it would make -wal
                # and -shm files beside itself when read, and could not be read at all from a
                # folder it may not write to. A copy is one file that stands alone.
                destination.execute("PRAGMA journal_mode=DELETE")
            finally:
                destination.close()
        elif kind == "pg_dump":
            dbname, env = _pg_connection(connection.settings_dict)
            _run(["pg_dump", "-Fc", "--no-owner", "-f", str(partial), f"--dbname={dbname}"], env)
        else:
            with read_snapshot():
                call_command(
                    "dumpdata",
                    format="xml",
                    exclude=_dumped_excluded(),
                    use_base_manager=True,  # every row, whatever a model's default manager shows
                    output=str(partial),
                    verbosity=0,
                )
        os.replace(partial, path)
    except (BackupError, OSError, sqlite3.Error, DatabaseError, CommandError) as error:
        kept = " The copy that was there is untouched." if path.exists() else ""
        raise BackupError(f"No copy was made at {path}: {str(error).rstrip('.')}.{kept}") from error
    finally:
        partial.unlink(missing_ok=True)
    return kind


@contextmanager
def target_database(database_url: str | None = None) -> Iterator[BaseDatabaseWrapper]:
    """The connection to the database at ``database_url``, made for the time of a restore; the
    shop's own connection when there is none."""
    if database_url is None:
        yield connections[DEFAULT_DB_ALIAS]
        return
    try:
        parsed = dj_database_url.parse(database_url)
    except ValueError as error:
        raise BackupError(f"--database-url is not a database URL: {error}") from None
    if parsed["ENGINE"] not in ENGINES:
        raise BackupError(
            f"--database-url names a {parsed['ENGINE']} database; a restore goes into SQLite or PostgreSQL."
        )
    settings_dict = connections.configure_settings({DEFAULT_DB_ALIAS: {}, TARGET_ALIAS: parsed})[TARGET_ALIAS]
    # Made here, not declared in the settings: it lives for one restore, and migrate, flush and
    # loaddata reach it by its alias like any other.
    target = load_backend(settings_dict["ENGINE"]).DatabaseWrapper(settings_dict, TARGET_ALIAS)
    connections[TARGET_ALIAS] = target
    try:
        yield target
    finally:
        target.close()
        del connections[TARGET_ALIAS]


def target_describe(target: BaseDatabaseWrapper) -> Target:
    """What a restore into ``target`` would replace: the shop's rows in it, and tables that are
    not ShopDesk's (an SQLite copy replaces the whole file; a URL may name another program's)."""
    name = _database_name(target.settings_dict)
    if target.vendor == "sqlite":
        file = _sqlite_file(target.settings_dict)
        if file is not None and not file.exists():
            return Target(name, "")  # a new file: the restore makes it
    try:
        with target.cursor() as cursor:
            every_table = set(target.introspection.table_names(cursor))
            tables = set(target.introspection.django_table_names(only_existing=True, include_views=False))
            counted = []
            for table, one, many in COUNTED:
                if table in tables:
                    cursor.execute(f"SELECT COUNT(*) FROM {target.ops.quote_name(table)}")
                    count = cursor.fetchone()[0]
                    if count:
                        counted.append(f"{count:,} {one if count == 1 else many}")
            others = False
            for table in sorted(tables - MADE_BY_MIGRATE - {table for table, _, _ in COUNTED}):
                cursor.execute(f"SELECT 1 FROM {target.ops.quote_name(table)} LIMIT 1")
                if cursor.fetchone() is not None:
                    others = True
                    break
    except DatabaseError as error:
        raise BackupError(f"{name} could not be read: {error}") from error
    holds = ", ".join(counted)
    if others:
        holds = (
            f"{holds} and other records" if holds else "records of the shop (spec sheets, stock or settings)"
        )
    foreign = len(every_table - tables - {"django_migrations"})
    if foreign:
        theirs = f"{foreign} table{'s' if foreign > 1 else ''} that ShopDesk did not make"
        holds = f"{holds} and {theirs}" if holds else theirs
    return Target(name, holds)


def _sqlite_copy_check(path: Path) -> None:
    """Refuse a damaged SQLite file, or one that is not a ShopDesk database, before anything is replaced."""
    try:
        copy = sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro", uri=True)
        try:
            problems = [row[0] for row in copy.execute("PRAGMA quick_check")]
            tables = {row[0] for row in copy.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
        finally:
            copy.close()
    except sqlite3.Error as error:
        raise BackupError(
            f"{path} cannot be read as an SQLite database: {error}. Nothing was restored."
        ) from error
    if problems != ["ok"]:
        raise BackupError(f"{path} is damaged ({'; '.join(problems[:3])}). Nothing was restored.")
    if not {"django_migrations", "workshop_workorder"} <= tables:
        raise BackupError(f"{path} is an SQLite database but not a ShopDesk one. Nothing was restored.")


def restore(
    path: Path,
    *,
    database_url: str | None = None,
    confirm: Callable[[Target], None] | None = None,
) -> Restored:
    """Put a copy back into the default database (or the one at ``database_url``).

    Everything in the target is replaced. Once the copy and the target are found to fit,
    ``confirm`` is called with what the target holds (when it holds anything) and may raise to
    stop; nothing has been changed then.
    """
    path = Path(path)
    kind = kind_of(path)
    with target_database(database_url) as target:
        engine = target.settings_dict["ENGINE"]
        _refuse_its_own_file(path, target.settings_dict, "restoring")
        if kind == "sqlite":
            if target.vendor != "sqlite":
                raise BackupError(
                    f"An SQLite copy restores into an SQLite database only, not {ENGINES[engine]}."
                )
            _sqlite_copy_check(path)
        elif kind == "pg_dump":
            if target.vendor != "postgresql":
                raise BackupError(
                    f"A pg_dump copy restores into a PostgreSQL database only, not {ENGINES[engine]}."
                )
            if shutil.which("pg_restore") is None:
                raise BackupError("pg_restore is not on PATH; install PostgreSQL's client tools.")
        described = target_describe(target)
        if confirm is not None and described.holds:
            confirm(described)
        if kind == "sqlite":
            _restore_sqlite(path, target)
        elif kind == "pg_dump":
            _restore_pg_dump(path, target)
        else:
            _restore_dumpdata(path, target)
        if kind != "xml":
            _migrate_restored(path, target)
    # Content types may have other ids now; the cache would hand out the old ones.
    ContentType.objects.clear_cache()
    return Restored(kind, described.name)


def _restore_sqlite(path: Path, target: BaseDatabaseWrapper) -> None:
    try:
        source = sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro", uri=True)
        try:
            target.ensure_connection()
            source.backup(target.connection)  # one step, in one transaction of the target's
        finally:
            source.close()
    except (sqlite3.Error, DatabaseError) as error:
        raise BackupError(f"{path} could not be restored: {error}.") from error


def _restore_pg_dump(path: Path, target: BaseDatabaseWrapper) -> None:
    target.close()  # pg_restore drops and makes the tables again: hold no connection to them
    dbname, env = _pg_connection(target.settings_dict)
    _run(
        [
            "pg_restore",
            "--clean",
            "--if-exists",
            "--no-owner",
            "--single-transaction",
            "--exit-on-error",
            f"--dbname={dbname}",
            str(path),
        ],
        env,
    )


def _migrate_restored(path: Path, target: BaseDatabaseWrapper) -> None:
    """Bring a restored SQLite or pg_dump copy to this version's tables.

    Those copies carry the tables of the version that made them: a copy from before an upgrade
    would otherwise leave the shop running this version's code on last version's tables. A copy
    of this version migrates nothing. (A dumpdata copy was loaded into migrated tables already.)
    """
    try:
        call_command("migrate", database=target.alias, interactive=False, verbosity=0)
    except (CommandError, DatabaseError) as error:
        raise BackupError(
            f"{path} was restored, but bringing its tables to this version failed: {error}. "
            "Run manage.py migrate and read its error, or restore with the version that made the copy."
        ) from error


def _restore_dumpdata(path: Path, target: BaseDatabaseWrapper) -> None:
    alias = target.alias
    try:
        call_command("migrate", database=alias, interactive=False, verbosity=0)
        with tempfile.TemporaryDirectory() as folder:
            fixture = Path(folder) / "backup.xml"  # loaddata tells the format by the name
            try:
                fixture.symlink_to(path.resolve())
            except OSError:  # where links may not be made: a copy, beside the other temporary files
                shutil.copyfile(path, fixture)
            # Emptied and loaded in one transaction: a copy that does not load leaves every row
            # as it was. The rows migrate made (content types, permissions, the roles) go too;
            # the copy's own, with their ids, replace them.
            with transaction.atomic(using=alias):
                call_command(
                    "flush", database=alias, interactive=False, verbosity=0, inhibit_post_migrate=True
                )
                call_command("loaddata", str(fixture), database=alias, verbosity=0)
    # What a copy cut short, damaged or made by another version raises on the way in.
    except (
        CommandError,
        DeserializationError,
        DatabaseError,
        FieldDoesNotExist,
        LookupError,
        OSError,
        SAXException,
        ValidationError,
        ValueError,
    ) as error:
        raise BackupError(
            f"{path} could not be restored: {error}. The rows in the database are as they were. "
            "A copy made by another version of ShopDesk restores with that version."
        ) from error
