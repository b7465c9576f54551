#!/usr/bin/env bash
# --help at the top and for every subcommand says what it does and shows an
# example; --version prints the version.
set -u
source "$(dirname "$0")/lib.sh"

top=$("$pleat" --help) || fail "pleat --help exited $?"
case "$top" in *"Examples:"*) ;; *) fail "pleat --help shows no example" ;; esac
case "$top" in *"linear region"*) ;; *) fail "pleat --help does not say what pleat is for" ;; esac

# Every subcommand listed in the top-level help.
commands=$(printf '%s\n' "$top" | awk '/^Subcommands:/ { on = 1; next } on && /^  [a-z]/ { print $1 } on && /^$/ { on = 0 }')
[ -n "$commands" ] || fail "no subcommands listed in pleat --help"
for required in random eval; do
  printf '%s\n' "$commands" | grep -qx "$required" || fail "subcommand $required not listed"
done
for command in $commands; do
  help=$("$pleat" "$command" --help) || fail "pleat $command --help exited $?"
  case "$help" in *"pleat $command "*) ;; *) fail "pleat $command --help has no example of 'pleat $command ...'" ;; esac
  case "$help" in *"Usage: pleat $command"*) ;; *) fail "pleat $command --help has no usage line" ;; esac
done

# survey's own subcommands say what they do and show their own example, not
# survey's text (CLI11 copied it: 'plot --help' explained resuming a run).
for sub in summary plot merge; do
  help=$("$pleat" survey "$sub" --help) || fail "pleat survey $sub --help exited $?"
  case "$help" in *"pleat survey $sub "*) ;; *) fail "pleat survey $sub --help has no example of itself" ;; esac
  case "$help" in *"Rerunning the same command resumes"*) fail "pleat survey $sub --help repeats survey's own text" ;; esac
done

# Every network argument reads ONNX too (read_network_any); the help of six
# subcommands said "pleat-network/1 JSON" only.
for command in walk certify sample inspect eval draw export; do
  "$pleat" "$command" --help | grep -q 'Network file (pleat-network/1 JSON or .onnx' ||
    fail "pleat $command --help does not say its network may be .onnx"
done

eval_help=$("$pleat" eval --help)
case "$eval_help" in *"activation pattern of a point"*) ;; *) fail "eval --help does not explain the activation pattern" ;; esac

# The inspect and eval examples on the shipped networks run as printed (a
# pattern in an example must exist in the example network).
if [ -n "$source_dir" ]; then
  for command in inspect eval; do
    "$pleat" "$command" --help | grep -E '^  pleat [a-z]+ data/' | sed 's/ *#.*//' | while read -r line; do
      # shellcheck disable=SC2086
      (cd "$source_dir" && ${line/pleat/$pleat} > /dev/null 2>&1) || fail "the example '$line' of $command --help fails"
    done || exit 1
  done
fi

version=$("$pleat" --version) || fail "pleat --version exited $?"
case "$version" in "pleat "[0-9]*) ;; *) fail "unexpected version text: $version" ;; esac
echo "help: ok"
