# zerotrace: `make run` opens the window with a bundled sample; `make test` runs the whole suite
# headless; `make bench` prints the benchmark ratios; `make soak` plays 20,000 random actions
# on the window (hangs, unhandled exceptions, memory). Each creates .venv first if it is missing.
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed

.PHONY: run test bench soak lint demo clean

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

# The long soak: SOAK_ACTIONS random actions (seed SOAK_SEED) in a child process; prints
# one JSON line of figures. A hang ends it after 60 s without progress, with every
# thread's stack on stderr.
SOAK_ACTIONS ?= 20000
SOAK_SEED    ?= 1
soak: $(STAMP)
	QT_QPA_PLATFORM=offscreen timeout 7200 $(PY) tests/test_soak.py --actions $(SOAK_ACTIONS) --seed $(SOAK_SEED)

lint: $(STAMP)
	$(VENV)/bin/ruff check .

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache .ruff_cache .hypothesis
