# ShopDesk: `make run` serves the demo shop, `make test` runs every test.
# Both set themselves up on a fresh machine with Python 3.11+ (and python3-venv).

PYTHON ?= python3
VENV := .venv
PY := $(VENV)/bin/python
HOST_PORT ?= 127.0.0.1:8000

.PHONY: run test test-sqlite test-postgres setup setup-dev lint bench clean

$(VENV)/.python-ok:
	@$(PYTHON) -c 'import sys; sys.exit(0 if sys.version_info >= (3, 11) else "ShopDesk needs Python 3.11 or newer: set PYTHON=python3.11")'
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	@touch $@

$(VENV)/.installed: $(VENV)/.python-ok requirements.txt
	$(PY) -m pip install --quiet -r requirements.txt
	@touch $@

$(VENV)/.installed-dev: $(VENV)/.installed requirements-dev.txt
	$(PY) -m pip install --quiet -r requirements-dev.txt
	@touch $@

setup: $(VENV)/.installed
setup-dev: $(VENV)/.installed-dev

# The demo shop on a developer's machine. DEBUG is off unless set (a server started without its
# settings must not show stack traces), so development mode is asked for here.
run: export DEBUG = true
run: setup
	$(PY) manage.py migrate --noinput
	$(PY) manage.py seed_demo
	$(PY) manage.py runserver $(HOST_PORT)

# The suite runs on SQLite, then again on PostgreSQL when one is reachable. With CI=true an
# unreachable PostgreSQL or a missing Chromium fails the run instead of skipping.
test: setup-dev test-sqlite test-postgres

test-sqlite: setup-dev
	SHOPDESK_TESTING=true DATABASE_URL= $(PY) -m pytest

test-postgres: setup-dev
	@url=$$($(PY) scripts/postgres_url.py); status=$$?; \
	if [ $$status -ne 0 ]; then \
	  if [ "$$CI" = "true" ]; then echo "CI needs PostgreSQL for the second pass."; exit 1; fi; \
	  echo "Skipping the PostgreSQL pass: no PostgreSQL reachable (set TEST_DATABASE_URL)."; exit 0; \
	fi; \
	echo "PostgreSQL pass on $$url (the calculation library does not touch a database and is not rerun)"; \
	SHOPDESK_TESTING=true DATABASE_URL=$$url $(PY) -m pytest --ignore=tests/calc

lint: setup-dev
	$(PY) -m ruff check .
	$(PY) -m ruff format --check .
	$(PY) -m mypy

bench: setup-dev
	$(PY) bench/calc.py
	$(PY) bench/front_desk.py
	$(PY) bench/documents.py
	$(PY) bench/owner.py --units 1500

clean:
	rm -rf $(VENV) staticfiles var .hypothesis
