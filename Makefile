# strayline: `make demo` opens the demo notebook in JupyterLab; `make test` runs every test.
# Both create .venv and install what they need on a fresh machine.

PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
ROOT   := $(if $(filter 0,$(shell id -u)),--allow-root,)
STAMP  := $(VENV)/.installed

.PHONY: setup demo test test-python test-js lint bench-check browser-deps bench screenshots clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)

$(STAMP): $(BIN)/python pyproject.toml js/package-lock.json
	$(BIN)/python -m pip install -q --upgrade pip
	rm -rf src/strayline/static
	$(BIN)/python -m pip install -q -e ".[test]"
	touch $(STAMP)

setup: $(STAMP)

## Debian's Chromium for the browser tests (test tools cannot download browsers here).
browser-deps:
	@command -v chromium >/dev/null 2>&1 || { \
	  SUDO=$$( [ "$$(id -u)" = 0 ] || echo sudo ); \
	  $$SUDO apt-get update -qq && \
	  DEBIAN_FRONTEND=noninteractive $$SUDO apt-get install -y -qq chromium fonts-dejavu-core; }

demo: setup
	$(BIN)/jupyter lab --ip=127.0.0.1 $(ROOT) example_notebooks/01_quick_start.ipynb

test-js:
	cd js && npm ci --no-audit --no-fund --loglevel=error && npm run typecheck && npm test

test-python: setup browser-deps
	$(BIN)/python -m pytest --nbval --nbval-current-env --nbval-sanitize-with tests/nbval_sanitize.cfg tests example_notebooks

lint: setup
	$(BIN)/ruff check src benchmarks

bench-check: setup
	$(BIN)/python benchmarks/run.py --quick --check

# the Python suite runs last, so that its summary closes the output
test: setup browser-deps lint test-js bench-check test-python

bench: setup
	$(BIN)/python benchmarks/run.py

screenshots: setup browser-deps
	STRAYLINE_SCREENSHOTS=docs $(BIN)/python -m pytest tests/browser -k themes

clean:
	rm -rf $(VENV) js/node_modules src/strayline/static .pytest_cache
