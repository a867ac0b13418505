# One-command set-up: `make demo` and `make test` create .venv on first use.
# The versions the tests run against are pinned in requirements.lock (a pip constraints file);
# the package's own ranges in pyproject.toml stay open. `make lock` refreshes the pins.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed
LOCK   := requirements.lock

.PHONY: demo test lint bench lock clean

$(STAMP): pyproject.toml $(LOCK)
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -c $(LOCK) -e '.[test]'
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

# Resolve the newest versions that satisfy pyproject.toml in a throw-away environment and pin them.
lock:
	rm -rf .lock-venv
	$(PYTHON) -m venv .lock-venv
	.lock-venv/bin/python -m pip install --quiet --upgrade pip
	.lock-venv/bin/python -m pip install --quiet -e '.[test]'
	( echo "# Pinned versions the tests run against; regenerate with 'make lock'. Used as pip constraints."; \
	  .lock-venv/bin/python -m pip freeze --exclude-editable | grep -v '^-e ' ) > $(LOCK).part
	mv $(LOCK).part $(LOCK)
	rm -rf .lock-venv

clean:
	rm -rf $(VENV) demo-output build *.egg-info
