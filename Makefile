# The two commands a newcomer types on a fresh clone: `make demo` and `make test`.
# Each creates .venv and installs the project itself, so nothing else is needed first.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
DEMO_DB ?= demo.sqlite
DEMO_OUT ?= demo_export

.PHONY: demo test check lint install bench clean browser

$(BIN)/summarize: pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/pip install --quiet --upgrade pip
	# torch first and pinned: the CPU wheel; an unpinned torch resolves to a CUDA build.
	$(BIN)/pip install --quiet torch==2.13.0
	$(BIN)/pip install --quiet -e '.[dev]'
	touch $(BIN)/summarize

install: $(BIN)/summarize

demo: install
	rm -f $(DEMO_DB) $(DEMO_DB)-wal $(DEMO_DB)-shm
	-$(BIN)/summarize run demo_archive --db $(DEMO_DB)
	$(BIN)/summarize score --db $(DEMO_DB)
	$(BIN)/summarize compare --db $(DEMO_DB) --budget reference
	mkdir -p $(DEMO_OUT)
	$(BIN)/summarize export --db $(DEMO_DB) --format html --out $(DEMO_OUT)/summaries.html
	$(BIN)/summarize export --db $(DEMO_DB) --format csv --out $(DEMO_OUT)/summaries.csv
	$(BIN)/summarize report --db $(DEMO_DB) --out $(DEMO_OUT)/report.html
	$(BIN)/summarize aspects demo_archive/incidents/INC-2024-019_ps4_pump_bearing_failure.pdf --db $(DEMO_DB)
	$(BIN)/summarize digest new --db $(DEMO_DB) --name incident-causes --folder demo_archive/incidents --aspect cause --budget 6 --out $(DEMO_OUT)/digest.html
	@echo "store: $(DEMO_DB)   exports: $(DEMO_OUT)/summaries.html, $(DEMO_OUT)/summaries.csv   report: $(DEMO_OUT)/report.html   digest: $(DEMO_OUT)/digest.html"

lint: install
	$(BIN)/ruff check .
	$(BIN)/lint-imports

# The browser tests drive the distribution's chromium (never a browser Playwright
# would download); installed here when missing (needs root, as CI runs).
browser:
	command -v chromium >/dev/null || (apt-get update && apt-get install -y chromium)

test: lint browser
	$(BIN)/python -m pytest -q

# The edit loop: lint and the quick tests (slow end-to-end ones are left to `make test`).
check: install
	$(BIN)/ruff check .
	$(BIN)/lint-imports
	$(BIN)/python -m pytest -q -m "not slow" -n auto

bench: install
	$(BIN)/python -m bench

clean:
	rm -rf $(VENV) $(DEMO_DB) $(DEMO_DB)-wal $(DEMO_DB)-shm $(DEMO_OUT)
