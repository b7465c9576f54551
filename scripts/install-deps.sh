#!/usr/bin/env bash
# Installs the Debian 12 packages pleat needs, only those missing (so a second
# run does nothing and needs no network). Run as root.
set -euo pipefail
packages=(
  g++ make cmake pkg-config
  libgmp-dev libmpfr-dev libglpk-dev libeigen3-dev libflint-dev libcdd-dev
  libgoogle-perftools-dev  # tcmalloc_minimal, the pleat executable's allocator (PLEAT_TCMALLOC)
  libgtest-dev nlohmann-json3-dev libcli11-dev libxtensor-dev
  python3 python3-numpy python3-sympy python3-scipy python3-torch
  libonnx-dev libprotobuf-dev python3-onnx
  pybind11-dev python3-pybind11 python3-pandas  # the Python module (python/); pandas only for to_pandas()
  librsvg2-bin
  texlive-latex-base texlive-pictures  # tests/cli/draw_tikz_test.sh: pdflatex measures the TikZ output
  libbenchmark-dev hyperfine  # tests/bench: walk micro-benchmarks and whole-walk timings
  libopenmpi-dev openmpi-bin  # one walk across the processes of an MPI job (PLEAT_MPI; tests/mpi/)
  time  # /usr/bin/time: peak memory of the readers in tests/cli/readers_test.sh
  chromium chromium-driver python3-selenium  # tests/reference/report_browser_test.py: pleat report's pages, headless
  clang libclang-rt-14-dev libfuzzer-14-dev
)
missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed' || missing+=("$p")
done
if ((${#missing[@]})); then
  echo "pleat: installing ${missing[*]}" >&2
  if [ "$(id -u)" -ne 0 ]; then
    echo "pleat: missing packages; run as root or install them: apt-get install ${missing[*]}" >&2
    exit 1
  fi
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq
  apt-get install -y -qq --no-install-recommends "${missing[@]}"
fi
