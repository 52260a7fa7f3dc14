# One task runner for the README, the developers and CI.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed

.PHONY: app test test-fast lint bench demo-routes clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

## Start the web app on the demo course (installs first).
app: $(STAMP)
	$(BIN)/streamlit run app.py

## Run the whole test suite (installs first).
test: $(STAMP)
	$(BIN)/python -m pytest -q

## The fast part only (no browser, no slow tests).
test-fast: $(STAMP)
	$(BIN)/python -m pytest -q -m "not slow and not browser and not postgres"

## Lint and type check (ruff: style, imports, complexity; mypy: the pacing package).
lint: $(STAMP)
	$(BIN)/ruff check pacing tests bench app.py ui demo_routes
	$(BIN)/mypy

bench: $(STAMP)
	for f in bench/bench_*.py; do echo "== $$f"; $(BIN)/python $$f || exit 1; done

demo-routes: $(STAMP)
	$(BIN)/python demo_routes/make_demo_routes.py

clean:
	rm -rf $(VENV) .pytest_cache .hypothesis
