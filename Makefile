# One-command set-up: `make demo` and `make test` create .venv on first use.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed

.PHONY: demo test lint bench clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/splitting demo --out demo-output

test: $(STAMP)
	$(BIN)/python -m pytest -q
	$(BIN)/ruff check splitting tests benchmarks

lint: $(STAMP)
	$(BIN)/ruff check splitting tests benchmarks
	$(BIN)/ruff format --check splitting tests benchmarks

bench: $(STAMP)
	$(BIN)/python -m pytest benchmarks --benchmark-enable -q -o addopts=""

clean:
	rm -rf $(VENV) demo-output build *.egg-info
