# Shared preamble of the MPI end-to-end tests (tests/mpi/*_test.sh), sourced
# after tests/cli/lib.sh. Skips (exit 77) with the reason when pleat was built
# without MPI or mpirun is missing. Sets mpirun_cmd: mpirun with the options
# every run here needs: --oversubscribe (more processes than the machine's
# cores) and, as root (CI), --allow-run-as-root.
if [ "${PLEAT_MPI_BUILT:-0}" != 1 ]; then
  echo "pleat was built without MPI (PLEAT_MPI=OFF, or no MPI found): skipping the MPI tests"
  exit 77
fi
mpirun=${MPIEXEC:-}
[ -n "$mpirun" ] || mpirun=$(command -v mpirun || true)
[ -x "$mpirun" ] || { echo "pleat was built with MPI but mpirun is missing (install openmpi-bin)"; exit 1; }
mpirun_cmd=("$mpirun" --oversubscribe)
[ "$(id -u)" -eq 0 ] && mpirun_cmd+=(--allow-run-as-root)
python=/usr/bin/python3
[ -x "$python" ] || { echo "no /usr/bin/python3: skipping"; exit 77; }

# Every key but the timing keys ("seconds", "*_seconds") of a JSON document.
strip_timing() { grep -v -E '"([a-z_]*_)?seconds"' "$1"; }
# The human summary without its time line.
strip_time_line() { grep -v -E '^time +[0-9.]+ s$' "$1"; }
