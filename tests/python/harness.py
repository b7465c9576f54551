"""Shared set-up of the Python module tests (tests/python/*_test.py).

Each test file is one ctest case: /usr/bin/python3 FILE PLEAT_BINARY SOURCE_DIR,
with PYTHONPATH pointing at the build tree's package (build/python). The
command line's JSON is the reference for "the same result": every function of
the module is compared with `pleat ... --json` on the bundled networks.
"""
import json
import os
import subprocess
import sys
import unittest
from fractions import Fraction

PLEAT = sys.argv[1] if len(sys.argv) > 1 else "build/cli/pleat"
SOURCE = sys.argv[2] if len(sys.argv) > 2 else "."


def data(name):
    return os.path.join(SOURCE, "data", name)


def test_data(name):
    return os.path.join(SOURCE, "tests", "data", name)


def cli_json(*arguments):
    """`pleat ARGS --json -q` parsed (exit status 0 required)."""
    result = subprocess.run([PLEAT, *arguments, "--json"], capture_output=True, text=True, timeout=300)
    if result.returncode != 0:
        raise AssertionError(f"pleat {' '.join(arguments)} exited {result.returncode}: {result.stderr}")
    return json.loads(result.stdout)


def cli_error(*arguments):
    """The message of `pleat ARGS` that must fail with exit 2 ('pleat: ' removed)."""
    result = subprocess.run([PLEAT, *arguments], capture_output=True, text=True, timeout=60)
    assert result.returncode == 2, f"pleat {' '.join(arguments)} exited {result.returncode}, expected 2"
    line = result.stderr.strip().splitlines()[-1]
    assert line.startswith("pleat: "), line
    return line[len("pleat: "):]


def fractions(texts):
    return [Fraction(t) for t in texts]


def main():
    unittest.main(argv=[sys.argv[0], "-v"])
