# swellgrid — every target first makes sure the build dependencies are present,
# so that `make demo` and `make test` are the whole set-up on a fresh Debian machine.

GO      ?= go
BIN     := bin/swellgrid
DEMO_OUT ?= demo-out
SUDO    := $(shell [ "$$(id -u)" = 0 ] || echo sudo)
# Debian packages the build needs (cgo NetCDF), and the ones the tests use as
# outside references (ncdump, GDAL's ogrinfo and gdal_contour).
BUILD_DEBS := libnetcdf-dev pkg-config
TEST_DEBS  := netcdf-bin gdal-bin python3-gdal slurm-wlm munge

.PHONY: all deps test-deps build demo test bench fuzz soak clean

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
	  || echo "warning: could not install$$missing; tests that need them will skip"; fi

build: deps
	$(GO) build -o $(BIN) ./cmd/swellgrid

demo: build
	./$(BIN) demo --out $(DEMO_OUT)

test: test-deps
	$(GO) vet ./...
	$(GO) test -count=1 -timeout 45m ./...

# bench: the pipeline against the read floor (generated data cached in
# $(BENCH_CACHE); about 10 minutes on 2 cores, plus 2-3 minutes the first time
# for the data), then every Go micro-benchmark, summarised with benchstat.
# Figures go to $(BENCH_OUT)/; BENCHMARKS.md says how to read them.
BENCH_OUT   ?= bench-out
BENCH_CACHE ?= $(HOME)/.cache/swellgrid-bench
BENCHSTAT_VERSION := v0.0.0-20260908200009-22c9c6c9d4da
bench: deps
	@mkdir -p $(BENCH_OUT)
	$(GO) build -o bin/sgbench ./pipelines/bench/cmd/sgbench
	./bin/sgbench -cache $(BENCH_CACHE) -md $(BENCH_OUT)/pipeline.md
	$(GO) test -run '^$$' -bench . -benchmem -count 5 -benchtime 0.2s ./... > $(BENCH_OUT)/micro.txt
	$(GO) install golang.org/x/perf/cmd/benchstat@$(BENCHSTAT_VERSION)
	"$$($(GO) env GOPATH)/bin/benchstat" $(BENCH_OUT)/micro.txt | tee $(BENCH_OUT)/micro-benchstat.txt

# Fuzz targets, each for FUZZTIME (go test -fuzz runs one target at a time).
# A crasher is saved under the package's testdata/fuzz/ and must become a
# regression test.
FUZZTIME ?= 60s
FUZZ_TARGETS := ./ingest:FuzzParseTimeUnits ./ingest:FuzzCatalogMetadata \
	./pipelines:FuzzSpec ./stats/climate:FuzzPowerMatrix

fuzz: deps
	@for t in $(FUZZ_TARGETS); do pkg=$${t%%:*}; fn=$${t##*:}; \
	  echo "fuzz $$fn ($$pkg) for $(FUZZTIME)"; \
	  $(GO) test -run '^$$' -fuzz "^$$fn$$" -fuzztime $(FUZZTIME) $$pkg || exit 1; done

# The long fault series (24 SIGKILL points and the other faults) and the fuzzing.
soak: test-deps
	SWELLGRID_SOAK=1 $(GO) test -count=1 -timeout 30m -run 'TestCorpus|TestKillResume|TestFullDisk|TestReadOnlyOutput|TestInputDeletedMidRun' -v ./cmd/swellgrid
	$(MAKE) fuzz FUZZTIME=$(FUZZTIME)

clean:
	rm -rf bin $(DEMO_OUT) $(BENCH_OUT)
