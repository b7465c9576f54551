"""Runs a command with its standard error on a pseudo-terminal, as a user's
terminal would be, for the end-to-end tests that look at the progress line
(imported by the scripts' Python parts; lib.sh puts this folder on
PYTHONPATH)."""
import os
import pty
import subprocess


def run_on_terminal(args, stdout=subprocess.DEVNULL, on_output=None):
    """Runs args with standard error on a pseudo-terminal and reads it to the
    end. on_output(process, seen), if given, is called after each chunk read
    with all the bytes seen so far (to signal the process when a phase shows).
    Returns (exit status, what was written there, decoded)."""
    leader, follower = pty.openpty()
    process = subprocess.Popen(args, stdout=stdout, stderr=follower)
    os.close(follower)
    seen = b""
    while True:
        try:
            chunk = os.read(leader, 65536)
        except OSError:  # EIO: the process closed its end
            break
        if not chunk:
            break
        seen += chunk
        if on_output:
            on_output(process, seen)
    os.close(leader)
    return process.wait(), seen.decode("utf-8", "replace")
