# volbench: two commands do all the set-up: `make run` and `make test`.
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP_RUN  := $(VENV)/.installed-run
STAMP_TEST := $(VENV)/.installed-test

.PHONY: run test bench samples clean

$(PY):
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip

$(STAMP_RUN): pyproject.toml | $(PY)
	$(PY) -m pip install --quiet -e .
	touch $@

$(STAMP_TEST): pyproject.toml | $(PY)
	$(PY) -m pip install --quiet -e ".[test]"
	touch $@ $(STAMP_RUN)

run: $(STAMP_RUN)
	$(VENV)/bin/volbench gui sample_prices/*.csv

test: $(STAMP_TEST)
	QT_QPA_PLATFORM=offscreen $(PY) -m pytest -q

bench: $(STAMP_TEST)
	QT_QPA_PLATFORM=offscreen $(PY) -m pytest -q -s tests/benchmarks -p no:cacheprovider -o addopts="--import-mode=importlib" -o python_files="bench_*.py test_*.py"

samples: $(STAMP_RUN)
	$(PY) -m volbench.samples --out sample_prices

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache
