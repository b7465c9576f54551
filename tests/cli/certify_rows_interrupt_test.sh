#!/bin/bash
# A Ctrl-C while certify forms --rows-out's rows (its phase "rows", after the
# value is settled) is honoured: the rows formed before it are written under a
# first line that says the file is cut short, stderr says the same, the printed
# value stands, and the exit status is 130. Before, the interrupt was ignored
# there: the run went on forming every region's rows (tens of seconds on wide
# networks) and exited 0 with a file that read as complete.
# The signal is sent when the progress line (on a pseudo-terminal) first shows
# the phase, so the test does not depend on the machine's speed.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

# 2,40,40,3,1 seed 1: its walk takes under a second, its rows about two more
# (Release build), so the interrupt lands while they are formed.
"$pleat" random --arch 2,40,40,3,1 --seed 1 -o "$work/net.json" || fail "random"

"$python" - "$pleat" "$work" <<'PY' || fail "the interrupted run (above)"
import os, pty, signal, subprocess, sys, json
pleat, work = sys.argv[1], sys.argv[2]
leader, follower = pty.openpty()
run = subprocess.Popen([pleat, "certify", work + "/net.json", "--json", "--rows-out", work + "/rows.txt"],
                       stdout=open(work + "/out.json", "w"), stderr=follower)
os.close(follower)
seen = b""
sent = False
while True:
    try:
        chunk = os.read(leader, 65536)
    except OSError:
        break
    if not chunk:
        break
    seen += chunk
    if not sent and b"certifying: rows" in seen:
        run.send_signal(signal.SIGINT)
        sent = True
status = run.wait()
text = seen.decode("utf-8", "replace")
if not sent:
    sys.exit("the progress line never showed the rows phase:\n" + text[-2000:])
if status != 130:
    sys.exit(f"exit status {status}, expected 130 (interrupted)")
if "partial: interrupted while the rows were formed" not in text:
    sys.exit("stderr does not say the rows were cut short:\n" + text[-2000:])
out = json.load(open(work + "/out.json"))
if not out["certified"]:
    sys.exit("the value settled before the rows should stand certified: " + json.dumps(out)[:500])
lines = open(work + "/rows.txt").read().splitlines()
first = lines[0]
if not first.startswith("# partial: interrupted while the rows were formed; the exact rows of the first "):
    sys.exit("the rows file's first line: " + first)
formed, of = first.split("the first ")[1].split(" regions")[0].split(" of the ")
if not int(formed) < int(of) == out["regions_contributing"]:
    sys.exit(f"the file claims {formed} of {of} regions; certify counted {out['regions_contributing']}")
PY
echo ok
