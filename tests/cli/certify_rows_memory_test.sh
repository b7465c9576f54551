#!/bin/bash
# certify --rows-out writes each contributing region's rows as they are
# formed, so its peak memory stays that of the run without it, not the
# file's size in exact rationals. It held every row as a dense matrix of GMP
# rationals and then the whole text before writing: on 2,25,25,2,1 seed 1
# (an 11 MB file) 151 MB resident against 31 MB without --rows-out (637 MB
# for the 50 MB file of 2,40,40,3,1). The file is the same, byte for byte,
# and nothing is left beside it. Memory is the peak resident set of each run
# (getrusage of the child), at one thread (two threads vary by 20 MB).
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }
# AddressSanitizer keeps freed memory in quarantine (256 MB): the peak there
# says nothing about what the program holds.
[ -n "${PLEAT_SANITIZED:-}" ] && { echo "sanitized build: peak memory not comparable, skipped"; exit 77; }

"$pleat" random --arch 2,25,25,2,1 --seed 1 -o "$work/net.json" || fail "random"
"$python" - "$pleat" "$work" <<'PY' || fail "the runs (above)"
import os, resource, subprocess, sys
pleat, work = sys.argv[1], sys.argv[2]
net = work + "/net.json"

def peak_kb(arguments):
    """The peak resident set (KB) of one pleat run, in a child of its own."""
    probe = ("import resource, subprocess, sys\n"
             "subprocess.run(sys.argv[1:], check=True, stdout=subprocess.DEVNULL)\n"
             "print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)")
    return int(subprocess.run([sys.executable, "-c", probe, pleat] + arguments,
                              check=True, capture_output=True, text=True).stdout)

common = ["certify", net, "-q", "--threads", "1"]
without = peak_kb(common)
with_rows = peak_kb(common + ["--rows-out", work + "/rows.txt"])
size_kb = os.path.getsize(work + "/rows.txt") // 1024
print(f"peak {with_rows} KB with --rows-out, {without} KB without; the file {size_kb} KB")
if size_kb < 8 * 1024:
    sys.exit(f"the file is {size_kb} KB: too small to tell held rows from noise")
if with_rows - without > size_kb // 2:
    sys.exit(f"--rows-out added {with_rows - without} KB at its peak for a file of {size_kb} KB: the rows are held")

# The same rows written whole from memory (standard output, held until the
# end, after the result: certify writes its files once the result is printed).
text = open(work + "/rows.txt", "rb").read()
if not subprocess.run([pleat] + common + ["--rows-out", "-"], check=True, capture_output=True).stdout.endswith(text):
    sys.exit("--rows-out - does not end with the file's rows")
lines = text.decode().splitlines()
if len(lines) % 3 or any(line.startswith("#") for line in lines):
    sys.exit("a certified run's rows: 3 a region, no comment line")
if sorted(os.listdir(work)) != ["net.json", "rows.txt"]:
    sys.exit("files left beside the rows: " + " ".join(sorted(os.listdir(work))))
PY
echo ok
