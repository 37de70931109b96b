# Set-up on a fresh machine: `make demo` and `make test` each create .venv and install what they need.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: demo test bench clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(STAMP): $(BIN)/python pyproject.toml
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/python -m screening.demo

test: $(STAMP)
	$(BIN)/python -m pytest

bench: $(STAMP)
	$(BIN)/python benchmarks/report_single.py

clean:
	rm -rf $(VENV) out
