#!/usr/bin/env bash
# pleat sample end to end: the --json keys of shared/spec/outputs.md
# (pleat-sample/1), agreement with `pleat walk` and `pleat certify` on the same
# domain, the verdict and first_batch_reaching re-derived from separate runs
# with smaller batches, reproducibility, and bad input.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

fold=$source_dir/data/fold2d.json

# ---- keys: the spec's list, plus the documented extras (domain, dtype,
# points_on_bent_hyperplanes and the bounds the verdict rests on).
"$pleat" sample "$fold" --batch 40 --seed 1 --json -q > "$work/s.json" || fail "sample --json exited $?"
keys=$(json_eval "$work/s.json" '",".join(sorted(d.keys()))')
expected="batch,certified_value,dist,domain,dtype,first_batch_reaching,format,lower_bound,parametric_dimension,points_on_bent_hyperplanes,rank,rank_rtol_1e-10,rank_rtol_1e-6,regions_total,regions_touched,scaling_bound,seconds,seed,stop_reason,upper_bound,verdict"
[ "$keys" = "$expected" ] || fail "sample --json keys: got $keys"
for key in batch seed dist rank rank_rtol_1e-6 rank_rtol_1e-10 regions_touched regions_total certified_value \
  verdict first_batch_reaching seconds; do
  case ",$keys," in *",$key,"*) ;; *) fail "spec key $key missing" ;; esac
done
[ "$(json_eval "$work/s.json" '(d["format"], d["batch"], d["seed"], d["dist"])')" = "('pleat-sample/1', 40, 1, 'normal')" ] ||
  fail "echoed settings"

# ---- against walk and certify on the same domain (normal -> R^2)
"$pleat" walk "$fold" --json -q > "$work/walk.json" || fail "walk exited $?"
"$pleat" certify "$fold" --json -q > "$work/certify.json" || fail "certify exited $?"
regions=$(json_eval "$work/walk.json" 'd["regions"]')
value=$(json_eval "$work/certify.json" 'd["functional_dimension"]')
[ "$(json_eval "$work/s.json" 'd["regions_total"]')" = "$regions" ] || fail "regions_total differs from pleat walk ($regions)"
[ "$(json_eval "$work/s.json" 'd["certified_value"]')" = "$value" ] || fail "certified_value differs from pleat certify ($value)"

