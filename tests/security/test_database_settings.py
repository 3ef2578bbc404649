"""PostgreSQL is used with prepared statements unless the shop turns them off; SQLite never."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
PROBE = "import json, django; django.setup(); from django.conf import settings; print(json.dumps(settings.DATABASES['default']['OPTIONS']))"


def _options(**environment: str) -> dict:
    env = {k: v for k, v in os.environ.items() if not k.startswith(("SHOPDESK_", "DATABASE_"))}
    env.update(DJANGO_SETTINGS_MODULE="shopdesk.settings", DEBUG="true", **environment)
    result = subprocess.run(
        [sys.executable, "-c", PROBE], cwd=ROOT, env=env, capture_output=True, text=True, timeout=60
    )
    assert result.returncode == 0, result.stderr
    return json.loads(result.stdout)


POSTGRES = "postgres://shop@db.example:5432/shop"  # only read, never connected to


def test_postgresql_binds_parameters_on_the_server_and_prepares_repeated_queries() -> None:
    options = _options(DATABASE_URL=POSTGRES)
    assert options["server_side_binding"] is True and options["prepare_threshold"] == 5


def test_the_shop_can_turn_prepared_statements_off_for_a_pooler() -> None:
    options = _options(DATABASE_URL=POSTGRES, DATABASE_PREPARED_STATEMENTS="false")
    assert "server_side_binding" not in options and "prepare_threshold" not in options


def test_sqlite_is_left_as_it_was(tmp_path) -> None:
    options = _options(DATABASE_URL=f"sqlite:///{tmp_path / 'shop.sqlite3'}")
    assert "prepare_threshold" not in options and options["transaction_mode"] == "IMMEDIATE"


@pytest.mark.parametrize("value", ["maybe", "2"])
def test_a_value_that_is_not_true_or_false_stops_start_up_with_its_name(value) -> None:
    env = {k: v for k, v in os.environ.items() if not k.startswith(("SHOPDESK_", "DATABASE_"))}
    env.update(
        DJANGO_SETTINGS_MODULE="shopdesk.settings",
        DEBUG="true",
        DATABASE_URL=POSTGRES,
        DATABASE_PREPARED_STATEMENTS=value,
    )
    result = subprocess.run(
        [sys.executable, "-c", PROBE], cwd=ROOT, env=env, capture_output=True, text=True, timeout=60
    )
    assert result.returncode != 0
    assert f"DATABASE_PREPARED_STATEMENTS must be true or false, not {value!r}." in result.stderr
