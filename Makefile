# swellgrid — every target first makes sure the build dependencies are present,
# so that `make demo` and `make test` are the whole set-up on a fresh Debian machine.

GO      ?= go
BIN     := bin/swellgrid
DEMO_OUT ?= demo-out
SUDO    := $(shell [ "$$(id -u)" = 0 ] || echo sudo)
# Debian packages the build needs (cgo NetCDF), and the ones the tests use as
# outside references (ncdump, GDAL's ogrinfo and gdal_contour).
BUILD_DEBS := libnetcdf-dev pkg-config
TEST_DEBS  := netcdf-bin gdal-bin

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

bench: build
	$(GO) test -run '^$$' -bench . -benchmem ./...

clean:
	rm -rf bin $(DEMO_OUT)
