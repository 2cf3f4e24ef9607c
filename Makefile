# Two commands on a fresh machine: `make run` and `make test`.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed
SITE ?= sample_sites/maple_hollow/scenario.toml
PORT ?= 8501

.PHONY: run test bench lint venv clean

# The virtual environment is rebuilt whenever pyproject.toml is newer than the last install.
$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e ".[test]"
	touch $(STAMP)

venv: $(STAMP)

run: $(STAMP)
	$(BIN)/python -m explorer $(SITE) --port $(PORT)

test: $(STAMP)
	$(BIN)/python -m ruff check core explorer tests
	$(BIN)/python -m pytest -q

bench: $(STAMP)
	$(BIN)/python -m pytest -q -s tests/bench -p no:cacheprovider --override-ini="addopts="

lint: $(STAMP)
	$(BIN)/python -m ruff check core explorer tests
	$(BIN)/python -m mypy

clean:
	rm -rf $(VENV) .pytest_cache .mypy_cache
