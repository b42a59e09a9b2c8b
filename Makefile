# tracescreen: `make run` (set-up + dashboard on the demo scenario), `make test` (set-up + whole suite).
PYTHON ?= python3
VENV   ?= .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed-stamp

.PHONY: setup run screen report test bench bench-dashboard clean

$(STAMP): pyproject.toml
	@test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install -q --upgrade pip
	PYTHONWARNINGS=ignore::UserWarning $(PY) -m pip install -q -e ".[test,dashboard,distributed]"  # no setuptools notice on editable installs
	@touch $(STAMP)

# the package's modules compiled once (where PYTHONDONTWRITEBYTECODE is set, every run compiled them again: 0.1-0.2 s)
setup: $(STAMP)
	@$(PY) -m compileall -q src > /dev/null

# The demo scenario (invented): its lab files, sites, column mapping and limit tables.
DEMO_RESULTS := $(wildcard scenario_data/lab_results_*.csv) $(wildcard scenario_data/lab_results_*.xlsx)
DEMO_LIMITS  := $(foreach f,$(wildcard limits/*.yaml) scenario_data/limits,--limits $(f))
DEMO_DATA    := $(DEMO_RESULTS) $(DEMO_LIMITS) --sites scenario_data/sites.csv \
                --columns scenario_data/columns_eastbank.yaml

DEMO_WS      := out/demo-workspace
# the demo laboratory's QC summary (the Lab QC page, and the lab QC review of screen and report)
DEMO_QC      := --qc scenario_data/lab_qc_fernleigh_2021-2025.csv
# where `make run` serves the dashboard: make run PORT=8060 HOST=127.0.0.1 (HOST=0.0.0.0 opens it to the
# network: the dashboard has no login, so only on a trusted network; README "Serving the dashboard")
PORT         ?= 8050
HOST         ?= 127.0.0.1

# the demo lab files go into a workspace (a re-run adds nothing); the dashboard reads the workspace
run: setup
	$(VENV)/bin/tracescreen import $(DEMO_RESULTS) --workspace $(DEMO_WS) --columns scenario_data/columns_eastbank.yaml \
		--sites scenario_data/sites.csv
	$(VENV)/bin/tracescreen dashboard --workspace $(DEMO_WS) $(DEMO_LIMITS) --sites scenario_data/sites.csv \
		$(DEMO_QC) --host $(HOST) --port $(PORT)

screen: setup
	$(VENV)/bin/tracescreen screen $(DEMO_DATA) $(DEMO_QC) --out out/demo

report: setup
	$(VENV)/bin/tracescreen report $(DEMO_DATA) $(DEMO_QC) --cover scenario_data/report_cover.yaml --out out/demo/report.html \
		--pdf out/demo/report.pdf --docx out/demo/report.docx --xlsx out/demo/report.xlsx

test: setup
	$(VENV)/bin/ruff check .
	$(PY) -m pytest

bench: setup
	$(PY) bench/bench_screen.py
	$(PY) bench/bench_stats.py
	$(PY) bench/bench_retest.py
	$(PY) bench/bench_workspace.py
	$(PY) bench/bench_wells.py

bench-dashboard: setup
	$(PY) bench/bench_dashboard.py

clean:
	rm -rf $(VENV) out test-output
