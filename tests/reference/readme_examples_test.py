#!/usr/bin/python3
"""Every shell example in the README prints the output the README shows.

Outside reference: README.md itself. Each fenced block whose first line starts
with "$ " is a transcript: the commands run in order in one bash (stdout and
stderr together, as a terminal shows them), in a scratch directory that sees
the repository's data/, tests/ and scripts/, with `pleat` the binary under
test. Their output must equal the lines that follow each command, except for
measured times (a number followed by "s", "ms" or "samples/s", and the
"time"/"seconds" lines), which differ from run to run.

Blocks that need what a plain build does not provide are skipped by name:
mpirun (MPI is optional), an installed prefix (cmake/pkg-config: the install
test covers it) and the study-grid projection (hours of work).
"""
import os
import re
import shutil
import subprocess
import sys
import tempfile
import unittest

PLEAT = os.path.abspath(sys.argv[1]) if len(sys.argv) > 1 else "build/cli/pleat"
SOURCE = os.path.abspath(sys.argv[2]) if len(sys.argv) > 2 else "."
SKIPPED = ("mpirun", "cmake ", "pkg-config", "--samples 20000")


def transcripts(readme):
    """[(line number, [(command, expected output lines)])] of every "$ " block."""
    blocks = []
    for match in re.finditer(r"^```[a-z]*\n(.*?)^```", readme, re.S | re.M):
        lines = match.group(1).splitlines()
        if not lines or not lines[0].startswith("$ "):
            continue
        steps = []
        for line in lines:
            if line.startswith("$ "):
                steps.append((line[2:], []))
            else:
                steps[-1][1].append(line)
        blocks.append((readme.count("\n", 0, match.start()) + 1, steps))
    return blocks


TIME = re.compile(r"\d+(\.\d+)?(e-?\d+)?( ?(s|ms|us|samples/s)\b)")


def comparable(line, seconds_column=False):
    """The line with measured times replaced by a placeholder; with
    seconds_column (a table whose last column is "seconds"), its last number."""
    if re.match(r"^(time|seconds)\b", line.strip()):
        return line.split()[0] + " <time>"
    if seconds_column:
        line = re.sub(r"\d+\.\d+$", "<t>", line)
    line = re.sub(r"timed on \d+ threads?", "timed on <n> threads", line)  # the machine's cores
    return TIME.sub(r"<t>\3", line)


def shows(printed, expected):
    """True when the printed lines are the expected ones, a line "..." in
    expected standing for any number of printed lines."""
    pattern = "".join(r"(?:.*\n)*?" if line == "..." else re.escape(line + "\n") for line in expected)
    return re.fullmatch(pattern, "".join(line + "\n" for line in printed)) is not None


class ReadmeExamplesTest(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        with open(os.path.join(SOURCE, "README.md"), encoding="utf-8") as handle:
            cls.blocks = transcripts(handle.read())
        cls.scratch = tempfile.mkdtemp(prefix="pleat-readme-")
        for folder in ("data", "tests", "scripts"):
            os.symlink(os.path.join(SOURCE, folder), os.path.join(cls.scratch, folder))
        os.makedirs(os.path.join(cls.scratch, "docs", "figures"))
        cls.bin = os.path.join(cls.scratch, ".bin")
        os.makedirs(cls.bin)
        os.symlink(PLEAT, os.path.join(cls.bin, "pleat"))

    @classmethod
    def tearDownClass(cls):
        shutil.rmtree(cls.scratch)

    def test_the_readme_has_transcripts_of_the_main_commands(self):
        commands = {step[0].split()[1] for _, steps in self.blocks for step in steps
                    if step[0].startswith("pleat ")}
        for name in ("walk", "verify", "certify", "sample", "inspect", "draw", "report", "survey",
                     "track", "eval"):
            self.assertIn(name, commands)

    def test_every_transcript_prints_what_the_readme_shows(self):
        environment = dict(os.environ, PATH=self.bin + os.pathsep + os.environ["PATH"])
        for line_number, steps in self.blocks:
            if any(word in command for command, _ in steps for word in SKIPPED):
                continue
            # One bash per block, so a step sees the files and the exit status ($?) of the one before.
            marker = "@@pleat-readme-step@@"
            script = "status=0\n" + "".join(f"echo {marker}\n(exit $status)\n{command} 2>&1\nstatus=$?\n"
                                               for command, _ in steps)
            result = subprocess.run(["bash", "-c", script], cwd=self.scratch, env=environment,
                                    capture_output=True, text=True, timeout=600)
            outputs = result.stdout.split(marker + "\n")[1:]
            self.assertEqual(len(outputs), len(steps), f"README.md line {line_number}: {result.stderr}")
            for (command, expected), output in zip(steps, outputs):
                with self.subTest(line=line_number, command=command):
                    seconds_column = any(line.rstrip().endswith(" seconds") for line in expected)
                    shown = [comparable(line, seconds_column) for line in expected]
                    printed = [comparable(line, seconds_column) for line in output.splitlines()]
                    if not shows(printed, shown):
                        self.assertEqual(printed, shown, f"README.md line {line_number}: $ {command}")

if __name__ == "__main__":
    unittest.main(argv=[sys.argv[0], "-v"])
