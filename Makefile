# Tasks for contributors; every target runs in the checkout's .venv (make venv makes it, as the README does).
# `make` alone runs the fast tests. CI is `bash .ci/run` (a fresh venv, the whole suite, ruff, mypy).

PYTHON ?= .venv/bin/python
BIN := $(dir $(PYTHON))
OUT ?= tellwave-demo

.DEFAULT_GOAL := test
.PHONY: help venv test test-all lint bench-quick demo hooks ci

help:  ## list the targets
	@grep -E '^[a-z-]+:.*## ' $(MAKEFILE_LIST) | sed -E 's/:.*## /\t/'

venv:  ## the .venv of the README, with the test and lint tools and pre-commit
	python3 -m venv .venv && .venv/bin/pip install -e '.[dev]'

test:  ## the fast suite on every core: everything but the slow real-record runs and the wheel install
	$(PYTHON) -m pytest -q -m "not slow and not install" -n auto

test-all:  ## what CI checks, in this .venv: the whole suite on every core, then ruff and mypy
	$(PYTHON) -m pytest -m "" -n auto
	$(MAKE) lint

lint:  ## ruff over the checkout and mypy over engine/ (configured in pyproject.toml)
	$(BIN)ruff check .
	$(BIN)mypy

bench-quick:  ## the quick form of every bench that has one (several minutes in all)
	$(PYTHON) -m bench.speed --quick
	$(PYTHON) -m bench.evidence_rates --quick
	$(PYTHON) -m bench.confusion --quick
	$(PYTHON) -m bench.plan_agreement --quick

demo:  ## diagnose the demo plant into $(OUT)/ (about a minute)
	$(BIN)tellwave demo --out $(OUT)

hooks:  ## install the pre-commit hooks of .pre-commit-config.yaml into .git
	$(BIN)pre-commit install

ci:  ## CI as it runs: a fresh .venv, the whole suite, ruff and mypy
	bash .ci/run
