#!/bin/bash
# A Ctrl-C while certify forms --rows-out's rows (its phase "rows", after the
# value is settled) is honoured: the rows formed before it are written under a
# first line that says the file is cut short, stderr says the same, the printed
# value stands, and the exit status is 130. Before, the interrupt was ignored
# there: the run went on forming every region's rows (tens of seconds on wide
# networks) and exited 0 with a file that read as complete. A Ctrl-C that
# stopped the walk still leaves the rows of the regions it found, whole (as
# documented), under the line of a run not certified.
# The signal is sent when the progress line (on a pseudo-terminal) first shows
# the phase, so the test does not depend on the machine's speed.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

# 2,40,40,3,1 seed 1: its walk takes under a second, its rows about two more
# (Release build), so the interrupt lands while they are formed. Its walk is
# too short to interrupt: the walk's progress comes every 0.2 s, and a CI
# machine walked it before the line first showed "regions walked". The walk
# case takes 2,60,60,60,1 seed 1, whose walk takes about 20 s here (the first
# progress line after 0.3 s), so the interrupt lands inside it on any machine.
"$pleat" random --arch 2,40,40,3,1 --seed 1 -o "$work/net.json" || fail "random"
"$pleat" random --arch 2,60,60,60,1 --seed 1 -o "$work/long_walk.json" || fail "random"

"$python" - "$pleat" "$work" <<'PY' || fail "the interrupted runs (above)"
import os, signal, subprocess, sys, json
from terminal import run_on_terminal
pleat, work = sys.argv[1], sys.argv[2]

def interrupted_at(trigger, net="net.json"):
    """certify with --rows-out, SIGINT when the progress line first shows trigger."""
    sent = []
    def interrupt_at_trigger(run, seen):
        if not sent and trigger in seen:
            run.send_signal(signal.SIGINT)
            sent.append(True)
    status, text = run_on_terminal(
        [pleat, "certify", work + "/" + net, "--json", "--rows-out", work + "/rows.txt"],
        stdout=open(work + "/out.json", "w"), on_output=interrupt_at_trigger)
    if not sent:
        sys.exit(f"the progress line never showed {trigger!r}:\n" + text[-2000:])
    if status != 130:
        sys.exit(f"interrupted at {trigger!r}: exit status {status}, expected 130 (interrupted)")
    return text, json.load(open(work + "/out.json")), open(work + "/rows.txt").read().splitlines()

# In the rows: the value stands, the file holds the first regions' rows.
text, out, lines = interrupted_at(b"certifying: rows")
if "partial: interrupted while the rows were formed" not in text:
    sys.exit("stderr does not say the rows were cut short:\n" + text[-2000:])
if not out["certified"]:
    sys.exit("the value settled before the rows should stand certified: " + json.dumps(out)[:500])
first = lines[0]
if not first.startswith("# partial: interrupted while the rows were formed; the exact rows of the first "):
    sys.exit("the rows file's first line: " + first)
formed, of = first.split("the first ")[1].split(" regions")[0].split(" of the ")
if not int(formed) < int(of) == out["regions_contributing"]:
    sys.exit(f"the file claims {formed} of {of} regions; certify counted {out['regions_contributing']}")
# The rows of each of those regions, whole: nd (n0 + 1) = 3 rows a region,
# 1887 entries a row (the rows are written as they are formed, a region at a
# time: the line must count what the file holds).
if len(lines) - 1 != 3 * int(formed) or any(len(line.split(",")) != 1887 for line in lines[1:]):
    sys.exit(f"{len(lines) - 1} rows under a line that says {formed} regions (3 rows each)")
# Nothing left beside the file (the rows went to a temporary file renamed over it).
if sorted(os.listdir(work)) != ["long_walk.json", "net.json", "out.json", "rows.txt"]:
    sys.exit("files left in the directory: " + " ".join(sorted(os.listdir(work))))

# In the walk: bounds, and every row of the regions that contributed.
text, out, lines = interrupted_at(b"regions walked", "long_walk.json")
if out["certified"] or out["stop_reason"] != "interrupted":
    sys.exit("a walk interrupted should leave bounds: " + json.dumps(out)[:500])
if not lines[0].startswith("# partial: the run was not certified (stopped: interrupted); the exact rows of the "):
    sys.exit("the rows file's first line after an interrupted walk: " + lines[0])
if len(lines) - 1 < out["regions_contributing"]:
    sys.exit(f"{len(lines) - 1} rows for {out['regions_contributing']} contributing regions: rows were dropped")
PY
echo ok
