# geored: build, test, demo and benchmarks. `make test` and `make demo` set up
# a fresh Debian machine that has only Go and gcc: `deps` installs PROJ's
# development files and data (Debian's libproj-dev, proj-data) when missing.

GO      ?= go
BIN     := bin/geored
PROJ_DATA_FILE := /usr/share/proj/egm96_15.gtx
APT_PACKAGES   := pkg-config libproj-dev proj-data

.PHONY: all deps chromium build test demo bench vet clean

all: build

# deps: PROJ >= 9.1 with pkg-config, and proj-data's EGM96 grid, the default geoid.
deps:
	@if command -v pkg-config >/dev/null 2>&1 && pkg-config --exists 'proj >= 9.1' && [ -f $(PROJ_DATA_FILE) ]; then \
		echo "deps: PROJ $$(pkg-config --modversion proj) and $(PROJ_DATA_FILE) present"; \
	else \
		if [ "$$(id -u)" = 0 ]; then SUDO=; \
		elif command -v sudo >/dev/null 2>&1; then SUDO=sudo; \
		else echo "deps: PROJ is missing and this user cannot install it: as root run"; \
		     echo "      apt-get update && apt-get install -y $(APT_PACKAGES)"; exit 1; fi; \
		if ! command -v apt-get >/dev/null 2>&1; then \
			echo "deps: no apt-get here: install PROJ >= 9.1 (development files, pkg-config file) and its data (egm96_15.gtx)"; exit 1; fi; \
		echo "deps: installing $(APT_PACKAGES)"; \
		$$SUDO env DEBIAN_FRONTEND=noninteractive apt-get update -qq && \
		$$SUDO env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends $(APT_PACKAGES) >/dev/null && \
		pkg-config --exists 'proj >= 9.1' && [ -f $(PROJ_DATA_FILE) ] && \
		echo "deps: PROJ $$(pkg-config --modversion proj) installed"; \
	fi

build: deps
	$(GO) build -o $(BIN) ./cmd/geored

vet: deps
	$(GO) vet ./...

# chromium: Debian's chromium, for the test that opens report.html in a
# headless browser (io/report). Only `make test` needs it.
chromium:
	@if [ -x /usr/bin/chromium ]; then \
		echo "chromium: $$(/usr/bin/chromium --version 2>/dev/null | head -n 1) present"; \
	else \
		if [ "$$(id -u)" = 0 ]; then SUDO=; \
		elif command -v sudo >/dev/null 2>&1; then SUDO=sudo; \
		else echo "chromium: /usr/bin/chromium is missing and this user cannot install it: as root run"; \
		     echo "      apt-get update && apt-get install -y chromium"; exit 1; fi; \
		if ! command -v apt-get >/dev/null 2>&1; then \
			echo "chromium: no apt-get here: install Chromium as /usr/bin/chromium for the report's browser test"; exit 1; fi; \
		echo "chromium: installing Debian's chromium"; \
		$$SUDO env DEBIAN_FRONTEND=noninteractive apt-get update -qq && \
		$$SUDO env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends chromium >/dev/null && \
		[ -x /usr/bin/chromium ] && \
		echo "chromium: $$(/usr/bin/chromium --version 2>/dev/null | head -n 1) installed"; \
	fi

test: deps vet chromium
	GEORED_CHROMIUM_TEST=1 $(GO) test -race -count=1 ./...

demo: build
	./$(BIN) demo

# bench: per-operation benchmarks; medians over 5 runs are what to quote.
bench: deps
	$(GO) test -run '^$$' -bench . -benchmem -count 5 ./...

clean:
	rm -rf bin geored-demo geored-out
