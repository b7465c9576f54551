#!/usr/bin/python3
"""The README's Python example prints exactly the output the README shows.

Outside reference: README.md itself (the section "From Python"): its first
```python block is run as it stands and its stdout compared with the
```text block that follows.
"""
import contextlib
import io
import os
import re
import sys
import unittest

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import harness  # noqa: E402


class ReadmeTest(unittest.TestCase):
    def test_python_example_output_is_real(self):
        with open(os.path.join(harness.SOURCE, "README.md"), encoding="utf-8") as handle:
            readme = handle.read()
        section = readme[readme.index("## From Python"):]
        section = section[:section.index("\n## ", 1)]
        code = re.search(r"```python\n(.*?)```", section, re.S).group(1)
        expected = re.search(r"```python\n.*?```.*?```text\n(.*?)```", section, re.S).group(1)
        output = io.StringIO()
        with contextlib.redirect_stdout(output):
            exec(compile(code, "README.md", "exec"), {"__name__": "readme"})
        self.assertEqual(output.getvalue(), expected)


if __name__ == "__main__":
    harness.main()
