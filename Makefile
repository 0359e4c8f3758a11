# geored: build, test, demo and benchmarks. `make test` and `make demo` set up
# a fresh Debian machine that has only Go and gcc: `deps` installs PROJ's
# development files and data (Debian's libproj-dev, proj-data) when missing.

GO      ?= go
BIN     := bin/geored
PROJ_DATA_FILE := /usr/share/proj/egm96_15.gtx
APT_PACKAGES   := pkg-config libproj-dev proj-data
BENCH_OBS      ?= 1000000
BENCH_DIR      ?= /tmp/geored-bench-$(BENCH_OBS)
BENCH_REPEAT   ?= 7
# BENCH_BASELINE: another geored binary (an earlier build) that make bench
# times in the same rounds, e.g. make bench BENCH_BASELINE=/tmp/geored-old
BENCH_BASELINE ?=

.PHONY: all deps chromium postgresql bench-tools build test demo bench profile pgo vet clean

all: build

# apt_install: $(1) names the need, $(2) is a shell test that it is met,
# $(3) the Debian packages that meet it. When the test fails they are
# installed with apt-get, as root or through sudo; without either the
# target stops and says what to install.
define apt_install
	@if $(2); then \
		echo "$(1): present"; \
	else \
		if [ "$$(id -u)" = 0 ]; then SUDO=; \
		elif command -v sudo >/dev/null 2>&1; then SUDO=sudo; \
		else echo "$(1): missing and this user cannot install it: as root run"; \
		     echo "      apt-get update && apt-get install -y $(3)"; exit 1; fi; \
		command -v apt-get >/dev/null 2>&1 || { echo "$(1): no apt-get here: install the equivalent of Debian's $(3)"; exit 1; }; \
		echo "$(1): installing $(3)"; \
		$$SUDO env DEBIAN_FRONTEND=noninteractive apt-get update -qq && \
		$$SUDO env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends $(3) >/dev/null && \
		{ $(2); } && echo "$(1): installed"; \
	fi
endef

# deps: PROJ >= 9.1 with pkg-config, and proj-data's EGM96 grid, the default geoid.
deps:
	$(call apt_install,PROJ >= 9.1 and $(PROJ_DATA_FILE),command -v pkg-config >/dev/null 2>&1 && pkg-config --exists 'proj >= 9.1' && [ -f $(PROJ_DATA_FILE) ],$(APT_PACKAGES))

# chromium: Debian's chromium, for the test that opens report.html in a
# headless browser (io/report). Only `make test` needs it.
chromium:
	$(call apt_install,chromium,[ -x /usr/bin/chromium ],chromium)

