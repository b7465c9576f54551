#!/usr/bin/env bash
# pleat report's cost beyond the walk and certify: for random 2-input networks
# (seed 2, box -3,3) the median seconds of `pleat walk` and of `pleat report`
# with certify stopped at once (--time-limit 0.01, so the page shows bounds and
# what remains is the walks, the exact polygons, the rank rows and writing the
# page), their ratio, and the page's size per region. Not a ctest case; run by
# hand (a minute or two): tests/bench/report_bench.sh BUILD/cli/pleat
set -u
pleat=${1:?usage: report_bench.sh PLEAT_BINARY}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
command -v hyperfine > /dev/null || { echo "hyperfine is missing (Debian package hyperfine)"; exit 1; }
printf '%-12s %8s %10s %12s %7s %14s\n' arch regions "walk s" "report s" ratio "bytes/region"
for width in 20 40 60; do
  arch=2,$width,$width,1
  "$pleat" random --arch $arch --seed 2 -o "$work/net.json" > /dev/null
  hyperfine --runs 3 --warmup 1 --export-json "$work/h.json" -N \
    "$pleat walk $work/net.json --box -3,3 -q" \
    "$pleat report $work/net.json --box -3,3 --time-limit 0.01 -q -o $work/page.html" > /dev/null 2>&1 ||
    { echo "$arch: hyperfine failed"; continue; }
  /usr/bin/python3 - "$work/h.json" "$work/page.html" "$arch" <<'PY'
import json, os, re, sys
runs = json.load(open(sys.argv[1]))["results"]
walk, report = (r["median"] for r in runs)
text = open(sys.argv[2], encoding="utf-8").read()
data = json.loads(re.search(r'id="pleat-data">(.*?)</script>', text, re.S).group(1).replace("<\\/", "</"))
regions = data["walk"]["regions"]
print("%-12s %8d %10.2f %12.2f %7.1f %14.0f" % (sys.argv[3], regions, walk, report, report / walk, os.path.getsize(sys.argv[2]) / regions))
PY
done
