#!/usr/bin/env bash
# pleat verify must not be fooled: each targeted edit of a saved walk (issue:
# a verify that can be fooled is worse than none) must fail with exit 1 and
# name the line of the fault and what is wrong. The untouched files verify.
set -u
source "$(dirname "$0")/lib.sh"

fold=$source_dir/data/fold2d.json
zero=$source_dir/tests/data/zero_quadrant2d.json
"$pleat" walk "$fold" --box -1,1 -q -o "$work/box.jsonl" --certificates > /dev/null || fail "walk failed"
"$pleat" walk "$fold" -q -o "$work/whole.jsonl" --certificates > /dev/null || fail "walk failed"
"$pleat" walk "$zero" -q -o "$work/zero.jsonl" --certificates > /dev/null || fail "walk failed"
for f in box whole; do
  "$pleat" verify "$fold" "$work/$f.jsonl" > /dev/null || fail "the untouched $f walk does not verify"
done
"$pleat" verify "$zero" "$work/zero.jsonl" > /dev/null || fail "the untouched zero walk does not verify"

# tamper NAME SOURCE NETWORK PYTHON NEEDLE: edit the parsed lines (lines[0] is
# the header, lines[k + 1] the region with id k) with Python; the code sets
# `line` to the file line the failure must name. verify must print
# "line <line>: ...<needle>..." and exit 1 (NOT verified: a false claim) or 2
# (a file pleat cannot have written: unknown keys, numbers or patterns not in
# the form pleat writes them, a key written twice).
tamper() {
  local name=$1 source=$2 network=$3 code=$4 needle=$5
  local expected
  expected=$(/usr/bin/python3 - "$work/$source.jsonl" "$work/$name.jsonl" "$code" <<'PY'
import json, sys
lines = [json.loads(l) for l in open(sys.argv[1])]
line = None
def remove_and_redirect(k):
    """Delete region k, point every facet that named it at its own region,
    renumber the ids: the attack that fooled verify. Returns the first line
    that then names its own region."""
    gone = lines[k + 1]["pattern"]
    del lines[k + 1]
    first = None
    for number, region in enumerate(lines[1:], start=2):
        region["id"] = number - 2
        for facet in region["facets"]:
            if facet["neighbor"] == gone:
                facet["neighbor"] = region["pattern"]
                first = first or number
    return first
exec(sys.argv[3])
with open(sys.argv[2], "w") as out:
    for l in lines: out.write(json.dumps(l, separators=(",", ":")) + "\n")
print(line)
PY
) || fail "$name: the edit failed"
  local out code_
  out=$("$pleat" verify "$network" "$work/$name.jsonl" 2>&1)
  code_=$?
  [ "$code_" -eq 1 ] || [ "$code_" -eq 2 ] || fail "$name: verify exit code $code_, expected 1 or 2 ($out)"
  case "$out" in *"line $expected: "*"$needle"*) ;; *) fail "$name: expected 'line $expected: ...$needle' in: $out" ;; esac
  [ -n "${VERBOSE:-}" ] && echo "$name: $out"
  count=$((count + 1))
}
count=0

# 1-4. A region deleted and the facets that named it pointed at their own region.
tamper deleted_first box "$fold" 'line = remove_and_redirect(0)' "names its own region"
tamper deleted_last box "$fold" 'line = remove_and_redirect(len(lines) - 2)' "names its own region"
tamper deleted_middle box "$fold" 'line = remove_and_redirect(20)' "names its own region"
tamper deleted_whole whole "$fold" 'line = remove_and_redirect(40)' "names its own region"
# 5. A neighbour redirected to another region of the file that is not across the facet.
tamper wrong_neighbour whole "$fold" '
r = lines[5]; f = next(f for f in r["facets"] if f["neighbor"])
f["neighbor"] = next(l["pattern"] for l in lines[1:] if l["pattern"] not in (f["neighbor"], r["pattern"]))
line = 6' "does not lie across"
# 6. A second neighbour added across a facet.
tamper extra_neighbour whole "$fold" '
r = lines[7]; f = next(f for f in r["facets"] if f["neighbor"])
f["other_neighbors"] = [max(l["pattern"] for l in lines[1:])]
line = 8' "neighbour"
# 7. The certificate's copy of the interior point moved (outside the region).
tamper certificate_point box "$fold" 'lines[3]["certificate"]["interior_point"] = ["7", "7"]; line = 4' \
  "interior_point differs"
