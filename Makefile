# The two commands of the README bootstrap their own virtual environment.
PYTHON ?= python3
VENV   ?= .venv
PY     := $(VENV)/bin/python
OUT    ?= demo_output

.PHONY: demo test fuzz bench lint clean

$(VENV)/.base: pyproject.toml
	test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e .
	touch $@

$(VENV)/.test: $(VENV)/.base pyproject.toml
	$(PY) -m pip install --quiet -e ".[test]"
	touch $@

demo: $(VENV)/.base
	$(PY) -m siteexposure demo --out $(OUT)

test: $(VENV)/.test
	$(PY) -m ruff check siteexposure tests benchmarks
	$(PY) -m pytest -q -m "not fuzz"

fuzz: $(VENV)/.test
	$(PY) -m pytest -q -m fuzz -p no:cacheprovider

bench: $(VENV)/.test
	$(PY) benchmarks/bench_engine.py

lint: $(VENV)/.test
	$(PY) -m ruff check siteexposure tests benchmarks

clean:
	rm -rf $(VENV) $(OUT) .pytest_cache
