# The two commands a newcomer needs: `make demo` and `make test`.
# Both create .venv on first use and reinstall only when pyproject.toml changes.
PYTHON ?= python3
VENV := .venv
PY := $(VENV)/bin/python
STAMP := $(VENV)/.installed-stamp
DEMO_OUT ?= out/demo

.PHONY: demo test test-all check bench clean

$(STAMP): pyproject.toml
	@$(PYTHON) -c 'import sys; sys.exit(0 if sys.version_info >= (3, 11) else "bemcheck needs Python 3.11 or newer; set PYTHON=python3.11")'
	@test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e '.[test]'
	@touch $(STAMP)

demo: $(STAMP)
	$(VENV)/bin/bemcheck run cases/demo.toml --out $(DEMO_OUT)

test: $(STAMP)
	$(PY) -m pytest -q -m "not slow"

test-all: $(STAMP)
	$(PY) -m pytest -q

# Lint and format check (ruff); `make test` stays what CI runs.
check: $(STAMP)
	$(VENV)/bin/ruff check bemcheck geometry tests bench
	$(VENV)/bin/ruff format --check bemcheck geometry tests bench

bench: $(STAMP)
	$(PY) bench/run_bench.py

clean:
	rm -rf $(VENV) out .pytest_cache .hypothesis
