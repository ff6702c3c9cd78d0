# Every target creates/uses the project's own virtual environment in .venv.
PY ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: demo test bench lint docs templates preview clean

$(STAMP): pyproject.toml
	$(PY) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e ".[dev]"
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/python examples/demo.py

test: $(STAMP)
	$(BIN)/python -m pytest -q

bench: $(STAMP)
	$(BIN)/python benchmarks/bench_solver.py
	$(BIN)/python benchmarks/bench_studies.py
	$(BIN)/python benchmarks/bench_batch.py
	$(BIN)/python benchmarks/bench_frequency.py
	$(BIN)/python benchmarks/bench_latency.py

lint: $(STAMP)
	$(BIN)/ruff check xlfuncs tests benchmarks examples
	$(BIN)/ruff format --check xlfuncs tests benchmarks examples
	$(BIN)/mypy

docs: $(STAMP)
	$(BIN)/python -m xlfuncs.docgen docs/FUNCTIONS.md

templates: $(STAMP)
	$(BIN)/python -m xlfuncs.templates workbook_templates

preview: $(STAMP)  # needs Debian's libreoffice-calc-nogui and poppler-utils (see tools/render_preview.py)
	$(BIN)/python tools/render_preview.py out/preview workbook_templates/*.xlsx

clean:
	rm -rf $(VENV) .pytest_cache .mypy_cache .ruff_cache build *.egg-info
