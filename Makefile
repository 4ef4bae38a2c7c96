# Two commands do all set-up on a fresh machine with only Python 3.11+:
#   make run    opens the app on a sample site
#   make test   runs every test
VENV ?= .venv
PY := $(VENV)/bin/python
STAMP := $(VENV)/.installed

.PHONY: run test bench clean

$(STAMP): pyproject.toml
	python3 -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e '.[test]'
	touch $(STAMP)

run: $(STAMP)
	$(VENV)/bin/ropewright samples/raft-3to1-redirect.rig.json

test: $(STAMP)
	QT_QPA_PLATFORM=offscreen $(PY) -m pytest

bench: $(STAMP)
	QT_QPA_PLATFORM=offscreen $(PY) -m pytest tests/bench --benchmark-enable --benchmark-only

clean:
	rm -rf $(VENV) .pytest_cache .benchmarks
