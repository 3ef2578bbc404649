"""shopdesk.calc stays pure Python: importable with no Django settings, and never importing Django."""

import os
import pathlib
import re
import subprocess
import sys

import shopdesk.calc

CALC = pathlib.Path(shopdesk.calc.__file__).parent
MODULES = sorted(f"shopdesk.calc.{path.stem}" for path in CALC.glob("*.py") if path.stem != "__init__")


def test_the_modules_are_all_found():
    # Guard against the glob finding nothing, which would make the tests below pass vacuously
    assert {
        "shopdesk.calc.oil",
        "shopdesk.calc.air_spring",
        "shopdesk.calc.damper",
        "shopdesk.calc.schedule",
    } <= set(MODULES)


def test_it_imports_without_django():
    environment = {key: value for key, value in os.environ.items() if key != "DJANGO_SETTINGS_MODULE"}
    script = (
        f"import shopdesk.calc, {', '.join(MODULES)}; import sys; "
        "assert 'django' not in sys.modules, sorted(m for m in sys.modules if m.startswith('django'))"
    )
    result = subprocess.run(
        [sys.executable, "-c", script],
        cwd=CALC.parent.parent,
        env=environment,
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert result.returncode == 0, result.stderr


def test_no_file_imports_django():
    pattern = re.compile(r"^\s*(import\s+django|from\s+django[\s.])", re.MULTILINE)
    offenders = [path.name for path in CALC.rglob("*.py") if pattern.search(path.read_text(encoding="utf-8"))]
    assert offenders == []
