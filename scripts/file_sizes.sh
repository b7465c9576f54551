#!/usr/bin/env bash
# The largest production files (C++ in core, lp, enumerate, cli, python/src;
# Python in python/pleat; the report page's script and style) as the Markdown
# table DEVELOPERS.md shows. Exits 1 when one is over the limit (600 lines):
# a file that long holds more than one concern; split it by concern.
#   scripts/file_sizes.sh [SOURCE_DIR] [ROWS]
set -u
cd "${1:-$(dirname "$0")/..}" || exit 2
rows=${2:-12}
limit=600
files=$(find core lp enumerate cli python/src python/pleat -type f \
          \( -name '*.cpp' -o -name '*.hpp' -o -name '*.py' -o -name '*.js' -o -name '*.css' \) | sort)
table=$(for f in $files; do printf '%s %s\n' "$(wc -l < "$f")" "$f"; done | sort -k1,1nr -k2,2)
echo "| lines | file |"
echo "| ---: | --- |"
printf '%s\n' "$table" | head -n "$rows" | while read -r n f; do echo "| $n | \`$f\` |"; done
over=$(printf '%s\n' "$table" | awk -v limit=$limit '$1 > limit')
if [ -n "$over" ]; then
  echo "over $limit lines:" >&2
  printf '%s\n' "$over" >&2
  exit 1
fi
