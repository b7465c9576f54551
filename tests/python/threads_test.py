#!/usr/bin/python3
"""Jobs release the GIL and stop on Ctrl-C.

- KeyboardInterrupt: a timer thread sends SIGINT to this process (what Ctrl-C
  does) while a walk, a certify and a survey run in the main thread; each
  returns what it found, marked as bounds (certified False, stop reason
  "interrupted"), within a couple of seconds of the signal.
- The GIL: two walks in two Python threads overlap in time (each thread's
  [start, end] interval intersects the other's, which cannot happen when a
  call holds the GIL), and a plain Python loop keeps counting during a walk.
"""
import atexit
import os
import random
import shutil
import signal
import subprocess
import sys
import tempfile
import threading
import time
import unittest

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import harness  # noqa: E402
import pleat  # noqa: E402

WORK = tempfile.mkdtemp(prefix="pleat-python-threads-")
atexit.register(shutil.rmtree, WORK, ignore_errors=True)


def random_network(arch, seed):
    """`pleat random` (the CLI's generator) as a pleat.Network."""
    path = os.path.join(WORK, f"net-{arch}-{seed}.json")
    subprocess.run([harness.PLEAT, "random", "--arch", arch, "--seed", str(seed), "-o", path], check=True)
    return pleat.Network.from_file(path)


def interrupt_after(seconds):
    timer = threading.Timer(seconds, lambda: os.kill(os.getpid(), signal.SIGINT))
    timer.start()
    return timer


# A network whose walk and certify both take many seconds (tests/bench/interrupt_soak.py);
# 3,10,10,1 no longer does since 3-input cells skip the LPs (lp/space_cell.hpp).
SLOW = random_network("3,20,20,20,1", 3)


class InterruptTest(unittest.TestCase):
    def test_walk_returns_partial_results(self):
        started = time.monotonic()
        interrupt_after(0.5)
        result = SLOW.walk(threads=2)
        elapsed = time.monotonic() - started
        self.assertEqual(result.stop_reason, "interrupted")
        self.assertFalse(result.certified)
        self.assertFalse(result.complete)
        self.assertEqual(len(result.regions), result.region_count)
        self.assertLess(elapsed, 5.0)

    def test_certify_returns_bounds(self):
        interrupt_after(0.5)
        result = SLOW.certify(threads=2, full_walk=True)
        self.assertEqual(result.stop_reason, "interrupted")
        self.assertFalse(result.certified)
        self.assertIsNone(result.functional_dimension)
        self.assertLessEqual(result.lower_bound, result.upper_bound)

    def test_certify_at_points_returns_bounds(self):
        # The batch stage (certify(points=...)) polls the stop too: it was deaf
        # to Ctrl-C and to time_limit, which now covers the batch stage and
        # the walk after it. 1000 points on 2,15,15,15,15,1: their exact
        # proof takes ~24 s (a wide margin above the stops at 1 s; 300 points
        # on 2,15,15,15,1 took ~10 s until the span proof took 0.6 s).
        net = random_network("2,15,15,15,15,1", 1)
        box = [[-2.5, 2.5], [-2.5, 2.5]]
        rng = random.Random(5)
        points = [[rng.uniform(-2, 2), rng.uniform(-2, 2)] for _ in range(1000)]
        for stop in ("time-limit", "interrupted"):
            started = time.monotonic()
            if stop == "interrupted":
                interrupt_after(1.0)
                result = net.certify(box, points=points, threads=1)
            else:
                result = net.certify(box, points=points, threads=1, time_limit=1.0)
            self.assertLess(time.monotonic() - started, 8.0)
            self.assertEqual(result.stop_reason, stop)
            self.assertFalse(result.certified)
            self.assertEqual(result.regions_walked, 0)  # stopped in the batch stage: nothing walked
            batch = result.batch
            self.assertIsNone(batch.batch_functional_dimension)
            self.assertLessEqual(batch.lower_bound, batch.upper_bound)
            self.assertLessEqual(batch.upper_bound, result.scaling_bound)

    def test_survey_keeps_finished_samples(self):
        path = os.path.join(WORK, "interrupted.jsonl")
        interrupt_after(1.0)
        result = pleat.survey([3, 10, 10, 1], 200, 3, threads=2, output=path)
        self.assertTrue(result.interrupted)
        self.assertIn("interrupted=True", repr(result))  # the repr of a partial survey says so
        self.assertLess(len(result.samples), 200)
        again = pleat.read_survey(path)
        self.assertEqual([s.sample for s in again.samples], [s.sample for s in result.samples])

    def test_python_keeps_running_after_an_interrupted_job(self):
        interrupt_after(0.3)
        SLOW.walk(threads=1)
        self.assertTrue(pleat.Network.from_file(harness.data("ramp1d.json")).certify().certified)


class GilTest(unittest.TestCase):
    def test_two_walks_in_two_threads_overlap(self):
        intervals = {}

        def run(name):
            start = time.monotonic()
            SLOW.walk(threads=1, time_limit=1.0)
            intervals[name] = (start, time.monotonic())

        threads = [threading.Thread(target=run, args=(name,)) for name in ("a", "b")]
        for thread in threads:
            thread.start()
        for thread in threads:
            thread.join()
        (a_start, a_end), (b_start, b_end) = intervals["a"], intervals["b"]
        overlap = min(a_end, b_end) - max(a_start, b_start)
        self.assertGreater(overlap, 0.5, intervals)

    def test_python_runs_during_a_walk(self):
        ticks = []
        stop = threading.Event()

        def count():
            while not stop.is_set():
                ticks.append(time.monotonic())
                time.sleep(0.01)

        counter = threading.Thread(target=count)
        counter.start()
        start = time.monotonic()
        SLOW.walk(threads=1, time_limit=1.0)
        end = time.monotonic()
        stop.set()
        counter.join()
        during = [t for t in ticks if start < t < end]
        self.assertGreater(len(during), 20)


if __name__ == "__main__":
    harness.main()
