# Two commands do all set-up on a fresh machine:
#   make run   - creates .venv if missing, migrates SQLite, loads demo data, serves on :8000
#   make test  - creates .venv if missing, runs the whole suite (lint included)
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
HOST ?= 127.0.0.1:8000

.PHONY: run test test-prescott bench lint

$(BIN)/.installed: requirements.txt
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/pip install --quiet --upgrade pip
	$(BIN)/pip install --quiet -r requirements.txt
	touch $@

run: $(BIN)/.installed
	$(BIN)/python manage.py migrate --noinput
	$(BIN)/python manage.py load_demo
	$(BIN)/python manage.py runserver $(HOST)

test: $(BIN)/.installed
	$(BIN)/ruff check walkmath planner tests
	$(BIN)/python -m pytest $(PYTEST_ARGS); status=$$?; \
	  if [ $$status -eq 5 ]; then echo 'pytest collected no tests'; else exit $$status; fi

# The engine tests once more on OpenBLAS's oldest x86-64 kernel: rounding can depend on the kernel
# the CPU picks, and every x86-64 machine can run this one (DEVELOPERS.md).
test-prescott: $(BIN)/.installed
	OPENBLAS_CORETYPE=Prescott $(BIN)/python -m pytest tests/walkmath -q

bench: $(BIN)/.installed
	$(BIN)/python -m walkmath.bench

lint: $(BIN)/.installed
	$(BIN)/ruff check walkmath planner tests
	$(BIN)/ruff format --check walkmath planner tests
