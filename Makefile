# One task runner for the README, the developers and CI.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed

.PHONY: app test test-nojit test-fast lint bench bench-table demo-routes clean

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
	$(MAKE) test-nojit

## The physics and plan tests again with the kernels' source run as plain Python by numba.
test-nojit: $(STAMP)
	NUMBA_DISABLE_JIT=1 PACING_KERNELS=compiled $(BIN)/python -m pytest -q \
	  tests/test_kernels.py tests/test_physics_*.py tests/test_plan_simulate.py \
	  tests/test_plan_steady_model.py tests/test_plan_prediction.py tests/test_plan_verify.py \
	  tests/test_plan_cycling.py tests/test_plan_simulate_kernels.py \
	  tests/test_compare_sensitivity.py tests/test_compare_sampled_uncertainty.py tests/test_golden.py

## The fast part only (no browser, no slow tests).
test-fast: $(STAMP)
	$(BIN)/python -m pytest -q -m "not slow and not browser and not postgres"

## Lint and type check (ruff: style, imports, complexity; mypy: the pacing package).
lint: $(STAMP)
	$(BIN)/ruff check pacing tests bench app.py ui demo_routes
	$(BIN)/mypy

## Benchmarks: the speed table first (it fails when a ratio regresses), then every other
## script; any script's non-zero exit fails the target, after all have run.
bench: $(STAMP)
	failed=""; \
	$(BIN)/python bench/bench_table.py || failed="bench/bench_table.py"; \
	for f in bench/bench_*.py; do \
		[ "$$f" = bench/bench_table.py ] && continue; \
		echo "== $$f"; $(BIN)/python $$f || failed="$$failed $$f"; \
	done; \
	if [ -n "$$failed" ]; then echo "FAILED: $$failed"; exit 1; fi

## The speed table alone; `make bench-table ARGS=--update-baseline` rewrites bench/baseline.json.
bench-table: $(STAMP)
	$(BIN)/python bench/bench_table.py $(ARGS)

demo-routes: $(STAMP)
	$(BIN)/python demo_routes/make_demo_routes.py

clean:
	rm -rf $(VENV) .pytest_cache .hypothesis
