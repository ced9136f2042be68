# swellgrid — every target first makes sure the build dependencies are present,
# so that `make demo` and `make test` are the whole set-up on a fresh Debian machine.

GO      ?= go
# bash with pipefail, so that a recipe piping `go test` through tee fails
# when the benchmark or test fails (tee alone would exit 0).
SHELL   := /bin/bash
.SHELLFLAGS := -o pipefail -c
BIN     := bin/swellgrid
DEMO_OUT ?= demo-out
SUDO    := $(shell [ "$$(id -u)" = 0 ] || echo sudo)
# Debian packages the build needs (cgo NetCDF and GEOS), and every outside tool the
# tests use as a reference: ncgen/ncdump (netcdf-bin), GDAL's ogrinfo and
# gdal_contour (gdal-bin) and osgeo (python3-gdal), Debian's python3 with numpy,
# scipy, netCDF4, xarray and cftime (fixtures and independent computations),
# R with evd, Slurm and munge (single-node cluster test), node and npm (the
# DuckDB reader check). A failed install fails `make test`: under CI=true
# (.ci/run) a test whose tool is missing fails instead of skipping
# (internal/testtool), so nothing is skipped quietly.
BUILD_DEBS := libnetcdf-dev libproj-dev libgeos-dev pkg-config
TEST_DEBS  := netcdf-bin gdal-bin python3-gdal python3-numpy python3-scipy python3-netcdf4 \
	python3-xarray python3-cftime r-base-core r-cran-evd slurm-wlm munge nodejs
# The npm DuckDB package the export tests read our Parquet files with (the
# version export/export_ext_test.go pins), installed outside the repository.
DUCKDB_NODE_API := @duckdb/node-api@1.5.6-r.1
SWELLGRID_NODE_CACHE ?= $(HOME)/.cache/swellgrid-test/duckdb-node
export SWELLGRID_NODE_CACHE
STATICCHECK_VERSION := v0.8.2
# the report's browser check (headless chromium) and its colour-map reference
TEST_DEBS  += chromium python3-matplotlib
# screening geometry references (GEOS validity, point-in-polygon, geodesics and areas)
TEST_DEBS  += python3-shapely python3-pyproj
# QGIS (python3-qgis) opens atlas.gpkg with its default styles (pipelines/demo)
TEST_DEBS  += python3-qgis

.PHONY: all deps test-deps build demo test lint mutants bench bench-serve bench-memory fuzz soak clean

all: build

deps:
	@missing=""; for p in $(BUILD_DEBS); do dpkg -s $$p >/dev/null 2>&1 || missing="$$missing $$p"; done; \
	if [ -n "$$missing" ]; then echo "installing:$$missing"; \
	  $(SUDO) apt-get update -qq && $(SUDO) env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq $$missing; fi
	@$(GO) mod download

test-deps: deps
	@missing=""; for p in $(TEST_DEBS); do dpkg -s $$p >/dev/null 2>&1 || missing="$$missing $$p"; done; \
	if [ -n "$$missing" ]; then echo "installing:$$missing"; \
	  $(SUDO) apt-get update -qq && $(SUDO) env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq $$missing \
	  || { echo "error: could not install$$missing (the tests need them as outside references)"; exit 1; }; fi
	@command -v npm >/dev/null || { echo "installing: npm"; $(SUDO) env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq npm; } \
	  || { echo "error: could not install npm (nodejs from another source usually brings its own)"; exit 1; }
	@if [ ! -f "$(SWELLGRID_NODE_CACHE)/node_modules/@duckdb/node-api/package.json" ]; then \
	  echo "installing $(DUCKDB_NODE_API) into $(SWELLGRID_NODE_CACHE)"; mkdir -p "$(SWELLGRID_NODE_CACHE)" && \
	  npm install --prefix "$(SWELLGRID_NODE_CACHE)" --no-audit --no-fund $(DUCKDB_NODE_API) >/dev/null \
	  || { echo "error: npm could not install $(DUCKDB_NODE_API)"; exit 1; }; fi

