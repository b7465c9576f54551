#!/usr/bin/env bash
# `cmake --install` into a temporary prefix, then use what it installed as a
# user would: examples/cpp built with find_package(pleat) and with
# pkg-config, the installed pleat binary, and `import pleat` from the
# installed Python package. Outside reference: the build tree's pleat binary
# (the same regions and functional dimension as its JSON).
#   install_test.sh BUILD_DIR SOURCE_DIR [PLEAT_PYTHON (ON|OFF)]
set -euo pipefail
build=$(cd "$1" && pwd)
source_dir=$(cd "$2" && pwd)
with_python=${3:-ON}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
fail() { echo "FAIL: $*" >&2; exit 1; }
prefix=$work/prefix

cmake --install "$build" --prefix "$prefix" > "$work/install.log" || { cat "$work/install.log"; fail "cmake --install"; }
for file in include/pleat/core/rational.hpp include/pleat/enumerate/walker.hpp bin/pleat \
            lib/cmake/pleat/pleatConfig.cmake lib/cmake/pleat/pleatConfigVersion.cmake lib/pkgconfig/pleat.pc; do
  [[ -e $prefix/$file ]] || fail "not installed: $file"
done
ls "$prefix"/lib/libpleat.so* > /dev/null || fail "libpleat.so not installed"

network=$source_dir/data/fold2d.json
expected_regions=$("$build/cli/pleat" walk "$network" --json -q | /usr/bin/python3 -c 'import json,sys; print(json.load(sys.stdin)["regions"])')
expected_value=$("$build/cli/pleat" certify "$network" --json -q | /usr/bin/python3 -c 'import json,sys; print(json.load(sys.stdin)["functional_dimension"])')
expected="regions $expected_regions (certified)
functional dimension $expected_value (certified)"

# find_package(pleat) + pleat::pleat
cmake -S "$source_dir/examples/cpp" -B "$work/example" -DCMAKE_PREFIX_PATH="$prefix" -DCMAKE_BUILD_TYPE=Release \
  > "$work/configure.log" 2>&1 || { cat "$work/configure.log"; fail "configuring examples/cpp"; }
cmake --build "$work/example" > "$work/build.log" 2>&1 || { cat "$work/build.log"; fail "building examples/cpp"; }
got=$("$work/example/certify_example" "$network")
[[ $got == "$expected" ]] || fail "find_package example printed: $got; expected: $expected"

# pkg-config
flags=$(PKG_CONFIG_PATH="$prefix/lib/pkgconfig" pkg-config --cflags --libs pleat)
g++ "$source_dir/examples/cpp/certify_example.cpp" $flags -o "$work/by_pkg_config" || fail "g++ with pkg-config flags: $flags"
got=$(LD_LIBRARY_PATH="$prefix/lib" "$work/by_pkg_config" "$network")
[[ $got == "$expected" ]] || fail "pkg-config example printed: $got"

# the installed binary and Python package
"$prefix/bin/pleat" --version > /dev/null || fail "installed pleat binary"
if [[ $with_python != ON ]]; then
  echo "install test: find_package, pkg-config and bin/pleat work from $prefix (no Python module in this build)"
  exit 0
fi
python_dir=$(ls -d "$prefix"/lib/python3*/dist-packages 2> /dev/null | head -1)
[[ -n $python_dir ]] || fail "the Python package was not installed"
PYTHONPATH=$python_dir /usr/bin/python3 - "$python_dir" "$network" "$expected_value" <<'PY' || fail "import pleat from the installed package"
import sys
import pleat
assert pleat.__file__.startswith(sys.argv[1]), pleat.__file__
assert pleat.Network.from_file(sys.argv[2]).certify().functional_dimension == int(sys.argv[3])
PY
echo "install test: find_package, pkg-config, bin/pleat and import pleat all work from $prefix"
