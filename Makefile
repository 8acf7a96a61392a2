# `make demo` and `make test` each create .venv when it is missing.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed

.PHONY: demo test bench clean

$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test,dask]'
	touch $(STAMP)

DEMO := requirements/trainer-jet.yaml

demo: $(STAMP)
	$(BIN)/sizing solve $(DEMO)
	$(BIN)/sizing diagram $(DEMO) -o out/demo-diagram.png --data out/demo-curves.csv
	$(BIN)/sizing report $(DEMO) -o out/demo-review.html

test: $(STAMP)
	$(BIN)/python -m pytest -q

bench: $(STAMP)
	$(BIN)/python bench/run.py

clean:
	rm -rf $(VENV) build *.egg-info out
