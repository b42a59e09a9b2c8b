# tracescreen: `make run` (set-up + dashboard on the demo scenario), `make test` (set-up + whole suite).
PYTHON ?= python3
VENV   ?= .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed-stamp

.PHONY: setup run screen test bench clean

$(STAMP): pyproject.toml
	@test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install -q --upgrade pip
	$(PY) -m pip install -q -e ".[test]"
	@touch $(STAMP)

setup: $(STAMP)

run: setup
	$(VENV)/bin/tracescreen screen scenario_data/lab_results_*.csv scenario_data/lab_results_*.xlsx \
		--limits limits --sites scenario_data/sites.csv --columns scenario_data/columns_eastbank.yaml \
		--out out/demo

test: setup
	$(PY) -m pytest

bench: setup
	$(PY) bench/bench_screen.py

clean:
	rm -rf $(VENV) out test-output
