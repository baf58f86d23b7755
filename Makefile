# The two set-up commands. Both create .venv and install what they need; nothing else has to be started.
PYTHON ?= python3
VENV := .venv
PY := $(VENV)/bin/python
STAMP := $(VENV)/.installed

BIDS_VALIDATOR := .tools/node_modules/.bin/bids-validator

.PHONY: demo test

$(STAMP): pyproject.toml
	@test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e '.[test]'
	@touch $(STAMP)

demo: $(STAMP)
	$(PY) -m stimlab.cli serve --data instance --demo

test: $(STAMP)
	@if [ ! -x /usr/bin/chromium ]; then \
	  if [ "$$(id -u)" = 0 ]; then \
	    echo "installing Debian's chromium for the browser tests"; \
	    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null; \
	  else \
	    echo "/usr/bin/chromium is missing: run 'sudo apt-get install chromium' (browser tests need it)"; exit 1; \
	  fi; \
	fi
	@if [ ! -x $(BIDS_VALIDATOR) ]; then \
	  if ! command -v npm >/dev/null; then \
	    if [ "$$(id -u)" = 0 ]; then \
	      echo "installing Debian's nodejs and npm for the BIDS validator"; \
	      apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq nodejs npm >/dev/null; \
	    else \
	      echo "npm is missing: run 'sudo apt-get install nodejs npm' (the BIDS export test needs it)"; exit 1; \
	    fi; \
	  fi; \
	  echo "installing the BIDS validator into .tools/"; \
	  mkdir -p .tools && npm install --prefix .tools --no-audit --no-fund --loglevel=error bids-validator@1.15.0 >/dev/null; \
	fi
	$(VENV)/bin/ruff check stimlab tests benchmarks
	STIMLAB_BIDS_VALIDATOR=$(BIDS_VALIDATOR) $(PY) -m pytest -n 2 --dist loadfile
