# Elbow Room: set-up, run, test and benchmark commands.
PYTHON ?= python3
VENV := .venv
PY := $(VENV)/bin/python
STAMP := $(VENV)/.installed-$(shell cat pyproject.toml | cksum | cut -d' ' -f1)
TEST_STAMP := $(VENV)/.installed-test-$(shell cat pyproject.toml | cksum | cut -d' ' -f1)
QUICK ?=

.PHONY: run test bench lint clean

$(PY):
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip

$(STAMP): pyproject.toml | $(PY)
	$(PY) -m pip install --quiet -e .
	touch $@

$(TEST_STAMP): pyproject.toml | $(PY)
	$(PY) -m pip install --quiet -e '.[test]'
	touch $@ $(STAMP)

## Open the program on the bundled default cell (prints its report when there is no display).
run: $(STAMP)
	$(VENV)/bin/elbowroom

## Install the test extras and run the whole suite, lint and import contracts, and the benchmark smoke run.
test: $(TEST_STAMP)
	$(VENV)/bin/ruff check kinematics app tests bench
	$(VENV)/bin/lint-imports --no-cache
	$(PY) -m pytest
	$(MAKE) --no-print-directory bench QUICK=1

## Run every benchmark; QUICK=1 runs tiny sizes (the bars are then reported, not enforced).
bench: $(TEST_STAMP)
	@set -e; for b in bench/bench_*.py; do \
		echo "== $$b"; \
		QT_QPA_PLATFORM=offscreen $(PY) $$b $(if $(QUICK),--quick,); \
	done

lint: $(TEST_STAMP)
	$(VENV)/bin/ruff check kinematics app tests bench
	$(VENV)/bin/ruff format --check kinematics app tests bench

clean:
	rm -rf $(VENV) .pytest_cache .ruff_cache .hypothesis
