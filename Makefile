# loadcore developer tasks. `make demo` starts the app on the demo data; `make test` runs the suite.

PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed
DEMO_HISTORY := demo_data/history.csv
DEMO_MODEL := demo_data/demo_model.json
DEMO_OVERRIDES := demo_data/overrides.txt
PORT ?= 8501

.PHONY: setup chromium demo test bench lint

# The venv sees the machine's site packages so an offline machine with the dependencies already
# installed needs nothing from the network; pip fills in whatever is missing.
setup: $(STAMP)

$(STAMP): pyproject.toml
	$(PYTHON) -m venv --system-site-packages $(VENV)
	$(BIN)/pip install --quiet -e '.[test]'
	touch $(STAMP)

chromium:
	@if command -v chromium >/dev/null 2>&1; then \
		echo "chromium found: $$(command -v chromium)"; \
	else \
		SUDO=$$( [ "$$(id -u)" -eq 0 ] || echo sudo ); \
		$$SUDO apt-get update && $$SUDO apt-get install -y chromium; \
	fi

# The demo model is refitted when the history or its year-end overrides change.
$(DEMO_MODEL): $(STAMP) $(DEMO_HISTORY) $(DEMO_OVERRIDES)
	$(BIN)/loadcore fit $(DEMO_HISTORY) --out $(DEMO_MODEL) --search quick \
		--override "$$(cat $(DEMO_OVERRIDES))"

demo: setup $(DEMO_MODEL)
	$(BIN)/loadcore app --port $(PORT)

test: setup chromium
	$(BIN)/python -m pytest -q

bench: setup
	$(BIN)/python benchmarks/run.py

lint: setup
	$(BIN)/python -m ruff check .
	$(BIN)/python -m ruff format --check .