# postgresql: Debian's PostgreSQL server programs (initdb, pg_ctl,
# postgres), for the tests of the nightly history on PostgreSQL
# (io/history, cmd/geored): each starts a throwaway server in a temporary
# folder as the user nobody. Only `make test` needs it.
postgresql:
	$(call apt_install,postgresql,command -v initdb >/dev/null 2>&1 || ls /usr/lib/postgresql/*/bin/initdb >/dev/null 2>&1,postgresql)

# bench-tools: PROJ's geod, which make bench runs beside geored.
bench-tools:
	$(call apt_install,geod,command -v geod >/dev/null 2>&1,proj-bin)

build: deps
	$(GO) build -o $(BIN) ./cmd/geored

vet: deps
	$(GO) vet ./...

test: deps vet chromium postgresql
	GEORED_CHROMIUM_TEST=1 $(GO) test -race -count=1 ./...

# demo: the demo's blunders are flagged by design, so geored demo exits 1
# (as its report says); any other status is a failure.
demo: build
	./$(BIN) demo || { s=$$?; [ $$s = 1 ] && echo "geored demo: exit status 1, the demo's blunders flagged as designed"; }

# bench: the per-stage benchmarks (go test -bench; quote medians), then the
# whole job: a synthetic job of $(BENCH_OBS) observations timed beside the
# parse floor and geod -I, on one worker and on all cores.
bench: deps bench-tools build
	$(GO) test -run '^$$' -bench . -benchmem -count 3 -benchtime 200ms ./...
	$(GO) build -o bin/georedbench ./cmd/georedbench
	[ -f $(BENCH_DIR)/observations.csv ] || ./bin/georedbench gen -dir $(BENCH_DIR) -obs $(BENCH_OBS)
	./bin/georedbench run -dir $(BENCH_DIR) -geored $(BIN) -repeat $(BENCH_REPEAT) $(if $(BENCH_BASELINE),-baseline $(BENCH_BASELINE))

# profile: a CPU profile of geored reduce on the synthetic job, and where
# the time goes.
profile: deps build
	$(GO) build -o bin/georedbench ./cmd/georedbench
	[ -f $(BENCH_DIR)/observations.csv ] || ./bin/georedbench gen -dir $(BENCH_DIR) -obs $(BENCH_OBS)
	./$(BIN) reduce -config $(BENCH_DIR)/job.toml -quiet -out $(BENCH_DIR)/out-profile -cpuprofile bin/reduce.prof || [ $$? = 1 ]
	$(GO) tool pprof -top -nodecount 25 $(BIN) bin/reduce.prof

# pgo: the CPU profile that Go's profile-guided optimisation builds geored
# with (cmd/geored/default.pgo): geored reduce on the synthetic job on all
# cores and on one worker, merged. Run it again when the hot code changes
# much; a stale profile costs only speed, never correctness.
pgo: deps
	$(GO) build -pgo=off -o bin/geored-nopgo ./cmd/geored
	$(GO) build -o bin/georedbench ./cmd/georedbench
	[ -f $(BENCH_DIR)/observations.csv ] || ./bin/georedbench gen -dir $(BENCH_DIR) -obs $(BENCH_OBS)
	rm -rf $(BENCH_DIR)/out-pgo
	./bin/geored-nopgo reduce -config $(BENCH_DIR)/job.toml -quiet -out $(BENCH_DIR)/out-pgo -cpuprofile bin/pgo-all.prof || [ $$? = 1 ]
	rm -rf $(BENCH_DIR)/out-pgo
	./bin/geored-nopgo reduce -config $(BENCH_DIR)/job.toml -quiet -workers 1 -out $(BENCH_DIR)/out-pgo -cpuprofile bin/pgo-one.prof || [ $$? = 1 ]
	rm -rf $(BENCH_DIR)/out-pgo
	$(GO) tool pprof -proto bin/pgo-all.prof bin/pgo-one.prof > cmd/geored/default.pgo

clean:
	rm -rf bin geored-demo geored-out

# fuzz: every fuzz target of the repo (each func Fuzz… in a _test.go),
# $(FUZZTIME) each, one after another: go test -fuzz takes one target a
# run. A new input that widens the coverage is shrunk for at most
# $(FUZZMINIMIZETIME) (go's default, a minute, stalls a short run). A
# failure stops here, its input written under the package's
# testdata/fuzz/FuzzX/: commit it as a seed with the fix. `make test`
# replays the committed seeds of every target (plain go test does).
# FUZZTMPDIR holds the temporary folders: FuzzReduceCommand writes and
# syncs an output set per input, about 4 times faster on a tmpfs
# (/dev/shm) than on this machine's disk.
FUZZTIME ?= 30s
FUZZMINIMIZETIME ?= 5s
FUZZTMPDIR ?= $(if $(wildcard /dev/shm),/dev/shm)
.PHONY: fuzz
fuzz: deps
	@set -e; for f in $$(grep -rl --include='*_test.go' '^func Fuzz' . | sort); do \
		pkg=./$$(dirname $${f#./}); \
		for t in $$(sed -n 's/^func \(Fuzz[A-Za-z0-9_]*\)(.*/\1/p' $$f); do \
			echo "fuzz: $$pkg $$t for $(FUZZTIME)"; \
			$(if $(FUZZTMPDIR),TMPDIR=$(FUZZTMPDIR)) $(GO) test $$pkg -run '^$$' -fuzz "^$$t\$$" -fuzztime $(FUZZTIME) -fuzzminimizetime $(FUZZMINIMIZETIME); \
		done; \
	done

# soak: geored reduce on the synthetic job (10,000 points, 200,000 lines)
# with 1,000,000 and with 10,000,000 observations, once each; fails when
# the long run's peak RSS exceeds the short one's by more than
# SOAK_MAX_GROWTH MiB, that is when memory grows with the observations
# (BENCHMARKS.md, "Memory"). The jobs (about 1.4 GB) stay in SOAK_DIR
# for the next run; the outputs (4.3 GB of reduced.csv) are removed.
SOAK_DIR        ?= /tmp/geored-soak
SOAK_OBS        ?= 10000000
SOAK_BASE_OBS   ?= 1000000
SOAK_MAX_GROWTH ?= 16
.PHONY: soak
soak: build
	$(GO) build -o bin/georedbench ./cmd/georedbench
	./bin/georedbench soak -dir $(SOAK_DIR) -geored $(BIN) -obs $(SOAK_OBS) -base-obs $(SOAK_BASE_OBS) -max-growth $(SOAK_MAX_GROWTH)
