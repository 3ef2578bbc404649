"""SQLite shared by several app processes: WAL, a busy timeout, immediate transactions.

Several processes write at once through the ORM and the stock service to one SQLite file (not
:memory:); none may see "database is locked", and every write must land.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from django.conf import settings
from django.db import connection

ROOT = Path(__file__).resolve().parents[2]
PROCESSES = 4
WRITES = 40

SETUP = """
import django
django.setup()
from decimal import Decimal
from django.contrib.auth.models import Group, User
from shopdesk.accounts.roles import OWNER
from shopdesk.stock.models import Part
owner = User.objects.create_user(username="owner", password="correct-horse-battery-9")
owner.groups.add(Group.objects.get(name=OWNER))
Part.objects.create(part_number="SEAL-32", name="Dust seal 32 mm", kind=Part.Kind.PART,
                    cost=Decimal("2.00"), price=Decimal("6.00"))
"""

WRITER = """
import sys
import django
django.setup()
from decimal import Decimal
from django.contrib.auth.models import User
from shopdesk.customers.models import Customer
from shopdesk.stock.models import Part
from shopdesk.stock.services import stock_receive
who = sys.argv[1]
owner = User.objects.get(username="owner")
part = Part.objects.get(part_number="SEAL-32")
for n in range(int(sys.argv[2])):
    Customer.objects.create(name=f"Writer {who} customer {n}", phone="01632 960 000")
    stock_receive(part=part, quantity=Decimal("1"), by=owner, lot_code=f"L-{who}")
"""


def _env(database: Path) -> dict[str, str]:
    env = {k: v for k, v in os.environ.items() if k != "SHOPDESK_TESTING"}
    env.update(DATABASE_URL=f"sqlite:///{database}", DJANGO_SETTINGS_MODULE="shopdesk.settings", DEBUG="true")
    return env


def test_the_sqlite_settings_are_for_several_processes() -> None:
    if connection.vendor != "sqlite":
        pytest.skip("SQLite settings; this pass runs on PostgreSQL")
    options = settings.DATABASES["default"]["OPTIONS"]
    assert options["transaction_mode"] == "IMMEDIATE"
    assert options["timeout"] >= 5
    assert "journal_mode=WAL" in options["init_command"]


def test_parallel_writers_never_find_the_database_locked(tmp_path) -> None:
    if connection.vendor != "sqlite":
        pytest.skip("SQLite's locking; PostgreSQL has its own tests of parallel saves")
    database = tmp_path / "shop.sqlite3"
    env = _env(database)
    run = {"cwd": ROOT, "env": env, "capture_output": True, "text": True, "timeout": 300}
    migrated = subprocess.run(
        [sys.executable, "manage.py", "migrate", "--noinput", "-v0"], **run, check=False
    )
    assert migrated.returncode == 0, migrated.stderr
    assert subprocess.run([sys.executable, "-c", SETUP], **run, check=False).returncode == 0

    writers = [
        subprocess.Popen(
            [sys.executable, "-c", WRITER, str(n), str(WRITES)],
            cwd=ROOT,
            env=env,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
        for n in range(PROCESSES)
    ]
    results = [(*writer.communicate(timeout=300), writer.returncode) for writer in writers]
    for _, stderr, code in results:
        assert "database is locked" not in stderr
        assert code == 0, stderr

    import sqlite3

    db = sqlite3.connect(database)
    try:
        assert db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
        customers = db.execute("SELECT count(*) FROM customers_customer").fetchone()[0]
        received = db.execute("SELECT count(*), sum(quantity) FROM stock_stockmovement").fetchone()
    finally:
        db.close()
    assert customers == PROCESSES * WRITES
    assert received[0] == PROCESSES * WRITES and float(received[1]) == PROCESSES * WRITES