# The verdict and first_batch_reaching, re-derived for several batches and
# seeds; where a prefix m is reported, batch m reaches the value and batch
# m - 1 does not (separate runs: the first m points of any batch are the same).
check_batch() {  # network dist batch seed domain-args...
  local net=$1 dist=$2 batch=$3 seed=$4
  shift 4
  "$pleat" sample "$net" --dist "$dist" --batch "$batch" --seed "$seed" --json -q > "$work/b.json" ||
    fail "sample $dist $batch $seed exited $?"
  "$pleat" walk "$net" "$@" --json -q > "$work/w.json" || fail "walk $* exited $?"
  "$pleat" certify "$net" "$@" --json -q > "$work/c.json" || fail "certify $* exited $?"
  local rank total touched certified verdict first
  rank=$(json_eval "$work/b.json" 'd["rank"]')
  total=$(json_eval "$work/b.json" 'd["regions_total"]')
  touched=$(json_eval "$work/b.json" 'd["regions_touched"]')
  certified=$(json_eval "$work/b.json" 'd["certified_value"]')
  verdict=$(json_eval "$work/b.json" 'd["verdict"]')
  first=$(json_eval "$work/b.json" 'd["first_batch_reaching"]')
  [ "$total" = "$(json_eval "$work/w.json" 'd["regions"]')" ] || fail "$dist: regions_total $total vs walk"
  [ "$certified" = "$(json_eval "$work/c.json" 'd["functional_dimension"]')" ] || fail "$dist: certified value"
  [ "$touched" -le "$total" ] || fail "$dist: touched $touched > total $total"
  [ "$touched" -le "$batch" ] || fail "$dist: touched $touched > batch $batch"
  [ "$rank" -le "$(json_eval "$work/b.json" 'd["rank_rtol_1e-10"]')" ] || fail "looser tolerance lower rank"
  [ "$(json_eval "$work/b.json" 'd["rank_rtol_1e-6"]')" -le "$(json_eval "$work/b.json" 'd["rank_rtol_1e-10"]')" ] ||
    fail "rtol 1e-6 above rtol 1e-10"
  if [ "$rank" -eq "$certified" ]; then
    [ "$verdict" = equal ] || fail "rank $rank = certified, verdict $verdict"
    [ "$first" != None ] || fail "reached but no first batch"
    [ "$first" -le "$batch" ] || fail "first batch $first > batch $batch"
    "$pleat" sample "$net" --dist "$dist" --batch "$first" --seed "$seed" --json -q > "$work/m.json"
    [ "$(json_eval "$work/m.json" 'd["rank"]')" = "$certified" ] || fail "batch $first does not reach $certified"
    if [ "$first" -gt 1 ]; then
      "$pleat" sample "$net" --dist "$dist" --batch $((first - 1)) --seed "$seed" --json -q > "$work/m.json"
      [ "$(json_eval "$work/m.json" 'd["rank"]')" -lt "$certified" ] || fail "batch $((first - 1)) already reaches"
    fi
  elif [ "$rank" -lt "$certified" ]; then
    [ "$verdict" = below ] || fail "rank $rank < certified $certified, verdict $verdict"
    [ "$first" = None ] || fail "not reached but first batch $first"
  else
    [ "$verdict" = above-impossible ] || fail "rank above the certified value, verdict $verdict"
  fi
  echo "$(basename "$net") $dist batch $batch seed $seed: rank $rank, certified $certified, $verdict, touched $touched/$total, first $first"
}
check_batch "$fold" normal 40 1
check_batch "$fold" normal 200 2
check_batch "$fold" box:-1,1 60 3 --box -1,1
check_batch "$fold" box:-1,1,-0.5,0.5 30 4 --box -1,1,-0.5,0.5
check_batch "$fold" box:-30,30 300 5 --box -30,30
# Cases that reach the certified value (so first_batch_reaching is checked):
check_batch "$source_dir/data/degenerate2d.json" box:-2,2 60 3 --box -2,2
check_batch "$source_dir/data/ramp1d.json" box:-5,5 40 6 --box -5,5
check_batch "$source_dir/data/ramp1d.json" normal 200 7

# ---- reproducible: same seed same document (but seconds), any --threads
strip() { grep -v '"seconds"' "$1"; }
"$pleat" sample "$fold" --batch 40 --seed 1 --json -q --threads 1 > "$work/t1.json"
"$pleat" sample "$fold" --batch 40 --seed 1 --json -q --threads 2 > "$work/t2.json"
[ "$(strip "$work/t1.json")" = "$(strip "$work/s.json")" ] || fail "same seed, different result"
[ "$(strip "$work/t1.json")" = "$(strip "$work/t2.json")" ] || fail "--threads changes the result"
"$pleat" sample "$fold" --batch 40 --seed 9 --json -q > "$work/s9.json"
[ "$(strip "$work/s9.json")" != "$(strip "$work/s.json")" ] || echo "note: seeds 1 and 9 gave the same summary"

