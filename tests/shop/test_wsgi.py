"""The WSGI application loads what a worker keeps for good, then freezes it out of the collector's way."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

PROBE = """
import gc, json, sys
import shopdesk.wsgi
print(json.dumps({
    "frozen": gc.get_freeze_count(),
    "modules": [name for name in ("weasyprint", "shopdesk.workshop.bench_views", "shopdesk.calc")
                if name in sys.modules],
}))
"""


def test_the_application_loads_the_views_and_weasyprint_then_freezes_them(tmp_path) -> None:
    env = {k: v for k, v in os.environ.items() if not k.startswith("SHOPDESK_")}
    env.update(
        DATABASE_URL=f"sqlite:///{tmp_path / 'wsgi.sqlite3'}",
        DJANGO_SETTINGS_MODULE="shopdesk.settings",
        DEBUG="true",
    )
    result = subprocess.run(
        [sys.executable, "-c", PROBE], cwd=ROOT, env=env, capture_output=True, text=True, timeout=120
    )
    assert result.returncode == 0, result.stderr
    loaded = json.loads(result.stdout)
    assert loaded["modules"] == ["weasyprint", "shopdesk.workshop.bench_views", "shopdesk.calc"]
    assert loaded["frozen"] > 100_000  # Django, the views and WeasyPrint: well over 100,000 objects