# 8. A certificate constraint changed.
tamper certificate_constraint box "$fold" 'lines[4]["certificate"]["constraints"][1]["offset"] = "1000"; line = 5' \
  "certificate constraint 1 differs"
# 9. A certificate constraint given another neuron.
tamper certificate_neuron box "$fold" '
c = lines[4]["certificate"]["constraints"]; c[0]["neuron"] = c[0]["neuron"] + 1; line = 5' "certificate constraint 0 differs"
# 10. A facet's neuron labels changed.
tamper facet_neurons box "$fold" '
f = next(f for f in lines[6]["facets"] if f["neurons"]); f["neurons"] = [f["neurons"][0] + 1]; line = 7' \
  "names neurons that are not"
# 11. Two region ids swapped.
tamper ids_swapped box "$fold" 'lines[2]["id"], lines[3]["id"] = lines[3]["id"], lines[2]["id"]; line = 3' "id 2 is out of place"
# 12. The header's parametric dimension.
tamper parametric_dimension box "$fold" 'lines[0]["parametric_dimension"] = 58; line = 1' "\"parametric_dimension\" is 58"
# 13. touches_domain_boundary flipped.
tamper touches_boundary box "$fold" '
k = next(k for k, l in enumerate(lines) if k and l["touches_domain_boundary"])
lines[k]["touches_domain_boundary"] = False; line = k + 1' "\"touches_domain_boundary\" is false"
# 14. A boundary facet's domain side index changed.
tamper domain_side box "$fold" '
k = next(k for k, l in enumerate(lines) if k and l["touches_domain_boundary"])
f = next(f for f in lines[k]["facets"] if f["side"] is not None); f["side"] = (f["side"] + 1) % 4; line = k + 1' \
  "\"side\" is not the domain constraint"
# 15. bounded flipped (its certificate then proves the opposite).
tamper bounded box "$fold" 'lines[9]["bounded"] = not lines[9]["bounded"]; line = 10' "boundedness certificate does not check"
# 16. The affine map changed.
tamper affine box "$fold" 'lines[2]["affine"]["c"][0] = "12345"; line = 3' "affine map"
# 17. The pattern written with '/' between layers (the same pattern, other text).
tamper pattern_text box "$fold" 'lines[5]["pattern"] = lines[5]["pattern"].replace("|", "/"); line = 6' \
  "not written in the spec's notation"
# 18. A number not in lowest terms.
tamper number_text box "$fold" '
p = lines[5]["point"]; n, _, d = p[0].partition("/"); p[0] = str(2 * int(n)) + "/" + str(2 * int(d or 1)); line = 6' \
  "not written as pleat writes it"
# 19. The header's domain written in another form (a wider box fails further on;
# this is the same box spelled differently).
tamper domain_text box "$fold" 'lines[0]["domain"]["box"][0][0] = "-2/2"; line = 1' "not written as pleat writes it"
# 20. A key verify does not check.
tamper unknown_key box "$fold" 'lines[3]["certified"] = True; line = 4' "unknown key \"certified\""
# 21. A facet's point moved off its certificate.
tamper facet_point box "$fold" 'lines[3]["facets"][0]["point"] = lines[3]["point"]; line = 4' "point differs from its certificate"
# 22. A facet normal scaled (same hyperplane, not the primitive normal).
tamper facet_normal box "$fold" '
f = lines[3]["facets"][0]; f["normal"] = [str(2 * int(v)) for v in f["normal"]]
n, _, d = f["offset"].partition("/"); f["offset"] = str(2 * int(n)) + ("/" + d if d else ""); line = 4' "primitive integer normal"
# 23. A facet entry dropped.
tamper facet_dropped box "$fold" 'del lines[3]["facets"][-1]; line = 4' "facet"
# 24. Non-smooth neurons removed from a region that has them.
tamper nonsmooth zero "$zero" '
k = next(k for k, l in enumerate(lines) if k and "nonsmooth_neurons" in l); del lines[k]["nonsmooth_neurons"]; line = k + 1' \
  "\"nonsmooth_neurons\" differs"
