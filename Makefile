# Thin wrapper over CMake: the README's two commands.
#   make demo   install missing Debian packages, build (Release), walk the example
#               network and certify its functional dimension
#   make test   the same build, then the whole test suite (ctest)
#   make sanitize  unit and end-to-end tests under AddressSanitizer + UBSan (build-check/)
#   make fuzz      a short libFuzzer run of every reader (build-check/)
#   make check     both (what .ci/run adds after make test)
#   make install   the library, headers, CMake package, pkg-config file, binary and
#                  Python package under PREFIX (default /usr/local)
BUILD ?= build
CHECK_BUILD ?= build-check
FUZZ_SECONDS ?= 40
JOBS ?= $(shell nproc)
EXAMPLE ?= data/fold2d.json

.PHONY: deps configure build demo test bench check-build sanitize fuzz check clean install

deps:
	@bash scripts/install-deps.sh

configure: deps
	@test -f $(BUILD)/CMakeCache.txt || cmake -S . -B $(BUILD) -DCMAKE_BUILD_TYPE=Release

build: configure
	@cmake --build $(BUILD) -j $(JOBS)

demo: build
	$(BUILD)/cli/pleat walk $(EXAMPLE)
	$(BUILD)/cli/pleat certify $(EXAMPLE)

test: build
	@cd $(BUILD) && ctest --output-on-failure -j $(JOBS)

PREFIX ?= /usr/local
install: build
	@cmake --install $(BUILD) --prefix $(PREFIX)

bench: build
	@bash tests/bench/run.sh $(BUILD)

# One checking build for both (CMakeLists.txt, PLEAT_FUZZ): clang, Debug at
# -O1, AddressSanitizer + UBSan + libFuzzer's coverage on every library. The
# same objects serve the sanitized test suite and the fuzz targets, so CI
# compiles the tree twice (Release and this), not three times.
check-build: deps
	@test -f $(CHECK_BUILD)/CMakeCache.txt || CC=clang CXX=clang++ cmake -S . -B $(CHECK_BUILD) -DCMAKE_BUILD_TYPE=Debug -DPLEAT_FUZZ=ON
	@cmake --build $(CHECK_BUILD) -j $(JOBS)

# The unit and end-to-end tests in the checking build; a leak or any undefined
# behaviour fails the test that ran into it. The reference cross-checks
# (minutes of Python) are left out.
SANITIZER_OPTIONS = ASAN_OPTIONS=detect_leaks=1:abort_on_error=0 UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1
sanitize: check-build
	@cd $(CHECK_BUILD) && $(SANITIZER_OPTIONS) ctest --output-on-failure -j $(JOBS) -LE reference

# The readers under libFuzzer for FUZZ_SECONDS each (fuzz/run.sh); the seed
# files are written by the normal build's pleat.
fuzz: build check-build
	@bash fuzz/run.sh $(CHECK_BUILD) $(BUILD)/cli/pleat $(FUZZ_SECONDS)

check: sanitize fuzz

clean:
	rm -rf $(BUILD) $(CHECK_BUILD)
