#!/usr/bin/env python3
"""Interrupt soak (a benchmark, not a ctest case: it takes minutes).

    tests/bench/interrupt_soak.py BUILD/cli/pleat [ROUNDS] [SEED]

Interrupts pleat walk, certify and survey ROUNDS times each (default 20) with
one SIGINT (what Ctrl-C sends) at a random moment, and checks what each run
left behind:
  walk     exit 130 (or 0 if it finished first); the --json summary parses,
           says complete and certified only if the run finished; every line
           of the region file parses, ids run 0.. with distinct patterns;
           `pleat verify` on the partial file exits 1 naming the walk as
           incomplete (never a crash, never "verified").
  certify  exit 130 or 0; the --json document parses; if interrupted,
           certified is false and lower_bound <= upper_bound.
  survey   exit 130 or 0; the file's whole lines parse; `survey summary`
           reads it; rerunning the same command resumes it to the end, and
           the resumed file holds the same samples with the same values as
           an uninterrupted run.
Prints one row per command (rounds, how many were cut short, failures, the
median seconds from SIGINT to exit) and exits 1 if any check failed.
"""
import json
import os
import random
import signal
import statistics
import subprocess
import sys
import tempfile
import time

PLEAT = sys.argv[1] if len(sys.argv) > 1 else "build/cli/pleat"
ROUNDS = int(sys.argv[2]) if len(sys.argv) > 2 else 20
random.seed(int(sys.argv[3]) if len(sys.argv) > 3 else 1)
WORK = tempfile.mkdtemp(prefix="pleat-soak-")
failures = []


def fail(command, round_, what):
    failures.append(f"{command} round {round_}: {what}")


def run(arguments, **kwargs):
    return subprocess.run([PLEAT, *arguments], capture_output=True, text=True, **kwargs)


