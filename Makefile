# Thin wrapper over CMake: the README's two commands.
#   make demo   install missing Debian packages, build (Release), walk the example
#               network and certify its functional dimension
#   make test   the same build, then the whole test suite (ctest)
BUILD ?= build
JOBS ?= $(shell nproc)
EXAMPLE ?= data/fold2d.json

.PHONY: deps configure build demo test bench clean

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

bench: build
	@bash tests/bench/run.sh $(BUILD)

clean:
	rm -rf $(BUILD)
