#!/usr/bin/python3
"""Regions per second of `pleat walk`, time to a certified functional dimension with
`pleat certify` (and the regions it needed before its early stop), and the time of the
usual sampled estimate `pleat sample --batch 2*scaling_bound` on the same network.

Random He-initialised networks from `pleat random` (seeds 1..SEEDS), one output,
input dimension 2 and 3, widths 5/10/15, 3 to 6 hidden layers. Every walk is capped at
PLEAT_BENCH_LIMIT seconds (default 20): a capped walk's rate is still a rate, and its
region count is printed with ">=". Medians over seeds; one thread (--threads 1), so the
numbers do not depend on what else the machine runs on its other core.

Usage: walk_bench.py PLEAT_BINARY     (PLEAT_BENCH_FULL=1 for the whole grid)
"""
import json
import os
import statistics
import subprocess
import sys
import tempfile

pleat = sys.argv[1]
full = os.environ.get("PLEAT_BENCH_FULL") == "1"
limit = os.environ.get("PLEAT_BENCH_LIMIT", "20")
seeds = range(1, 4 if full else 2)
grid = [(n0, w, d) for n0 in (2, 3) for w in (5, 10, 15) for d in (3, 4, 5, 6)]
if not full:
    grid = [(2, 5, 3), (2, 5, 6), (2, 10, 3), (2, 10, 4), (2, 15, 3), (3, 5, 3), (3, 10, 3)]


def run_json(*args):
    out = subprocess.run([pleat, *args, "--json", "--quiet"], check=True, capture_output=True, text=True)
    return json.loads(out.stdout)


def has_sample():
    return subprocess.run([pleat, "sample", "--help"], capture_output=True).returncode == 0


sample_available = has_sample()
print(f"{'n0':>2} {'widths':>14} {'regions':>9} {'reg/s':>8} {'certify s':>9} {'fd':>4} {'bound':>5} "
      f"{'walked':>7} {'sample s':>8} {'sample rank':>11} {'touched':>8} {'certify/sample':>14}")
with tempfile.TemporaryDirectory() as work:
    for n0, width, depth in grid:
        rows = []
        for seed in seeds:
            arch = ",".join([str(n0)] + [str(width)] * depth + ["1"])
            net = os.path.join(work, f"net_{n0}_{width}_{depth}_{seed}.json")
            subprocess.run([pleat, "random", "--arch", arch, "--seed", str(seed), "-o", net], check=True)
            walk = run_json("walk", net, "--threads", "1", "--time-limit", limit)
            cert = run_json("certify", net, "--threads", "1", "--time-limit", limit)
            row = {
                "regions": walk["regions"], "complete": walk["complete"], "walk_s": walk["seconds"],
                "certify_s": cert["seconds"], "fd": cert["functional_dimension"],
                "bound": cert["scaling_bound"], "walked": cert["regions_walked"],
            }
            if sample_available:
                batch = 2 * cert["scaling_bound"]
                sample = run_json("sample", net, "--batch", str(batch), "--seed", "1", "--threads", "1")
                row.update(sample_s=sample["seconds"], sample_rank=sample["rank"],
                           touched=sample["regions_touched"])
            rows.append(row)
        med = lambda key: statistics.median(r[key] for r in rows)
        regions = ("" if all(r["complete"] for r in rows) else ">=") + str(int(med("regions")))
        rate = statistics.median(r["regions"] / max(r["walk_s"], 1e-9) for r in rows)
        fd = rows[0]["fd"] if rows[0]["fd"] is not None else "?"
        line = (f"{n0:>2} {str(width) + 'x' + str(depth):>14} {regions:>9} {rate:>8.0f} {med('certify_s'):>9.2f} "
                f"{fd!s:>4} {rows[0]['bound']:>5} {int(med('walked')):>7}")
        if sample_available:
            ratio = med("certify_s") / max(med("sample_s"), 1e-9)
            line += f" {med('sample_s'):>8.2f} {rows[0]['sample_rank']:>11} {int(med('touched')):>8} {ratio:>14.1f}"
        print(line, flush=True)
