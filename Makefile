# zerotrace: `make run` opens the window with a bundled sample; `make test` runs the whole suite
# headless; `make bench` prints the benchmark ratios. Each creates .venv first if it is missing.
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed

.PHONY: run test bench lint demo clean

$(STAMP): pyproject.toml
	test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e '.[test]'
	touch $(STAMP)

run: $(STAMP)
	$(VENV)/bin/zerotrace

demo: $(STAMP)
	$(VENV)/bin/zerotrace solve --worksheet samples/cooling-water-friction.json --steps

test: $(STAMP)
	QT_QPA_PLATFORM=offscreen $(PY) -m pytest -q

bench: $(STAMP)
	@for f in benchmarks/bench_*.py; do echo "== $$f"; QT_QPA_PLATFORM=offscreen $(PY) $$f || exit 1; done

lint: $(STAMP)
	$(VENV)/bin/ruff check .

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache .ruff_cache .hypothesis
