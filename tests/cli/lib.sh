# Shared preamble of the end-to-end tests, sourced as
#   source "$(dirname "$0")/lib.sh"
# by a script run as SCRIPT PLEAT_BINARY [SOURCE_DIR]: sets pleat and
# source_dir, a scratch directory $work removed on exit, and fail().
pleat=$1
source_dir=${2:-}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
fail() { echo "FAIL: $*" >&2; exit 1; }
