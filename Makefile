# Two commands set everything up on a fresh machine: `make demo` and `make test`.
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
PIP    := $(PY) -m pip

.PHONY: demo test bench docs clean

$(PY):
	$(PYTHON) -m venv $(VENV)
	$(PIP) install --quiet --upgrade pip

# Re-install whenever pyproject.toml changes.
$(VENV)/.install-stamp: pyproject.toml | $(PY)
	$(PIP) install --quiet -e .
	touch $@

$(VENV)/.install-stamp-test: pyproject.toml | $(PY)
	$(PIP) install --quiet -e ".[test]"
	touch $@

$(VENV)/.install-stamp-docs: pyproject.toml | $(PY)
	$(PIP) install --quiet -e ".[docs]"
	touch $@

demo: $(VENV)/.install-stamp
	$(VENV)/bin/thzarray demo --out gallery --force

test: $(VENV)/.install-stamp-test
	$(VENV)/bin/ruff check thzarray tests benchmarks designs
	$(PY) -m pytest

bench: $(VENV)/.install-stamp-test
	$(PY) -m benchmarks

# The API reference from the docstrings; every Sphinx warning is an error.
docs: $(VENV)/.install-stamp-docs
	$(VENV)/bin/sphinx-build -W --keep-going -b html docs docs/_build/html

clean:
	rm -rf $(VENV) .pytest_cache .hypothesis docs/_build docs/api
