# Everyday commands. Each one installs into .venv first, so a fresh machine needs only
# Python 3.11+ and make.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed-stamp
PYTEST_ARGS ?=

.PHONY: install test demo serve bench bench-large lint format clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

install: $(STAMP)

test: install
	$(BIN)/python -m pytest $(PYTEST_ARGS)

demo: install
	DEBUG=1 $(BIN)/python manage.py migrate --no-input
	DEBUG=1 $(BIN)/python manage.py demo_load
	$(MAKE) serve

serve: install
	DEBUG=1 $(BIN)/python manage.py runserver 127.0.0.1:8000

bench: install
	$(BIN)/python bench/physics_bench.py
	$(BIN)/python bench/service_bench.py
	$(BIN)/python bench/report_bench.py
	$(BIN)/python bench/loads_bench.py
	$(BIN)/python bench/switch_mode_bench.py
	$(BIN)/python bench/capacitor_input_bench.py
	$(BIN)/python bench/warm_up_bench.py
	$(MAKE) bench-large

# The large-shop benchmarks: seeds 10,000 jobs per database (SQLite and PostgreSQL) and serves
# them with gunicorn under wrk (apt-get install wrk); about 25 minutes in all.
bench-large: install
	$(BIN)/python -m pip install --quiet -e '.[serve]'
	$(BIN)/python bench/load_bench.py
	$(BIN)/python bench/backup_bench.py

lint: install
	$(BIN)/ruff check .

format: install
	$(BIN)/ruff format .

clean:
	rm -rf $(VENV) var .pytest_cache .hypothesis
