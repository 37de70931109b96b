# Set-up on a fresh machine: `make demo` and `make test` each create .venv and install what they need.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: demo test bench clean browser serve

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(STAMP): $(BIN)/python pyproject.toml
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/python -m screening.demo

test: $(STAMP) browser
	$(BIN)/python -m pytest

# The browser tests drive Debian's chromium (tests/test_web_browser.py). Installed here where we can
# (root with apt-get); elsewhere those tests are skipped, and this says so.
CHROMIUM ?= /usr/bin/chromium
browser:
	@if [ -x "$(CHROMIUM)" ]; then :; \
	elif [ "$$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then \
	  echo "installing Debian's chromium and chromium-driver for the browser tests (apt-get)"; \
	  (apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium chromium-driver >/dev/null) \
	  || echo "browser tests will be skipped: apt-get could not install chromium"; \
	else \
	  echo "browser tests will be skipped: no $(CHROMIUM), and installing it needs root and apt-get (apt-get install chromium)"; \
	fi

serve: $(STAMP)
	$(BIN)/screening serve --open

bench: $(STAMP)
	$(BIN)/python benchmarks/report_single.py

clean:
	rm -rf $(VENV) out