build: deps
	$(GO) build -o $(BIN) ./cmd/swellgrid

demo: build
	./$(BIN) demo --out $(DEMO_OUT)

# test: every package; the summary counts passed, failed and skipped tests,
# and under CI=true a skipped test fails the target (there must be none).
TEST_LOG ?= test-out/go-test.json
test: test-deps
	$(GO) vet ./...
	@mkdir -p $(dir $(TEST_LOG))
	$(GO) test -count=1 -timeout 45m -json ./... > $(TEST_LOG); rc=$$?; \
	  /usr/bin/python3 .ci/test_summary.py $(TEST_LOG) || rc=1; exit $$rc

# lint: staticcheck (honnef.co/go/tools) at a pinned version, plus gofmt.
lint: deps
	@out=$$(gofmt -l $$(git ls-files '*.go')); if [ -n "$$out" ]; then echo "gofmt needed:"; echo "$$out"; exit 1; fi
	$(GO) run honnef.co/go/tools/cmd/staticcheck@$(STATICCHECK_VERSION) ./...

# mutants: wiring mutations of the column-filling code (pipelines/engine/schema.go),
# each of which must fail the end-to-end column checks (.ci/mutants.py lists them).
mutants: test-deps
	/usr/bin/python3 .ci/mutants.py

# bench: the pipeline against the read floor (generated data cached in
# $(BENCH_CACHE); about 10 minutes on 2 cores, plus 2-3 minutes the first time
# for the data), before and after in one run: the same benchmark driver is also
# built on the library of commit $(BENCH_BEFORE) (git archive, then this tree's
# driver, $(BENCH_DRIVER), copied to the same paths over it, replacing what
# the old tree has there) and every pipeline case
# runs with both, the before case first. Then the key micro-benchmarks on both
# trees (benchstat before vs after) and the tables of every fixture compared
# (internal/bench/compare_outputs.sh). Figures go to $(BENCH_OUT)/; BENCHMARKS.md says how to
# read them. BENCH_PARTS=full measures the full record only.
#
# The driver is copied whole, so it builds on any older commit whose product
# packages it imports (pipelines, pipelines/synth, ingest) are at the same
# import paths with the names it uses; the driver's own move (from
# pipelines/bench to internal/bench and cmd/) does not matter. When a product
# package it imports has moved since BENCH_BEFORE, BENCH_BEFORE_IMPORTS maps
# it back: a list of NEW=OLD import paths rewritten in the copy only, each
# import of NEW becoming `<last element of NEW> "OLD"` (the driver keeps
# calling engine.Run and runspec.DefaultSpec when both came from one
# package). BENCH_BEFORE is main as it was before issue 29's first commit (no
# package has moved since, so nothing is mapped back). When the
# names it calls changed too, move BENCH_BEFORE past the change. The
# micro-benchmarks run in BENCH_MICRO_PKGS here and BENCH_MICRO_PKGS_BEFORE on
# the older tree, with the moved package's name mapped for benchstat.
BENCH_OUT   ?= bench-out
BENCH_CACHE ?= $(HOME)/.cache/swellgrid-bench
BENCH_BEFORE ?= a042283
BENCH_PARTS ?= full,half
# (^BenchmarkAdd covers BenchmarkAdd, AddTwoDevices and AddAccess: the feed with repair-access rules, issue 32)
BENCH_MICRO ?= FeedBulk|FeedSpectral|FinishBulk|FitStage|GroupVelocity|BulkDepthPower|FitGEV|FitGPD|^BenchmarkAdd|FitJoint|ProfileIntervals|LongTables|WriteGeoParquet|ReadStepChunked
BENCHSTAT_VERSION := v0.0.0-20260908200009-22c9c6c9d4da
BENCH_DRIVER := internal/bench cmd/sgbench
BENCH_BEFORE_IMPORTS ?=
# (ReadStepChunked: the reader on files chunked one step per chunk against the
# read floor, issue 29; it is in the driver, copied into the before tree too)
# ReadStepChunked reads the first 3 months of the bulk benchmark rechunked
# one step per chunk (testdata/stepchunk/rechunk.py, made once here).
BENCH_STEPCHUNK ?= $(BENCH_CACHE)/stepchunk-bulk-3m
BENCH_MICRO_PKGS ?= ./pipelines/engine/ ./stats/... ./export/ ./internal/bench/
BENCH_MICRO_PKGS_BEFORE ?= ./pipelines/engine/ ./stats/... ./export/ ./internal/bench/
# screening geometry (issue 35): one polygon layer of 10^5 and 10^6 vertices
# against a 200 x 200 grid (validity, covers, distances); target < 5 s at 10^6
BENCH_GEOMETRY ?= ScreenLayer
bench: deps
	@mkdir -p $(BENCH_OUT) bin
	$(GO) build -o bin/sgbench ./cmd/sgbench
	$(GO) build -o bin/sgdiff ./cmd/sgdiff
	$(GO) build -o $(BIN) ./cmd/swellgrid
	rm -rf $(BENCH_OUT)/before-src && mkdir -p $(BENCH_OUT)/before-src
	git archive $(BENCH_BEFORE) | tar -x -C $(BENCH_OUT)/before-src
	for d in $(BENCH_DRIVER); do rm -rf $(BENCH_OUT)/before-src/$$d && mkdir -p $(BENCH_OUT)/before-src/$$d \
	  && cp -r $$d/. $(BENCH_OUT)/before-src/$$d/ || exit 1; done
	for m in $(BENCH_BEFORE_IMPORTS); do new=$${m%%=*}; old=$${m#*=}; \
	  find $(addprefix $(BENCH_OUT)/before-src/,$(BENCH_DRIVER)) -name '*.go' \
	    -exec sed -i "s#\"$$new\"#$${new##*/} \"$$old\"#" {} + || exit 1; done
	cd $(BENCH_OUT)/before-src && $(GO) build -o $(CURDIR)/bin/sgbench-before ./cmd/sgbench \
	  && $(GO) build -o $(CURDIR)/bin/swellgrid-before ./cmd/swellgrid
	./bin/sgbench -cache $(BENCH_CACHE) -before bin/sgbench-before -parts $(BENCH_PARTS) -md $(BENCH_OUT)/pipeline.md
	test -f $(BENCH_STEPCHUNK)/COMPLETE || { rm -rf $(BENCH_STEPCHUNK) && mkdir -p $(BENCH_STEPCHUNK) \
	  && /usr/bin/python3 testdata/stepchunk/rechunk.py $$(ls $(BENCH_CACHE)/sgbench_bulk-*/sgbench_bulk_2001-0[123].nc) $(BENCH_STEPCHUNK) \
	  && touch $(BENCH_STEPCHUNK)/COMPLETE; }
	cd $(BENCH_OUT)/before-src && SWELLGRID_STEPCHUNK='$(BENCH_STEPCHUNK)/*.nc' $(GO) test -run '^$$' -bench '$(BENCH_MICRO)' -benchmem -count 5 -benchtime 0.2s \
	  $(BENCH_MICRO_PKGS_BEFORE) > $(CURDIR)/$(BENCH_OUT)/micro-before.txt
	sed -i 's#^pkg: swellgrid/pipelines$$#pkg: swellgrid/pipelines/engine#' $(BENCH_OUT)/micro-before.txt
	SWELLGRID_STEPCHUNK='$(BENCH_STEPCHUNK)/*.nc' $(GO) test -run '^$$' -bench '$(BENCH_MICRO)' -benchmem -count 5 -benchtime 0.2s $(BENCH_MICRO_PKGS) > $(BENCH_OUT)/micro.txt
	$(GO) install golang.org/x/perf/cmd/benchstat@$(BENCHSTAT_VERSION)
	"$$($(GO) env GOPATH)/bin/benchstat" before=$(BENCH_OUT)/micro-before.txt after=$(BENCH_OUT)/micro.txt | tee $(BENCH_OUT)/micro-benchstat.txt
	./internal/bench/compare_outputs.sh bin/swellgrid-before $(BIN) bin/sgdiff > $(BENCH_OUT)/tables.txt; cat $(BENCH_OUT)/tables.txt
	$(GO) test -run '^$$' -bench '$(BENCH_GEOMETRY)' -benchtime 1x -count 3 ./pipelines/screening/ | tee $(BENCH_OUT)/geometry.txt
	$(MAKE) bench-memory BENCH_MEM_ONLY=grid,merge BENCH_GRID200_MONTHS=1
	$(MAKE) bench-serve

# bench-serve: `swellgrid serve` on a 200 x 200 atlas (the grid200 hindcast,
# run once and cached beside it): time to the first map and to a cell's page
# in headless Chromium (targets 2 s and 0.5 s, issue 33).
BENCH_SERVE_MONTHS ?= 12
bench-serve: deps
	@mkdir -p $(BENCH_OUT)
	$(GO) test -run '^$$' -bench 'ServeFirstMap200|ServeCellPage200' -benchtime 5x -timeout 2h ./pipelines/serve/ \
	  -serve-months $(BENCH_SERVE_MONTHS) -serve-cache $(abspath $(BENCH_CACHE)) | tee $(BENCH_OUT)/serve.txt

# bench-memory: peak RSS (each case's child rusage, ru_maxrss) of the bulk
# benchmark under --memory-limit 256MiB (target 360 MB) and the default 2GiB
# (target 2 GiB + the stated overhead), of a 200 x 200 grid, its 2 shards and
# their merge under 256MiB (target the limit + overhead), and the heap per
# cell against the memory model (BenchmarkCellMemory). Figures go to
# $(BENCH_OUT)/memory.md; BENCHMARKS.md (memory section) reads them.
#
# Inside `make bench` only the 200 x 200 cases run, on a 1-month record: the
# bulk benchmark's peaks at 256MiB and at the default limit are already in
# sgbench's table (each child's own VmHWM), and the 12-month grid takes
# about 23 passes of minutes each. `make bench-memory` alone runs every case.
BENCH_MEM_ONLY ?=
BENCH_GRID200_MONTHS ?= 12
bench-memory: deps
	@mkdir -p $(BENCH_OUT) bin
	$(GO) build -o $(BIN) ./cmd/swellgrid
	$(GO) build -o bin/sgmem ./cmd/sgmem
	./bin/sgmem -cache $(BENCH_CACHE) -bin $(BIN) -md $(BENCH_OUT)/memory.md \
	  -only '$(BENCH_MEM_ONLY)' -grid200-months $(BENCH_GRID200_MONTHS)
	$(GO) test -run '^$$' -bench CellMemory -benchtime 3x ./pipelines/engine/ | tee -a $(BENCH_OUT)/memory.md

# Fuzz targets, each for FUZZTIME (go test -fuzz runs one target at a time).
# A crasher is saved under the package's testdata/fuzz/ and must become a
# regression test.
FUZZTIME ?= 60s
FUZZ_TARGETS := ./ingest:FuzzParseTimeUnits ./ingest:FuzzCatalogMetadata \
	./pipelines/engine:FuzzSpec ./stats/climate:FuzzPowerMatrix

fuzz: deps
	@for t in $(FUZZ_TARGETS); do pkg=$${t%%:*}; fn=$${t##*:}; \
	  echo "fuzz $$fn ($$pkg) for $(FUZZTIME)"; \
	  $(GO) test -run '^$$' -fuzz "^$$fn$$" -fuzztime $(FUZZTIME) $$pkg || exit 1; done

# The long fault series (24 SIGKILL points and the other faults) and the fuzzing.
soak: test-deps
	SWELLGRID_SOAK=1 $(GO) test -count=1 -timeout 30m -run 'TestCorpus|TestKillResume|TestFullDisk|TestReadOnlyOutput|TestInputDeletedMidRun' -v ./cmd/swellgrid
	$(MAKE) fuzz FUZZTIME=$(FUZZTIME)

clean:
	rm -rf bin $(DEMO_OUT) $(BENCH_OUT) test-out