# ---- --points-out: the very points, exactly; the exact batch rank at them
# (pleat certify --points) equals the float rank, so on these generic
# networks a shortfall is coverage (regions never reached), not rounding.
for args in "$fold 40 1" "$fold 200 2" "$source_dir/data/degenerate2d.json 60 3"; do
  set -- $args
  "$pleat" sample "$1" --batch "$2" --seed "$3" --json -q --points-out "$work/points.csv" > "$work/p.json" ||
    fail "--points-out exited $?"
  [ "$(grep -c . "$work/points.csv")" = "$2" ] || fail "--points-out wrote $(grep -c . "$work/points.csv") points, batch $2"
  exact=$("$pleat" certify "$1" --points "$work/points.csv" --json | "$python" -c 'import json,sys; print(json.load(sys.stdin)["batch_functional_dimension"])') ||
    fail "certify --points on the sampled points"
  [ "$exact" = "$(json_eval "$work/p.json" 'd["rank"]')" ] || fail "exact batch rank $exact, float rank $(json_eval "$work/p.json" 'd["rank"]') ($args)"
  [ "$(json_eval "$work/p.json" 'd["points_on_bent_hyperplanes"]')" = 0 ] || fail "a Gaussian point on a bent hyperplane?"
done

# ---- human output says how many regions were touched out of how many
out=$("$pleat" sample "$fold" --batch 40 --seed 1 -q) || fail "human sample exited $?"
expect_contains "$out" "regions touched" "human output"
expect_contains "$out" "of the $regions regions that exist" "the regions sentence"
expect_contains "$out" "certified value       $value" "human output"

# ---- bad input: exit 2 with a message naming the option
for args in "--batch 0 --seed 1" "--batch 5 --seed 1 --dist uniform" "--batch 5 --seed 1 --dist box:2,1" \
  "--batch 5 --seed 1 --dist box:1,2,3" "--batch -5 --seed 1" "--seed 1"; do
  # shellcheck disable=SC2086
  err=$("$pleat" sample "$fold" $args -q 2>&1 >/dev/null)
  status=$?
  [ "$status" = 2 ] || fail "'$args': exit $status, expected 2"
  case "$err" in *--batch*|*--dist*) ;; *) fail "'$args': message does not name the option: $err" ;; esac
done
out=$("$pleat" sample --help) || fail "--help exited $?"
expect_contains "$out" "sigma_max * max(M,N) * eps" "--help names the tolerance"
expect_contains "$out" "regions touched" "--help explains regions touched"

# ---- --dtype float32: every sampled coordinate is a float32 value (numpy's
# float32 round trip, outside reference), the rank uses float32's epsilon.
"$pleat" sample "$fold" --batch 30 --seed 2 --dtype float32 --json -q --points-out "$work/f32.txt" \
  > "$work/f32.json" || fail "--dtype float32 exited $?"
[ "$(json_eval "$work/f32.json" 'd["dtype"]')" = float32 ] || fail "dtype key"
"$python" - "$work/f32.txt" <<'PY' || fail "float32 points are not float32 values"
import sys
from fractions import Fraction
import numpy
for line in open(sys.argv[1]):
    for text in line.strip().split(","):
        value = Fraction(text)
        assert Fraction(float(numpy.float32(float(value)))) == value, text
PY
[ "$(json_eval "$work/f32.json" 'd["rank"] <= d["upper_bound"] or d["verdict"] == "above-impossible"')" = True ] ||
  fail "float32 rank and verdict disagree"
err=$("$pleat" sample "$fold" --batch 5 --seed 1 --dtype float16 -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "--dtype float16 must be exit 2"
expect_contains "$err" "--dtype" "the message names --dtype"

# ---- a time limit that falls after the walk (in the kernel's proof) is not
# "the walk stopped early": 1,64,64,1 has a short walk and a large kernel
# (certify_stop_test.sh). On a loaded machine the walk itself may be cut; the
# text must then say so, and count the regions as "at least".
wide=$work/wide.json
"$pleat" random --arch 1,64,64,1 --seed 1 -o "$wide" || fail "pleat random exited $?"
out=$("$pleat" sample "$wide" --batch 10 --seed 1 --time-limit "$(scaled 2)" -q) || fail "time-limited sample exited $?"
case "$out" in
  *"regions touched       10 of at least"*)
    expect_contains "$out" "certified value       none: the walk stopped early (time-limit)" "a walk cut short" ;;
  *)
    expect_contains "$out" "certified value       none: stopped after the walk (time-limit)" "a whole walk, proof cut short" ;;
