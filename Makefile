# profilecheck: two commands on a fresh machine, `make demo` and `make test`.
# Each target makes .venv from pyproject.toml itself.
PY ?= python3
VENV := .venv
VPY := $(VENV)/bin/python
STAMP := $(VENV)/.installed
TSTAMP := $(VENV)/.installed-test
DEMO_OUT ?= demo_out

.PHONY: demo test bench clean venv

$(VPY):
	$(PY) -m venv $(VENV)
	$(VPY) -m pip install --quiet --upgrade pip

$(STAMP): pyproject.toml | $(VPY)
	$(VPY) -m pip install --quiet -e .
	touch $@

$(TSTAMP): pyproject.toml | $(VPY)
	$(VPY) -m pip install --quiet -e '.[test]'
	touch $@ $(STAMP)

venv: $(STAMP)

demo: $(STAMP)
	$(VENV)/bin/profilecheck demo --out $(DEMO_OUT)

test: $(TSTAMP)
	QT_QPA_PLATFORM=offscreen $(VPY) -m pytest

bench: $(STAMP)
	@for b in benchmarks/*.py; do echo "== $$b"; $(VPY) $$b || exit 1; done

clean:
	rm -rf $(VENV) $(DEMO_OUT) build *.egg-info