def interrupted(arguments, delay):
    """Starts pleat, sends one SIGINT after `delay` seconds; returns
    (exit code, stdout, stderr, seconds from the signal to the exit)."""
    process = subprocess.Popen([PLEAT, *arguments], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        process.wait(timeout=delay)
    except subprocess.TimeoutExpired:
        pass
    sent = time.monotonic()
    if process.poll() is None:
        process.send_signal(signal.SIGINT)
    out, err = process.communicate(timeout=600)
    return process.returncode, out, err, time.monotonic() - sent


def random_delay(seconds_full):
    """A moment within the run (at most 20 s in, to bound the soak's length)."""
    return random.uniform(0.05, max(0.1, min(0.8 * seconds_full, 20.0)))


def check_exit(command, round_, code, err):
    if code not in (0, 130):
        fail(command, round_, f"exit {code}: {err.strip()[-300:]}")
    if "internal error" in err:
        fail(command, round_, f"internal error: {err.strip()[-300:]}")


def soak_walk(network, seconds_full):
    latencies, cut = [], 0
    for round_ in range(ROUNDS):
        regions = os.path.join(WORK, f"walk{round_}.jsonl")
        code, out, err, latency = interrupted(
            ["walk", network, "-q", "--json", "--certificates", "-o", regions], random_delay(seconds_full))
        check_exit("walk", round_, code, err)
        cut += code == 130
        latencies.append(latency)
        try:
            summary = json.loads(out)
            if code == 130 and (summary["complete"] or summary["certified"] or summary["stop_reason"] != "interrupted"):
                fail("walk", round_, f"interrupted but the summary says {summary['complete']=}, {summary['certified']=}")
        except (ValueError, KeyError) as error:
            fail("walk", round_, f"--json summary does not parse ({error}): {out[:200]!r}")
        try:
            lines = open(regions).read().splitlines()
            header, rows = json.loads(lines[0]), [json.loads(line) for line in lines[1:]]
            assert header["format"] == "pleat-regions/1"
            assert [row["id"] for row in rows] == list(range(len(rows))), "ids are not 0.."
            assert len({row["pattern"] for row in rows}) == len(rows), "a pattern repeats"
        except (ValueError, KeyError, IndexError, AssertionError) as error:
            fail("walk", round_, f"region file malformed: {error}")
            continue
        check = run(["verify", network, regions])
        if code == 0 and check.returncode != 0:
            fail("walk", round_, f"verify refused a finished walk: {check.stdout.strip()}")
        if code == 130 and (check.returncode != 1 or "incomplete" not in check.stdout):
            fail("walk", round_, f"verify on the partial file: exit {check.returncode}: "
                                 f"{(check.stdout + check.stderr).strip()[:300]}")
    return cut, latencies


def soak_certify(network, seconds_full):
    latencies, cut = [], 0
    for round_ in range(ROUNDS):
        code, out, err, latency = interrupted(["certify", network, "-q", "--json"], random_delay(seconds_full))
        check_exit("certify", round_, code, err)
        cut += code == 130
        latencies.append(latency)
        try:
            result = json.loads(out)
            lower, upper = result["lower_bound"], result["upper_bound"]
            if code == 130 and result["certified"]:
                fail("certify", round_, "interrupted but certified")
            if lower is not None and upper is not None and int(lower) > int(upper):
                fail("certify", round_, f"lower_bound {lower} > upper_bound {upper}")
        except (ValueError, KeyError, TypeError) as error:
            fail("certify", round_, f"--json does not parse ({error}): {out[:200]!r}")
    return cut, latencies


def survey_samples(path):
    """Sample index -> the line without timing keys, from the whole lines."""
    lines = open(path).read().split("\n")
    whole = lines[:-1]  # the text after the last newline is a cut-short line (or empty)
    samples = {}
    for line in whole[1:]:
        record = json.loads(line)
        record.pop("seconds", None)
        samples[record["sample"]] = record
    return json.loads(whole[0]), samples


def soak_survey(arguments, seconds_full):
    reference = os.path.join(WORK, "survey-reference.jsonl")
    done = run([*arguments, "-o", reference])
    if done.returncode != 0:
        fail("survey", "-", f"the uninterrupted survey exited {done.returncode}: {done.stderr[-300:]}")
        return 0, []
    _, expected = survey_samples(reference)
    latencies, cut = [], 0
    for round_ in range(ROUNDS):
        path = os.path.join(WORK, f"survey{round_}.jsonl")
        code, _, err, latency = interrupted([*arguments, "-o", path], random_delay(seconds_full))
        check_exit("survey", round_, code, err)
        cut += code == 130
        latencies.append(latency)
        if not os.path.exists(path):
            continue  # stopped before the header was written: nothing to resume
        try:
            _, partial = survey_samples(path)
        except (ValueError, KeyError, IndexError) as error:
            fail("survey", round_, f"partial file malformed: {error}")
            continue
        for index, record in partial.items():
            if record["certified"] and record != expected.get(index):
                fail("survey", round_, f"sample {index} certified with other values than the full run: {record}")
        summary = run(["survey", "summary", path])
        if summary.returncode != 0:
            fail("survey", round_, f"summary of the partial file: exit {summary.returncode}: {summary.stderr[-300:]}")
        resumed = run([*arguments, "-o", path])
        if resumed.returncode != 0:
            fail("survey", round_, f"resume exited {resumed.returncode}: {resumed.stderr[-300:]}")
            continue
        _, final = survey_samples(path)
        if final != expected:
            fail("survey", round_, "the resumed file differs from an uninterrupted run")
    return cut, latencies


def full_seconds(arguments):
    start = time.monotonic()
    finished = run(arguments)
    if finished.returncode != 0:
        sys.exit(f"{' '.join(arguments)}: exit {finished.returncode}: {finished.stderr}")
    return time.monotonic() - start


def main():
    network = os.path.join(WORK, "net.json")
    # 1457 regions, D = 161: a few seconds of walk, and of certify (which
    # does not stop early on it: functional dimension 140 < scaling bound 141).
    subprocess.run([PLEAT, "random", "--arch", "3,10,10,1", "--seed", "3", "-o", network], check=True)
    survey = ["survey", "--arch", "2,6,6,1", "--samples", "24", "--seed", "5", "--threads", "2", "-q"]
    rows = []
    walk_seconds = full_seconds(["walk", network, "-q", "--certificates", "-o", os.path.join(WORK, "full.jsonl")])
    rows.append(("walk", walk_seconds, *soak_walk(network, walk_seconds)))
    certify_seconds = full_seconds(["certify", network, "-q"])
    rows.append(("certify", certify_seconds, *soak_certify(network, certify_seconds)))
    survey_seconds = full_seconds([*survey, "-o", os.path.join(WORK, "timing.jsonl")])
    rows.append(("survey", survey_seconds, *soak_survey(survey, survey_seconds)))
    print(f"{'command':8} {'full s':>7} {'rounds':>6} {'cut':>4} {'stop s (median)':>15} {'stop s (max)':>12}")
    for command, seconds, cut, latencies in rows:
        median = statistics.median(latencies) if latencies else float("nan")
        worst = max(latencies) if latencies else float("nan")
        print(f"{command:8} {seconds:7.2f} {len(latencies):6} {cut:4} {median:15.3f} {worst:12.3f}")
    print(f"failures: {len(failures)}")
    for line in failures:
        print("  " + line)
    return 1 if failures else 0


if __name__ == "__main__":
    try:
        sys.exit(main())
    finally:
        subprocess.run(["rm", "-rf", WORK])
