#!/usr/bin/env bash
# A short fuzz run of every reader (make fuzz; DEVELOPERS.md).
#   fuzz/run.sh FUZZ_BUILD PLEAT [SECONDS]
# FUZZ_BUILD holds the fuzz_* targets (configured with -DPLEAT_FUZZ=ON),
# PLEAT is a normal pleat binary that writes the seed files. Each reader is
# fuzzed for SECONDS (default $PLEAT_FUZZ_SECONDS or 40) from
#   - seeds made fresh from data/ and tests/data/ (networks, their ONNX
#     exports, region files of walks, survey files, each also cut short),
#   - fuzz/seeds/<reader>/ (hand-written domain and points files),
#   - fuzz/regressions/<reader>/ (inputs that once failed: replayed first),
#   - the corpus grown by earlier runs in FUZZ_BUILD/corpus/<reader>/.
# A failing input is saved under FUZZ_BUILD/artifacts/<reader>/; rerun it
# with FUZZ_BUILD/fuzz/fuzz_<reader> FILE. Exit 1 if any reader failed.
set -uo pipefail
build=$(cd "$1" && pwd)
pleat=$2
seconds=${3:-${PLEAT_FUZZ_SECONDS:-40}}
source_dir=$(cd "$(dirname "$0")/.." && pwd)
readers=(network onnx domain points regions survey track)

seeds=$build/seeds
rm -rf "$seeds"
mkdir -p "$seeds"
for reader in "${readers[@]}"; do mkdir -p "$seeds/$reader" "$build/corpus/$reader" "$build/artifacts/$reader"; done

# A file and its first half (an interrupted write), as seeds of one reader.
add_seed() {  # reader name file
  cp "$3" "$seeds/$1/$2"
  head -c $(($(stat -c %s "$3") / 2)) "$3" > "$seeds/$1/$2.cut"
}

make_seeds() {
  local net name work=$build/seed-work
  rm -rf "$work" && mkdir -p "$work"
  for net in "$source_dir"/data/*.json "$source_dir"/tests/data/*.json "$source_dir"/tests/cli/golden/*.json; do
    name=$(basename "$net" .json)
    cp "$net" "$seeds/network/$name.json"
    "$pleat" export "$net" -o "$work/$name.onnx" > /dev/null 2>&1 && cp "$work/$name.onnx" "$seeds/onnx/"
  done
  local fold=$source_dir/data/fold2d.json
  "$pleat" walk "$fold" -q --certificates -o "$work/whole.jsonl" > /dev/null
  "$pleat" walk "$fold" -q --box -1,1 --certificates -o "$work/box.jsonl" > /dev/null
  "$pleat" walk "$fold" -q --domain "$source_dir/fuzz/seeds/domain/triangle.json" -o "$work/triangle.jsonl" > /dev/null
  for name in whole box triangle; do add_seed regions "$name.jsonl" "$work/$name.jsonl"; done
  "$pleat" survey --arch 2,3,1 --samples 6 --seed 1 --threads 1 -q -o "$work/survey.jsonl" > /dev/null
  "$pleat" survey --arch 1,2,2,1 --samples 4 --seed 2 --box -1,1 --task-index 1 --task-count 2 --threads 1 -q -o "$work/shard.jsonl" > /dev/null
  /usr/bin/python3 -c 'import numpy, sys
numpy.save(sys.argv[1], numpy.array([[0.5, -1.0], [0.25, 3.0]]))
numpy.save(sys.argv[2], numpy.array([1.5, -2.0], dtype=numpy.float32))' "$seeds/points/two.npy" "$seeds/points/one_input.npy"
  "$pleat" track "$source_dir/data/ramp1d.json" "$source_dir/tests/data/zero_row1d.json" --box -1,1 -q --threads 1 \
    -o "$work/track.jsonl" > /dev/null
  add_seed track track.jsonl "$work/track.jsonl"
  add_seed survey survey.jsonl "$work/survey.jsonl"
  add_seed survey shard.jsonl "$work/shard.jsonl"
}

if ! make_seeds; then
  echo "fuzz: could not write the seed files with $pleat" >&2
  exit 1
fi

status=0
printf '%-8s %8s %8s %8s  %s\n' reader seconds runs corpus result
for reader in "${readers[@]}"; do
  dirs=("$build/corpus/$reader" "$seeds/$reader")
  for extra in "$source_dir/fuzz/seeds/$reader" "$source_dir/fuzz/regressions/$reader"; do
    [ -d "$extra" ] && dirs+=("$extra")
  done
  log=$build/artifacts/$reader/log.txt
  start=$(date +%s)
  # -timeout: one input may take this long (the exact checks on a small
  # network take milliseconds); -close_fd_mask=1: the commands' stdout.
  "$build/fuzz/fuzz_$reader" "${dirs[@]}" -max_total_time="$seconds" -timeout=20 -rss_limit_mb=2560 \
    -max_len=8192 -close_fd_mask=1 -print_final_stats=1 -artifact_prefix="$build/artifacts/$reader/" > "$log" 2>&1
  code=$?
  elapsed=$(($(date +%s) - start))
  runs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -1)
  corpus=$(ls "$build/corpus/$reader" | wc -l)
  if [ "$code" -eq 0 ]; then
    result=ok
  else
    result="FAILED (exit $code): $(ls "$build/artifacts/$reader" | grep -v '^log.txt$' | sed "s|^|$build/artifacts/$reader/|" | tr '\n' ' ')"
    status=1
  fi
  printf '%-8s %8s %8s %8s  %s\n' "$reader" "$elapsed" "${runs:-?}" "$corpus" "$result"
  if [ "$code" -ne 0 ]; then
    grep -E -m 12 'ERROR|SUMMARY|terminate|what\(\)|#[0-9]+ 0x' "$log" | sed 's/^/    /'
    echo "    full log: $log"
  fi
done
exit $status
