# coveryield: every set-up step a fresh Debian machine needs lives here.
PYTHON ?= python3
VENV   ?= .venv
PY      = $(VENV)/bin/python
STAMP   = $(VENV)/.installed

.PHONY: demo test test-fast bench browser clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e ".[dashboard,dev]"
	touch $(STAMP)

## browser: Debian's chromium for the browser tests (installed when missing and we are root)
browser:
	@if [ ! -x /usr/bin/chromium ]; then \
	  if [ "$$(id -u)" = "0" ]; then \
	    echo "installing Debian's chromium for the browser tests"; \
	    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null; \
	  else echo "note: /usr/bin/chromium missing and not root: browser tests will be skipped"; fi; \
	fi

## demo: serve the stakeholder dashboard on the demo catchment (and print the comparison)
demo: $(STAMP)
	$(VENV)/bin/coveryield demo

## test: create the venv, install everything the tests need, run the whole suite
test: $(STAMP) browser
	$(PY) -m pytest

## bench: speed benchmarks (print ratios measured in one run)
bench: $(STAMP)
	$(PY) benchmarks/run_all.py

clean:
	rm -rf $(VENV) .pytest_cache .hypothesis build *.egg-info
