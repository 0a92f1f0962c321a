# One entry point: `make demo` runs the main job on the bundled data, `make test` runs every
# suite after installing what it needs. See DEVELOPERS.md.
SHELL := /bin/bash
.DEFAULT_GOAL := demo

VENV := .venv
PY := $(CURDIR)/$(VENV)/bin/python
RLIB := $(CURDIR)/.rlib
CLI := target/release/trajweave
DEMO_CSV := demo-data/kidney_registry.csv
DEMO_COLUMNS := --subject patient --time years --response egfr \
	--covariate age --covariate female --covariate diabetes --covariate acr
# The command that made demo-data/kidney_registry.csv (checked byte for byte by `make test`).
DEMO_SIMULATE := simulate --subjects 3000 --seed 2026 --digits 2

export PYO3_PYTHON := $(PY)
export TRAJWEAVE_CLI := $(CURDIR)/$(CLI)
export R_LIBS := $(RLIB)

.PHONY: demo cli test setup lint bench rust-test python python-test r r-test cross-test \
	demo-data demo-data-check fixtures-check clean

demo: cli
	mkdir -p out
	$(CLI) report --out out/report.html

cli:
	cargo build --release -p trajweave-cli

test: setup lint rust-test python-test r-test cross-test demo-data-check fixtures-check
	@echo "All suites passed."

setup:
	scripts/setup-r.sh
	scripts/setup-python.sh

lint:
	cargo fmt --all -- --check
	cargo clippy --workspace --all-targets -- -D warnings

rust-test:
	cargo test --workspace

python: setup
	cd bindings-python && VIRTUAL_ENV=$(CURDIR)/$(VENV) PATH=$(CURDIR)/$(VENV)/bin:$$PATH \
		maturin develop --release --quiet

python-test: python
	$(PY) -m pytest -q tests/python --doctest-modules bindings-python/python/trajweave

r: setup
	mkdir -p $(RLIB)
	R CMD INSTALL --no-test-load --library=$(RLIB) bindings-r

r-test: r
	Rscript -e 'library(testthat); library(trajweave, lib.loc = "$(RLIB)"); test_dir("bindings-r/tests/testthat", stop_on_failure = TRUE)'

cross-test: cli python r
	$(PY) -m pytest -q tests/cross

demo-data: cli
	$(CLI) $(DEMO_SIMULATE) --out $(DEMO_CSV)

demo-data-check: cli
	$(CLI) $(DEMO_SIMULATE) --out - | cmp - $(DEMO_CSV)

fixtures-check: setup
	$(PY) tests/reference/describe_reference.py --check
	$(PY) tests/reference/kernel_py.py --check
	$(PY) tests/reference/change_py.py --check
	Rscript tests/reference/lowess_r.R --check
	$(PY) tests/reference/lowess_py.py --check
	Rscript tests/reference/supsmu_r.R --check
	Rscript tests/reference/spline_r.R --check
	$(PY) tests/reference/spline_py.py --check
	$(PY) tests/reference/spline_exact.py --check
	Rscript tests/reference/bands_r.R --check
	Rscript tests/reference/chickweight_r.R --check
	$(PY) tests/reference/covariates_py.py --check
	Rscript tests/reference/residuals_r.R --check
	$(PY) tests/reference/residuals_py.py --check
	$(PY) tests/reference/variogram_slope_py.py --check
	Rscript tests/reference/variogram_slope_r.R --check
	$(PY) tests/reference/screen_py.py --check
	Rscript tests/reference/screen_nlme_r.R --check

# Speed: criterion per smoother, then ours vs the reference libraries side by side.
bench: cli python r
	cargo bench -p trajweave-core --bench smoothers
	cargo bench -p trajweave-core --bench correlation
	$(PY) scripts/bench_compare.py
	$(PY) scripts/bench_correlation.py
	$(PY) scripts/bench_report.py

clean:
	cargo clean
	rm -rf $(VENV) $(RLIB) bindings-r/src/rust/target
