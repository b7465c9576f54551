#!/usr/bin/python3
"""pleat.survey writes the CLI's resumable pleat-survey/1 file.

Outside reference: `pleat survey` itself. The same arguments give the same
header line and the same sample lines (apart from "seconds", the only key
allowed to differ between runs); each tool resumes the other's file; a last
line cut short is dropped and rerun; the exact statistics equal
`pleat survey summary --json`.
"""
import json
import os
import subprocess
import shutil
import sys
import tempfile
import unittest
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import harness  # noqa: E402
import pleat  # noqa: E402

ARGS = dict(arch=[2, 4, 3, 1], samples=12, seed=7)
CLI_ARGS = ["--arch", "2,4,3,1", "--samples", "12", "--seed", "7", "-q"]


def lines_without_seconds(path):
    with open(path) as handle:
        documents = [json.loads(line) for line in handle]
    for document in documents[1:]:
        document.pop("seconds")
    return documents[0], sorted(documents[1:], key=lambda d: d["sample"])


class SurveyTest(unittest.TestCase):
    def setUp(self):
        self.work = tempfile.mkdtemp(prefix="pleat-python-survey-")
        self.addCleanup(shutil.rmtree, self.work, ignore_errors=True)

    def test_same_file_as_the_cli(self):
        mine, theirs = os.path.join(self.work, "python.jsonl"), os.path.join(self.work, "cli.jsonl")
        result = pleat.survey(**ARGS, threads=2, output=mine, domain=(-3, 3))
        harness.cli_json("survey", *CLI_ARGS, "--box", "-3,3", "-o", theirs)
        self.assertEqual(lines_without_seconds(mine), lines_without_seconds(theirs))
        summary = harness.cli_json("survey", "summary", mine)
        self.assertEqual(result.certified, summary["certified"])
        self.assertEqual(result.mean, Fraction(summary["mean"]))
        self.assertEqual(result.variance, Fraction(summary["variance"]))
        self.assertEqual({str(k): v for k, v in result.histogram.items()}, summary["histogram"])

    def test_a_task_of_a_job_array_is_the_clis_task(self):
        mine, theirs = os.path.join(self.work, "task-py.jsonl"), os.path.join(self.work, "task-cli.jsonl")
        pleat.survey(**ARGS, output=mine, task_index=1, task_count=3)
        harness.cli_json("survey", *CLI_ARGS, "--task-index", "1", "--task-count", "3", "-o", theirs)
        self.assertEqual(lines_without_seconds(mine), lines_without_seconds(theirs))
        self.assertEqual([d["sample"] for d in lines_without_seconds(mine)[1]], [1, 4, 7, 10])
        with self.assertRaisesRegex(ValueError, "task_index: expected 0 to 2"):
            pleat.survey(**ARGS, task_index=3, task_count=3)
        # The CLI's spelling of arch, a string, was taken apart character by character.
        with self.assertRaisesRegex(ValueError, "arch: expected a list of layer widths, input first"):
            pleat.survey(**dict(ARGS, arch="2,4,3,1"))

    def test_each_resumes_the_other(self):
        path = os.path.join(self.work, "shared.jsonl")
        first = pleat.survey(**dict(ARGS, samples=6), output=path)
        self.assertEqual(len(first.samples), 6)
        # The CLI with more samples would be another survey; same survey, so the CLI finds all 6 done ...
        completed = subprocess.run([harness.PLEAT, "survey", "--arch", "2,4,3,1", "--samples", "6", "--seed", "7",
                                    "-o", path], capture_output=True, text=True)
        self.assertEqual(completed.returncode, 0, completed.stderr)
        self.assertIn("6 samples already there, 0 to run", completed.stderr)
        # ... and Python resumes a file the CLI left with a cut last line.
        with open(path) as handle:
            text = handle.read()
        with open(path, "w") as handle:
            handle.write(text[: text.rstrip("\n").rfind("\n") + 1] + text.rstrip("\n").rsplit("\n", 1)[1][:10])
        self.assertTrue(pleat.read_survey(path).dropped_partial_line)  # said, not silent
        again = pleat.survey(**dict(ARGS, samples=6), output=path)
        self.assertEqual(again.resumed, 5)
        self.assertTrue(again.dropped_partial_line)
        self.assertFalse(first.dropped_partial_line)
        self.assertFalse(pleat.read_survey(path).dropped_partial_line)
        self.assertEqual(sorted(s.sample for s in again.samples), list(range(6)))
        self.assertEqual(len(pleat.read_survey(path).samples), 6)
        # A file whose header was cut short is named as such, as the CLI does.
        with open(path, "w") as handle:
            handle.write(text.split("\n", 1)[0][:40])
        with self.assertRaisesRegex(ValueError, ":1: a survey header cut short"):
            pleat.read_survey(path)

    def test_a_different_survey_is_refused_with_the_cli_message(self):
        path = os.path.join(self.work, "other.jsonl")
        pleat.survey(**dict(ARGS, samples=2), output=path)
        with self.assertRaises(ValueError) as caught:
            pleat.survey(**dict(ARGS, samples=2, seed=8), output=path)
        expected = harness.cli_error("survey", "--arch", "2,4,3,1", "--samples", "2", "--seed", "8", "-o", path)
        self.assertEqual(str(caught.exception), expected)

    def test_to_pandas_when_installed(self):
        result = pleat.survey(**dict(ARGS, samples=3))
        self.assertEqual(len(result.to_records()), 3)
        try:
            import pandas  # noqa: F401
        except ImportError:
            return
        self.assertEqual(list(result.to_pandas()["sample"]), [0, 1, 2])


if __name__ == "__main__":
    harness.main()
