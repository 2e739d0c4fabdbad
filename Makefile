# Two commands do all set-up on a fresh machine:
#   make run   - creates .venv if missing, migrates SQLite, loads demo data, serves on :8000
#                with DEBUG off as in production (own error pages, static files through WhiteNoise),
#                and starts one background worker beside the server (manage.py db_worker: portfolio
#                runs; it stops with the server);
#                the secret key is generated once into .secret_key (git-ignored). DEBUG=1 make run
#                gives Django's debug pages instead.
#   make test  - creates .venv if missing, runs the whole suite (lint included)
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
HOST ?= 127.0.0.1:8000
SECRET_KEY_FILE := .secret_key
# A key from the environment wins; otherwise the local generated one.
RUN_ENV = SECRET_KEY="$${SECRET_KEY:-$$(cat $(SECRET_KEY_FILE))}"

.PHONY: run test test-prescott bench bench-portfolio loadtest lint

$(BIN)/.installed: requirements.txt
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/pip install --quiet --upgrade pip
	$(BIN)/pip install --quiet -r requirements.txt
	touch $@

$(SECRET_KEY_FILE):
	umask 077 && $(PYTHON) -c "import secrets; print(secrets.token_urlsafe(48))" > $@

run: $(BIN)/.installed $(SECRET_KEY_FILE)
	$(RUN_ENV) $(BIN)/python manage.py migrate --noinput
	$(RUN_ENV) $(BIN)/python manage.py load_demo
	$(RUN_ENV) $(BIN)/python manage.py collectstatic --noinput --verbosity 0
	$(RUN_ENV) $(BIN)/python manage.py db_worker --no-reload --verbosity 0 & worker=$$!; \
	  trap 'kill $$worker 2>/dev/null' EXIT INT TERM; \
	  $(RUN_ENV) $(BIN)/python manage.py runserver $(HOST)

test: $(BIN)/.installed
	$(BIN)/ruff check walkmath planner tests fixtures manage.py
	$(BIN)/python -m pytest $(PYTEST_ARGS); status=$$?; \
	  if [ $$status -eq 5 ]; then echo 'pytest collected no tests'; else exit $$status; fi

# The engine tests once more on OpenBLAS's oldest x86-64 kernel: rounding can depend on the kernel
# the CPU picks, and every x86-64 machine can run this one (DEVELOPERS.md).
test-prescott: $(BIN)/.installed
	OPENBLAS_CORETYPE=Prescott $(BIN)/python -m pytest tests/walkmath -q

bench: $(BIN)/.installed
	$(BIN)/python -m walkmath.bench

bench-portfolio: $(BIN)/.installed
	$(BIN)/python -m walkmath.bench portfolio

# gunicorn with 2 workers, 8 concurrent clients on the demo scenarios (loads them first)
loadtest: $(BIN)/.installed $(SECRET_KEY_FILE)
	$(RUN_ENV) $(BIN)/python manage.py migrate --noinput
	$(RUN_ENV) $(BIN)/python manage.py load_demo
	$(RUN_ENV) $(BIN)/python manage.py loadtest

lint: $(BIN)/.installed
	$(BIN)/ruff check walkmath planner tests fixtures manage.py
	$(BIN)/ruff format --check walkmath planner tests fixtures manage.py
