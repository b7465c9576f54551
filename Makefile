# Thin wrapper over CMake: the README's two commands.
#   make demo   install missing Debian packages, build (Release), walk the example
#               network and certify its functional dimension
#   make test   the same build, then the whole test suite (ctest)
#   make sanitize  unit and end-to-end tests under AddressSanitizer + UBSan (build-asan/)
#   make fuzz      a short libFuzzer run of every reader (clang, build-fuzz/)
#   make install   the library, headers, CMake package, pkg-config file, binary and
#                  Python package under PREFIX (default /usr/local)
BUILD ?= build
ASAN_BUILD ?= build-asan
FUZZ_BUILD ?= build-fuzz
FUZZ_SECONDS ?= 40
JOBS ?= $(shell nproc)
EXAMPLE ?= data/fold2d.json

.PHONY: deps configure build demo test bench sanitize fuzz clean install

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

# -O1 with sanitizers (CMakeLists.txt, PLEAT_SANITIZE); a leak or any
# undefined behaviour fails the test that ran into it.
SANITIZER_OPTIONS = ASAN_OPTIONS=detect_leaks=1:abort_on_error=0 UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1
sanitize: deps
	@test -f $(ASAN_BUILD)/CMakeCache.txt || cmake -S . -B $(ASAN_BUILD) -DCMAKE_BUILD_TYPE=Debug -DPLEAT_SANITIZE=ON
	@cmake --build $(ASAN_BUILD) -j $(JOBS)
	@cd $(ASAN_BUILD) && $(SANITIZER_OPTIONS) ctest --output-on-failure -j $(JOBS) -LE reference

# The readers under libFuzzer for FUZZ_SECONDS each (fuzz/run.sh); the seed
# files are written by the normal build's pleat.
fuzz: build
	@test -f $(FUZZ_BUILD)/CMakeCache.txt || CC=clang CXX=clang++ cmake -S . -B $(FUZZ_BUILD) -DCMAKE_BUILD_TYPE=Debug -DPLEAT_FUZZ=ON
	@cmake --build $(FUZZ_BUILD) -j $(JOBS) --target fuzz_all
	@bash fuzz/run.sh $(FUZZ_BUILD) $(BUILD)/cli/pleat $(FUZZ_SECONDS)

clean:
	rm -rf $(BUILD) $(ASAN_BUILD) $(FUZZ_BUILD)
