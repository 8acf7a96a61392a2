# `make demo` and `make test` each create .venv when it is missing.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed

.PHONY: demo test quick fuzz bench clean browser

$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet --no-compile -e '.[test,dask]'    # modules compile on first import
	touch $(STAMP)

DEMO := requirements/trainer-jet.yaml

demo: $(STAMP)
	$(BIN)/sizing solve $(DEMO)
	$(BIN)/sizing diagram $(DEMO) -o out/demo-diagram.png --data out/demo-curves.csv
	$(BIN)/sizing report $(DEMO) -o out/demo-review.html

# Headless Chromium for the browser tests of `sizing explore` (tests/test_explore_browser.py):
# Debian's package, installed when missing and apt-get runs as root; elsewhere those tests
# skip and say why. Playwright drives it (installed with the test extras; it downloads no browser).
CHROMIUM := /usr/bin/chromium

browser:
	@test -x $(CHROMIUM) || { \
	  if command -v apt-get >/dev/null 2>&1 && [ "$$(id -u)" = 0 ]; then \
	    echo "installing Debian's chromium for the browser tests"; \
	    { apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends \
	        chromium fonts-liberation >/dev/null; } || echo "could not install chromium: the browser tests will skip"; \
	  else echo "no $(CHROMIUM) and no apt-get as root here: the browser tests will skip"; fi; }

# every test, the same hypothesis examples on every run, spread over the machine's cores
# (pytest-xdist); the 15 slowest are listed at the end
test: $(STAMP) browser
	$(BIN)/python -m pytest -q -rs -n auto --durations=15

# the same without the long groups (marked slow): brute-force grids, random sets, fuzzing
quick: $(STAMP)
	$(BIN)/python -m pytest -q -m "not slow" -n auto --durations=15

# new hypothesis examples: prints the seed; `make fuzz SEED=<seed>` replays a run
fuzz: $(STAMP)
	@seed=$${SEED:-$$(od -An -N4 -tu4 /dev/urandom | tr -d ' ')}; \
	echo "hypothesis seed $$seed (replay: make fuzz SEED=$$seed)"; \
	$(BIN)/python -m pytest -q -m hypothesis --hypothesis-profile=fuzz --hypothesis-seed=$$seed; \
	status=$$?; echo "hypothesis seed $$seed (replay: make fuzz SEED=$$seed)"; exit $$status

bench: $(STAMP)
	$(BIN)/python bench/run.py
	$(BIN)/python bench/explore.py

clean:
	rm -rf $(VENV) build *.egg-info out
