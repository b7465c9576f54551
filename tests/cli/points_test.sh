#!/usr/bin/env bash
# Points files as researchers write them (certify --points): a pandas-style
# header with an index column, numpy.savetxt's whitespace form, .npy arrays
# from numpy.save (float64 and float32; numpy is the outside writer), and bad
# files named with their line. Also: walk --points-out gives one interior
# point per region (certify --points then touches every region), a point in a
# smooth region with an identically-zero neuron is accepted, eval prints 'z'.
set -u
source "$(dirname "$0")/lib.sh"
"$python" -c 'import numpy' 2>/dev/null || { echo "no numpy: skipped"; exit 77; }
fold=$source_dir/data/fold2d.json
ramp=$source_dir/data/ramp1d.json
batch_rank() {  # network file -> batch rank
  "$pleat" certify "$1" --points "$2" --json -q > "$work/batch.json" || fail "certify --points $2 exited $?"
  json_eval "$work/batch.json" 'd["batch_functional_dimension"]'
}

# The same 8 points of fold2d in every format must give one rank.
printf "%s\n" 0.3125,-0.1875 1.0625,0.9375 -0.6875,0.5625 1.8125,-1.4375 -0.0625,-1.9375 1.4375,0.4375 -1.8125,-1.6875 0.1875,1.6875 > "$work/plain.csv"
expected=$(batch_rank "$fold" "$work/plain.csv")
[ "$expected" -gt 0 ] || fail "rank of the plain file"

"$python" - "$work" <<'PY' || fail "numpy could not write the files"
import sys
import numpy
work = sys.argv[1]
points = numpy.loadtxt(work + "/plain.csv", delimiter=",")
numpy.savetxt(work + "/savetxt.txt", points)                       # whitespace, %.18e
numpy.savetxt(work + "/savetxt.csv", points, delimiter=",", header="temperature,wind")  # '# ' header
numpy.save(work + "/float64.npy", points)
numpy.save(work + "/float32.npy", points.astype(numpy.float32))     # the values are exact in float32
numpy.save(work + "/fortran.npy", numpy.asfortranarray(points))
numpy.save(work + "/int64.npy", points.astype(numpy.int64))
numpy.save(work + "/bigendian.npy", points.astype(">f8"))
with open(work + "/pandas.csv", "w") as handle:  # DataFrame.to_csv's layout: unnamed index column
    handle.write(",temperature,wind\n")
    for index, (a, b) in enumerate(points):
        handle.write(f"{index},{a!r},{b!r}\n")
with open(work + "/header.csv", "w") as handle:  # DataFrame.to_csv(index=False)
    handle.write("temperature,wind\n")
    for a, b in points:
        handle.write(f"{a!r},{b!r}\n")
raw = open(work + "/float64.npy", "rb").read()
open(work + "/truncated.npy", "wb").write(raw[:-5])
open(work + "/extra.npy", "wb").write(raw + b"\0\0\0\0\0\0\0\0")
# A header key without its colon (the fuzz run found xtensor's parser reading past it).
header = b"{'descr': '<f8', 'fortran_order' False, 'shape': (2, 2), }"
header += b" " * (63 - len(header) % 64) + b"\n"
open(work + "/nocolon.npy", "wb").write(b"\x93NUMPY\x01\x00" + len(header).to_bytes(2, "little") + header + raw[-32:])
# A spreadsheet's "CSV UTF-8" starts with a byte-order mark: it was read as
# part of the first value ("value 1 ('\ufeff0.1...'): not a number").
with open(work + "/bom.csv", "w", encoding="utf-8-sig") as handle:
    for a, b in points:
        handle.write(f"{a!r},{b!r}\n")
with open(work + "/bom_header.csv", "w", encoding="utf-8-sig") as handle:
    handle.write("temperature,wind\n")
    for a, b in points:
        handle.write(f"{a!r},{b!r}\n")