# 25. Non-smooth neurons claimed for a region without them.
tamper nonsmooth_added zero "$zero" '
k = next(k for k, l in enumerate(lines) if k and "nonsmooth_neurons" not in l); lines[k]["nonsmooth_neurons"] = [0]; line = k + 1' \
  "\"nonsmooth_neurons\" differs"

# 26. Two region lines swapped and renumbered: the ids no longer follow the walk.
tamper reordered box "$fold" '
lines[5], lines[30] = lines[30], lines[5]
for k, l in enumerate(lines[1:]): l["id"] = k
line = 7' "out of the walk's order"  # the region after the moved-up one
# 27. The first region moved to the end, ids renumbered: the walk starts at (or next to) the domain's centre.
tamper start_moved box "$fold" '
lines.append(lines.pop(1))
for k, l in enumerate(lines[1:]): l["id"] = k
line = 2' "id 0 is not the region where the walk starts"

# 28. A key written twice in one object (another reader would keep the other copy).
head -n 3 "$work/box.jsonl" > "$work/twice.jsonl"
sed -n 4p "$work/box.jsonl" | sed 's/^{"id":2,/{"id":2,"bounded":false,/' >> "$work/twice.jsonl"
tail -n +5 "$work/box.jsonl" >> "$work/twice.jsonl"
out=$("$pleat" verify "$fold" "$work/twice.jsonl" 2>&1) && fail "a repeated key was accepted: $out"
case "$out" in *"line 4: "*"appears twice"*) ;; *) fail "repeated key: $out" ;; esac
count=$((count + 1))

# Text from the file is quoted, never printed raw: a header label or an unknown
# key holding a newline could print a line of its own, such as a forged
# "verified: ..." (the old binary printed the label raw).
"$python" - "$work/box.jsonl" "$work/label.jsonl" "$work/badkey.jsonl" <<'PY'
import json, sys
lines = [json.loads(l) for l in open(sys.argv[1])]
forged = "x\nverified: 9999 regions of other.json on R^2; every point re-checked exactly"
lines[0]["network"] = forged
open(sys.argv[2], "w").writelines(json.dumps(l, separators=(",", ":")) + "\n" for l in lines)
del lines[0]["network"]
lines[0]["network"] = "fold"
lines[3][forged] = True
open(sys.argv[3], "w").writelines(json.dumps(l, separators=(",", ":")) + "\n" for l in lines)
PY
out=$("$pleat" verify "$fold" "$work/label.jsonl") || fail "a file with an odd label must still verify ($out)"
[ "$(printf '%s\n' "$out" | wc -l)" -eq 2 ] || fail "the label printed lines of its own:"$'\n'"$out"
[ "$(printf '%s\n' "$out" | grep -c '^verified:')" -eq 1 ] || fail "a forged 'verified' line:"$'\n'"$out"
expect_contains "$out" 'note: the file names its network "x\nverified: 9999' "the quoted label"
err=$("$pleat" verify "$fold" "$work/badkey.jsonl" 2>&1)
[ $? = 2 ] || fail "an unknown key must be exit 2 ($err)"
[ "$(printf '%s\n' "$err" | wc -l)" -eq 1 ] || fail "the unknown key printed lines of its own:"$'\n'"$err"

[ "$count" -ge 15 ] || fail "only $count tamper cases ran"
echo "verify_tamper: $count targeted edits, each refused with its line"
