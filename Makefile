# Set-up and the two everyday commands. Each target creates the virtual environment if missing.
PYTHON ?= python3
VENV ?= .venv
BIN := $(VENV)/bin

.PHONY: demo test lint bench clean

$(BIN)/beamwall: pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e ".[report,test,raw]"
	touch $(BIN)/beamwall

demo: $(BIN)/beamwall
	$(BIN)/beamwall demo -o demo-out --force

test: $(BIN)/beamwall
	$(BIN)/python -m pytest -q

lint: $(BIN)/beamwall
	$(BIN)/python -m pip install --quiet ruff mypy
	$(BIN)/ruff check src tests
	$(BIN)/mypy src/beamwall

bench: $(BIN)/beamwall
	$(BIN)/python benchmarks/bench_24mp.py

clean:
	rm -rf $(VENV) demo-out