with open(work + "/pandas_numbered.csv", "w") as handle:  # DataFrame(array).to_csv(): columns named 0, 1
    handle.write(",0,1\n")
    for index, (a, b) in enumerate(points):
        handle.write(f"{index},{a!r},{b!r}\n")
PY
for file in savetxt.txt savetxt.csv float64.npy float32.npy fortran.npy pandas.csv pandas_numbered.csv header.csv \
  bom.csv bom_header.csv; do
  [ "$(batch_rank "$fold" "$work/$file")" = "$expected" ] || fail "$file: rank differs from the plain file's $expected"
done

# Bad files: exit 2, the message names the file and the line (or row).
bad() {  # file, needle
  err=$("$pleat" certify "$fold" --points "$work/$1" -q 2>&1 >/dev/null)
  status=$?
  [ "$status" = 2 ] || fail "$1: exit $status, expected 2 ($err)"
  expect_contains "$err" "$2" "$1"
}
printf '%s\n' 'x,y' '1,2' '3,abc' > "$work/word.csv";        bad word.csv "word.csv:3: value 2 ('abc')"
printf '%s\n' '1 2' '3 4 5' > "$work/three.txt";             bad three.txt "three.txt:2: the network takes 2 inputs, but the line has 3 values"
printf '%s\n' '# nothing' '' > "$work/empty.csv";            bad empty.csv "empty.csv: no points"
printf '%s\n' '1,2' 'nan,1' > "$work/nan.csv";               bad nan.csv "nan.csv:2: value 1 ('nan')"
printf '%s\n' 'a,b,c' '1,2' > "$work/header3.csv";           bad header3.csv "header3.csv:1: a header of 3 column names"
# A first line with a number in it is a point, not a header: a typo there is an
# error, not a row silently skipped (the old binary dropped both as headers).
printf '%s\n' '1,2a' '1/3,1/7' > "$work/typo.csv";             bad typo.csv "typo.csv:1: value 2 ('2a')"
printf '%s\n' '1/0,2' '1/3,1/7' > "$work/zero.csv";            bad zero.csv "zero.csv:1: value 1 ('1/0')"
# Values separated by ';': said so, with the line (the first line '1;2' was
# reported as "a header of 1 column names", a later one as "1 value").
printf '%s\n' '1;2' '1/3,1/7' > "$work/semi1.csv";            bad semi1.csv "semi1.csv:1: '1;2' separates values with ';': separate them with commas, or with spaces or tabs"
printf '%s\n' '1/3,1/7' '0.5;0.25' > "$work/semi2.csv";       bad semi2.csv "semi2.csv:2: '0.5;0.25' separates values with ';'"
# A first line whose only field starts as a number is a point with a fault,
# not a header: with one input the old binary skipped '0.5x' and went on.
printf '%s\n' '0.5x' '1/3' > "$work/typo1.csv"
err=$("$pleat" certify "$ramp" --points "$work/typo1.csv" -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "typo1.csv: a first line '0.5x' on a 1-input network must be exit 2: $err"
expect_contains "$err" "typo1.csv:1: value 1 ('0.5x')" "typo1.csv"
printf '%s\n' '-.5e,1' '1/3,1/7' > "$work/typo2.csv";          bad typo2.csv "typo2.csv:1: value 1 ('-.5e')"
# An empty field is named, with where it is ('1,,2' and '1,2,' were "the line
# has 3 values"); a leading '+' is refused as the sign it is (it was
# "expected digits"), the number without it suggested.
printf '%s\n' '1/3,1/7' '1,,2' > "$work/gap.csv";           bad gap.csv "gap.csv:2: value 2 of 3 is empty (nothing between two commas); the network takes 2 inputs"
printf '%s\n' '1/3,1/7' '1,2,' > "$work/trail.csv";         bad trail.csv "trail.csv:2: value 3 of 3 is empty (the line ends with a comma)"
printf '%s\n' '1/3,1/7' ',1,2' > "$work/lead.csv";          bad lead.csv "lead.csv:2: value 1 of 3 is empty (the line starts with a comma)"
printf '%s\n' '1/3,1/7' '3, ' > "$work/short.csv";          bad short.csv "short.csv:2: value 2 of 2 is empty (the line ends with a comma)"
printf '%s\n' ',x,y' '0,1,' > "$work/index_gap.csv";        bad index_gap.csv "index_gap.csv:2: value 2 of 2 is empty (the line ends with a comma)"
printf '%s\n' ',x,y' '0,,1' > "$work/index_lead.csv";       bad index_lead.csv "index_lead.csv:2: value 1 of 2 is empty (nothing between two commas)"
# numpy.savetxt's spellings of values that are no finite number, on a first
# line (where no field was a number, so it was skipped as a header and its
# point lost unsaid) or later; ramp1d has one input.
printf '%s\n' 'nan,nan' '1/3,1/7' > "$work/nan_first.csv";   bad nan_first.csv "nan_first.csv:1: value 1 ('nan'): not a finite number"
printf '%s\n' 'inf -inf' '1 2' > "$work/inf_first.txt";       bad inf_first.txt "inf_first.txt:1: value 1 ('inf'): not a finite number"
printf '%s\n' '1,2' '3,-Infinity' > "$work/inf_later.csv";   bad inf_later.csv "inf_later.csv:2: value 2 ('-Infinity'): not a finite number"
printf '%s\n' 'NaN' '0.5' > "$work/nan_one.txt"
status=0
"$pleat" certify "$ramp" --points "$work/nan_one.txt" -q > /dev/null 2> "$work/err.txt" || status=$?
[ "$status" = 2 ] || fail "a first line 'NaN' on a 1-input network: exit $status, expected 2 (skipped as a header?)"
expect_contains "$(cat "$work/err.txt")" "nan_one.txt:1: value 1 ('NaN'): not a finite number" "nan_one.txt"
printf '%s\n' '+0,1/7' > "$work/plus.csv";                  bad plus.csv "plus.csv:1: value 1 ('+0'): not a number \"+0\": a leading '+' is not part of a number; write \"0\""
printf '%s\n' '1/3,1/7' '1 +1/2' > "$work/plus2.txt";       bad plus2.txt "plus2.txt:2: value 2 ('+1/2'): not a number \"+1/2\": a leading '+' is not part of a number; write \"1/2\""
printf '%s\n' 'x,y' '1/3,1/7' > "$work/names.csv"
[ "$(batch_rank "$fold" "$work/names.csv")" -gt 0 ] || fail "a header of names is still skipped"
bad truncated.npy "truncated.npy: the array data does not match the file's length"
bad nocolon.npy "nocolon.npy: the .npy header is not a dictionary of 'descr', 'fortran_order' and 'shape' as numpy writes it"
bad extra.npy "extra.npy: the array data does not match the file's length"
bad int64.npy "int64.npy: expected a little-endian float64 or float32 array"
bad bigendian.npy "bigendian.npy: expected a little-endian float64 or float32 array"
printf 'not numpy' > "$work/text.npy";                      bad text.npy "text.npy: not a .npy file"
"$python" -c "import numpy,sys; numpy.save(sys.argv[1], numpy.zeros((3, 3)))" "$work/shape.npy"
bad shape.npy "shape.npy: an array of shape (3, 3) where (points, 2) was expected"
# 1-D arrays are points of a 1-input network.
"$python" -c "import numpy,sys; numpy.save(sys.argv[1], numpy.array([-1.0, 0.0, 1.0, 5.0]))" "$work/line.npy"
[ "$(batch_rank "$ramp" "$work/line.npy")" = 4 ] || fail "1-D .npy on ramp1d: 4 points in 4 regions give rank 4"

# Points outside --box: exit 2 naming the point.
printf '%s\n' 0,0 3,0 > "$work/outside.csv"
err=$("$pleat" certify "$fold" --points "$work/outside.csv" --box -2,2 -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "a point outside the box must be exit 2"
expect_contains "$err" "outside.csv:2 (point 2): (3, 0) lies outside the domain" "outside point named"
# Lines and points are both counted from 1 (the point was counted from 0):
# after a header and a comment, line 4 holds point 2.
printf '%s\n' x,y '# two points' 0,0 3,0 > "$work/outside_header.csv"
err=$("$pleat" certify "$fold" --points "$work/outside_header.csv" --box -2,2 -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "a point outside the box after a header must be exit 2"
expect_contains "$err" "outside_header.csv:4 (point 2): (3, 0) lies outside the domain" "line and point from 1"
# A .npy file's point by numpy's index, and its count from 1.
"$python" -c "import numpy,sys; numpy.save(sys.argv[1], numpy.array([[0.0, 0.0], [3.0, 0.0]]))" "$work/outside.npy"
err=$("$pleat" certify "$fold" --points "$work/outside.npy" --box -2,2 -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "a .npy point outside the box must be exit 2"
expect_contains "$err" "outside.npy[1] (point 2): (3, 0) lies outside the domain" ".npy point named"
"$python" -c "import numpy,sys; numpy.save(sys.argv[1], numpy.array([[0.0, 0.0], [1.0, numpy.nan]]))" "$work/nan.npy"
err=$("$pleat" certify "$fold" --points "$work/nan.npy" -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "a NaN in a .npy file must be exit 2"
expect_contains "$err" "nan.npy[1, 1] (point 2, value 2): not a finite number" ".npy NaN named"
# On the open box's boundary: said so (it was called "outside").
printf '%s\n' 0,0 2,1/2 > "$work/boundary.csv"
err=$("$pleat" certify "$fold" --points "$work/boundary.csv" --box -2,2 -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "a point on the box's boundary must be exit 2"
expect_contains "$err" "boundary.csv:2 (point 2): (2, 1/2) lies on the boundary of the domain box:(-2,2)x(-2,2), not strictly inside it" \
  "boundary point named"

# walk --points-out: one point per region; certify --points touches them all.
"$pleat" walk "$fold" --box -3,3 --points-out "$work/interior.csv" -q > /dev/null || fail "walk --points-out exited $?"
"$pleat" certify "$fold" --box -3,3 --points "$work/interior.csv" --json -q > "$work/interior.json" ||
  fail "certify --points interior exited $?"
[ "$(json_eval "$work/interior.json" '(d["regions_touched"] == d["regions_total"] == d["points"])')" = True ] ||
  fail "walk --points-out: not one point in each region: $(cat "$work/interior.json")"
"$pleat" walk "$fold" --box -3,3 --points-out "$work/interior.npy" -q > /dev/null || fail "walk --points-out .npy exited $?"
"$python" -c "import numpy,sys; a=numpy.load(sys.argv[1]); assert a.dtype == numpy.float64 and a.shape[1] == 2, a.shape" \
  "$work/interior.npy" || fail "walk --points-out .npy is not a float64 (n, 2) array"

# A smooth region with an identically-zero neuron (tests/data/zero_signal1d.json:
# neuron 2 is z for x < 0 with zero outgoing weight): accepted, and eval says z.
zero=$source_dir/tests/data/zero_signal1d.json
printf '%s\n' -1 -2 > "$work/z.csv"
[ "$(batch_rank "$zero" "$work/z.csv")" = 2 ] || fail "two points of the z region give its 2 rows"
out=$("$pleat" eval "$zero" --at -1) || fail "eval exited $?"
expect_contains "$out" "pattern  01|z1" "eval prints z"
expect_contains "$out" "neuron 2 is identically zero" "eval names the z neuron"
# A z neuron with a nonzero backward signal has no smooth point: exit 2 naming it.
printf '%s\n' -1,1 > "$work/nonsmooth.csv"
err=$("$pleat" certify "$source_dir/tests/data/zero_neuron2d.json" --points "$work/nonsmooth.csv" -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "a non-smooth region's point must be exit 2"
expect_contains "$err" "nonsmooth.csv:1 (point 1)" "non-smooth point named"
expect_contains "$err" "neuron 2" "non-smooth neuron named"

echo "points: all checks passed"
