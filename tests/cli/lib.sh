# Shared preamble of the end-to-end tests, sourced as
#   source "$(dirname "$0")/lib.sh"
# by a script run as SCRIPT PLEAT_BINARY [SOURCE_DIR]: sets pleat and
# source_dir, a scratch directory $work removed on exit, fail() and within().
pleat=$1
source_dir=${2:-}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
fail() { echo "FAIL: $*" >&2; exit 1; }

# within SECONDS command...: runs it (killed after 300 s), fails when it takes
# longer than SECONDS; returns the command's status.
within() {
  local limit=$1
  shift
  local start=$SECONDS
  timeout -s KILL 300 "$@"
  local status=$?
  local took=$((SECONDS - start))
  [ $took -le "$limit" ] || fail "$* took $took s (limit $limit s)"
  return $status
}
