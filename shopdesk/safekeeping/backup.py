"""A consistent copy of the shop's database while it runs, and putting one back.

Three kinds of copy, told apart by their first bytes:

- SQLite: the online backup API (``sqlite3.Connection.backup``), a page-by-page copy that
  other processes may keep writing during; the copy is a plain SQLite file.
- PostgreSQL with ``pg_dump`` on PATH: ``pg_dump -Fc`` (custom format), put back with
  ``pg_restore --clean --if-exists``.
- Otherwise: ``dumpdata`` with natural keys (XML, which keeps microseconds). Content types and permissions are
  left out (``migrate`` makes them again) and matched by natural key on the way back.
"""

from __future__ import annotations

import os
import shutil
import sqlite3
import subprocess
import tempfile
from pathlib import Path
from typing import Any

import dj_database_url
from django.core.management import call_command
from django.db import connection, connections, transaction

SQLITE_MAGIC = b"SQLite format 3\x00"
PG_MAGIC = b"PGDMP"
JSON_EXCLUDE = ["contenttypes", "auth.permission", "sessions", "admin.logentry", "safekeeping", "axes"]


class BackupError(Exception):
    """A backup or restore that could not be made; the message says why."""


def kind_of(path: Path) -> str:
    with path.open("rb") as file:
        head = file.read(64)  # only the first bytes: a backup may be gigabytes
    if head.startswith(SQLITE_MAGIC):
        return "sqlite"
    if head.startswith(PG_MAGIC):
        return "pg_dump"
    if head.lstrip().startswith(b"<?xml"):
        return "xml"
    raise BackupError(f"{path} is not a ShopDesk backup (neither SQLite, pg_dump nor dumpdata XML).")


def _pg_env(settings_dict: dict[str, Any]) -> dict[str, str]:
    env = dict(os.environ)
    if settings_dict.get("PASSWORD"):
        env["PGPASSWORD"] = str(settings_dict["PASSWORD"])
    return env


def _pg_args(settings_dict: dict[str, Any]) -> list[str]:
    args = []
    if settings_dict.get("HOST"):
        args += ["-h", str(settings_dict["HOST"])]
    if settings_dict.get("PORT"):
        args += ["-p", str(settings_dict["PORT"])]
    if settings_dict.get("USER"):
        args += ["-U", str(settings_dict["USER"])]
    return args


def _run(command: list[str], env: dict[str, str]) -> None:
    result = subprocess.run(command, env=env, capture_output=True, text=True, check=False)
    if result.returncode != 0:
        raise BackupError(f"{command[0]} failed: {result.stderr.strip()}")


def backup(path: Path, *, kind: str | None = None) -> str:
    """Write a copy of the default database to ``path``; returns the kind of copy made."""
    path = Path(path)
    vendor = connection.vendor
    kind = kind or {"sqlite": "sqlite", "postgresql": "pg_dump"}.get(vendor, "xml")
    if kind == "pg_dump" and (vendor != "postgresql" or shutil.which("pg_dump") is None):
        kind = "xml"
    path.parent.mkdir(parents=True, exist_ok=True)
    # Each kind writes beside ``path`` and is moved onto it when whole: last night's copy stays
    # until tonight's is complete.
    partial = path.with_name(f".{path.name}.partial")
    partial.unlink(missing_ok=True)
    try:
        if kind == "sqlite":
            if vendor != "sqlite":
                raise BackupError("An SQLite copy needs an SQLite database.")
            connection.ensure_connection()
            destination = sqlite3.connect(partial)
            try:
                connection.connection.backup(destination)
            finally:
                destination.close()
            os.replace(partial, path)
        elif kind == "pg_dump":
            settings_dict = connection.settings_dict
            _run(
                [
                    "pg_dump",
                    "-Fc",
                    "--no-owner",
                    "-f",
                    str(partial),
                    *_pg_args(settings_dict),
                    settings_dict["NAME"],
                ],
                _pg_env(settings_dict),
            )
            os.replace(partial, path)
        else:
            with tempfile.TemporaryDirectory(dir=path.parent) as folder:
                dump = Path(folder) / "backup.xml"  # XML keeps microseconds; JSON rounds them
                call_command(
                    "dumpdata",
                    natural_foreign=True,
                    exclude=JSON_EXCLUDE,
                    format="xml",
                    output=str(dump),
                    verbosity=0,
                )
                os.replace(dump, path)
    finally:
        partial.unlink(missing_ok=True)  # a copy that failed halfway
    return kind


def _target(database_url: str | None) -> dict[str, Any]:
    if database_url is None:
        return connection.settings_dict
    return dj_database_url.parse(database_url)


def restore(path: Path, *, database_url: str | None = None) -> str:
    """Put a copy back into the default database (or the one at ``database_url``).

    Everything in the target is replaced. Returns the kind of copy restored.
    """
    path = Path(path)
    if not path.exists():
        raise BackupError(f"{path} does not exist.")
    kind = kind_of(path)
    target = _target(database_url)
    engine = target["ENGINE"]
    if kind == "sqlite":
        if not engine.endswith("sqlite3"):
            raise BackupError("An SQLite copy restores into an SQLite database only.")
        source = sqlite3.connect(path)
        try:
            if database_url is None:
                connection.ensure_connection()
                source.backup(connection.connection)
            else:
                destination = sqlite3.connect(target["NAME"])
                try:
                    source.backup(destination)
                finally:
                    destination.close()
        finally:
            source.close()
    elif kind == "pg_dump":
        if not engine.endswith("postgresql"):
            raise BackupError("A pg_dump copy restores into a PostgreSQL database only.")
        if shutil.which("pg_restore") is None:
            raise BackupError("pg_restore is not on PATH; install PostgreSQL's client tools.")
        if database_url is None:
            connections.close_all()
        _run(
            [
                "pg_restore",
                "--clean",
                "--if-exists",
                "--no-owner",
                "--single-transaction",
                "--exit-on-error",
                *_pg_args(target),
                "-d",
                target["NAME"],
                str(path),
            ],
            _pg_env(target),
        )
    else:
        if database_url is not None:
            raise BackupError(
                "A dumpdata copy restores into the configured database only (set DATABASE_URL)."
            )
        call_command("migrate", interactive=False, verbosity=0)
        with tempfile.TemporaryDirectory() as folder:
            fixture = Path(folder) / "backup.xml"  # loaddata tells the format by the name
            shutil.copyfile(path, fixture)
            with transaction.atomic():
                call_command(
                    "flush", interactive=False, verbosity=0
                )  # post_migrate makes content types again
                call_command("loaddata", str(fixture), verbosity=0)
    return kind