esac
# --json says why there is no certified value (the key was missing: only
# the Python module had it).
"$pleat" sample "$wide" --batch 10 --seed 1 --time-limit "$(scaled 2)" -q --json > "$work/cut.json" ||
  fail "time-limited sample --json exited $?"
[ "$(json_eval "$work/cut.json" '(d["certified_value"], d["stop_reason"])')" = "(None, 'time-limit')" ] ||
  fail "sample --json cut short: $(head -c 600 "$work/cut.json")"
[ "$(json_eval "$work/s.json" 'd["stop_reason"]')" = None ] || fail "a whole sample's stop_reason is not null"
# Without a certified value no prefix can be said to reach it (it printed
# "none within the batch", as if the value were known and missed).
expect_contains "$out" "first batch reaching  not known (no certified value to reach)" "first batch of a run cut short"

# Parameters beyond the estimate's number type: a weight of 10^4000 is infinite
# in float64 (10^39 in float32), so the Jacobian holds inf and NaN and its SVD
# rank means nothing. Refused, naming the point and the parameter (the old
# binary printed "sampled rank 5" and a verdict against the certified value).
huge() {
  printf '{"format": "pleat-network/1", "input_dim": 1, "layers": [{"weights": [["%s"], ["2"], ["-1"]], "bias": ["0", "1", "1"]}, {"weights": [["1", "1", "1"]], "bias": ["0"], "activation": "linear"}]}\n' "$1"
}
huge 1e4000 > "$work/huge64.json"
err=$("$pleat" sample "$work/huge64.json" --batch 8 --seed 1 -q 2>&1 > /dev/null)
[ $? = 2 ] || fail "sample with a weight beyond float64 must exit 2: $err"
expect_contains "$err" "pleat: sample: point 1 of 8: the float64 Jacobian's entry for parameter W2[0,0] is not finite" \
  "a weight beyond float64"
huge 1e39 > "$work/huge32.json"
"$pleat" sample "$work/huge32.json" --batch 8 --seed 1 -q > /dev/null || fail "10^39 fits float64: sample exited $?"
err=$("$pleat" sample "$work/huge32.json" --batch 8 --seed 1 --dtype float32 -q 2>&1 > /dev/null)
[ $? = 2 ] || fail "sample --dtype float32 with a weight beyond float32 must exit 2: $err"
expect_contains "$err" "the float32 Jacobian's entry for parameter " "a weight beyond float32"
# A --dist box with no double strictly inside an axis drew points forever
# (unstoppable: the draw loop polled nothing); now exit 2 at once.
err=$(timeout 60 "$pleat" sample "$work/huge32.json" --batch 8 --seed 1 --dist box:1,1.00000000000000000001 -q 2>&1 > /dev/null)
status=$?
[ $status = 2 ] || fail "sample with a box too narrow for float64 must exit 2, not $status: $err"
expect_contains "$err" "pleat: --dist: axis 0: the interval (1, 100000000000000000001/100000000000000000000) is too narrow" \
  "a box too narrow for float64"
# Long exact numbers in those messages are an approximation and a size (the
# whole 401 digits of 10^400 were printed).
err=$("$pleat" sample "$work/huge32.json" --batch 8 --seed 1 --dist box:0,1e400 -q 2>&1 > /dev/null)
[ $? = 2 ] || fail "sample with a box beyond float64 must exit 2: $err"
expect_contains "$err" "pleat: --dist: axis 0: the interval (0, about 1.00000e+400 (an integer of 401 digits)) reaches beyond" \
  "a box beyond float64"
[ ${#err} -lt 200 ] || fail "the message is ${#err} characters: $err"

echo "sample: all checks passed"
