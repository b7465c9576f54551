#!/usr/bin/env bash
# TikZ output fits a one-column article. Every picture declares its size with
# \useasboundingbox: by default 12 cm wide (an article's \linewidth is 345 pt =
# 12.13 cm), with --size exactly what was asked. Without LaTeX: the declared
# box's size, every drawn coordinate inside it, tick labels plain decimals.
# With pdflatex (Debian texlive-latex-base + texlive-pictures): the pictures
# compile via \input, each box is at most \linewidth wide, and the same picture
# without \useasboundingbox (TikZ's own box around everything drawn, text
# included) fits inside the declared box, so the declaration is honest.
set -u
source "$(dirname "$0")/lib.sh"
fold=$source_dir/data/fold2d.json
run() { "$pleat" draw "$@" -q > /dev/null 2>&1 || fail "draw $* exited $?"; }
run "$fold" --view -3,3,-3,3 --labels --out "$work/fold.tex"
run "$source_dir/data/ramp1d.json" --view -2,5 --out "$work/ramp.tex"
run "$source_dir/data/track/epoch40.json" --color-by gradient --title "epoch 40 & more" --out "$work/trained.tex"
run "$fold" --view -1000,1000,-0.05,0.05 --color-by rank --out "$work/wide.tex"
run "$fold" --view -3,3,-3,3 --no-legend --out "$work/bare.tex"
run "$fold" --view -3,3,-3,3 --size 8cm,6cm --out "$work/sized.tex"
run "$fold" --view -3,3,-3,3 --size 400,300px --out "$work/pixels.tex"
pictures="fold ramp trained wide bare sized pixels"
# The key explains the labels; "--" stays two hyphens in TeX (not an en dash).
grep -q 'the pattern does not fit (-{}-table)' "$work/fold.tex" || fail "the labels note in TikZ"

/usr/bin/python3 - "$work" $pictures <<'PY' || fail "declared TikZ sizes"
import re, sys
work, names = sys.argv[1], sys.argv[2:]
linewidth_cm = 345 / 72.27 * 2.54  # 345 pt (article, 10 pt, one column) in cm: 12.13
expected = {"sized": (8, 6), "pixels": (400 * 2.54 / 96, 300 * 2.54 / 96)}  # 96 px to the inch
number = r"(-?[0-9.]+)"
for name in names:
    text = open(f"{work}/{name}.tex").read()
    box = re.search(rf"\\useasboundingbox \({number},{number}\) rectangle \({number},{number}\);", text)
    assert box, f"{name}: no \\useasboundingbox"
    x0, y0, x1, y1 = map(float, box.groups())
    width, height = x1 - x0, y1 - y0
    if name in expected:
        assert abs(width - expected[name][0]) < 0.002 and abs(height - expected[name][1]) < 0.002, (name, width, height)
    else:
        assert width <= linewidth_cm, f"{name}: {width} cm is wider than 345 pt"
    body = text[box.end():]
    points = [tuple(map(float, p)) for p in re.findall(rf"\({number},{number}\)", body)]
    outside = [p for p in points if not (x0 <= p[0] <= x1 and y0 <= p[1] <= y1)]
    assert points and not outside, f"{name}: coordinates outside the declared box: {outside[:5]}"
    ticks = re.findall(r"node\[pos=0, (?:below|left), text=pleatquiet\] \{\$([^$]*)\$\}", body)
    assert ticks and all(re.fullmatch(r"-?[0-9]+(\.[0-9]+)?", t) for t in ticks), f"{name}: tick labels {ticks}"
PY

if ! command -v pdflatex > /dev/null; then
  # CI installs TeX (scripts/install-deps.sh): there the compile must run.
  [ -z "${CI:-}" ] || fail "pdflatex not installed in CI (scripts/install-deps.sh installs texlive-latex-base)"
  echo "ok (pdflatex not installed: the LaTeX-free checks only)"
  exit 0
fi
{
  printf '%s\n' '\documentclass{article}' '\usepackage{tikz}' '\newsavebox\pleatbox' '\begin{document}'
  printf '\\typeout{LINEWIDTH \\the\\linewidth}\n'
  for name in $pictures; do
    sed 's/^\\useasboundingbox.*$//; s/\\end{tikzpicture}/\\path (current bounding box.south west); \\pgfgetlastxy{\\qx}{\\qy}\\xdef\\southwest{\\qx,\\qy}\\path (current bounding box.north east); \\pgfgetlastxy{\\qx}{\\qy}\\xdef\\northeast{\\qx,\\qy}\n\\end{tikzpicture}/' \
      "$work/$name.tex" > "$work/${name}_natural.tex"
    printf '\\sbox\\pleatbox{\\input{%s.tex}}\\typeout{DECLARED %s \\the\\wd\\pleatbox}\n' "$name" "$name"
    printf '\\sbox\\pleatbox{\\input{%s_natural.tex}}\\typeout{NATURAL %s \\southwest;\\northeast}\n' "$name" "$name"
    printf '\\input{%s.tex}\n\n' "$name"
  done
  printf '%s\n' '\end{document}'
} > "$work/paper.tex"
(cd "$work" && pdflatex -interaction=nonstopmode -halt-on-error paper.tex > log.txt 2>&1) \
  || { tail -30 "$work/log.txt"; fail "pdflatex failed"; }
[ -s "$work/paper.pdf" ] || fail "no PDF"
/usr/bin/python3 - "$work" $pictures <<'PY' || fail "pdflatex's sizes"
import re, sys
work, names = sys.argv[1], sys.argv[2:]
log = open(f"{work}/log.txt").read()
linewidth = float(re.search(r"LINEWIDTH ([0-9.]+)pt", log).group(1))
cm = 72.27 / 2.54  # pt per cm
for name in names:
    declared = float(re.search(rf"DECLARED {name} ([0-9.]+)pt", log).group(1))
    assert declared <= linewidth + 0.01, f"{name}: {declared} pt wider than \\linewidth {linewidth} pt"
    text = open(f"{work}/{name}.tex").read()
    x0, y0, x1, y1 = (float(v) * cm for v in re.search(
        r"\\useasboundingbox \((-?[0-9.]+),(-?[0-9.]+)\) rectangle \((-?[0-9.]+),(-?[0-9.]+)\)", text).groups())
    nx0, ny0, nx1, ny1 = map(float, re.search(
        rf"NATURAL {name} (-?[0-9.]+)pt,(-?[0-9.]+)pt;(-?[0-9.]+)pt,(-?[0-9.]+)pt", log).groups())
    slack = 0.5  # pt
    assert nx0 >= x0 - slack and ny0 >= y0 - slack and nx1 <= x1 + slack and ny1 <= y1 + slack, \
        f"{name}: drawn ({nx0:.1f},{ny0:.1f})..({nx1:.1f},{ny1:.1f}) pt, declared ({x0:.1f},{y0:.1f})..({x1:.1f},{y1:.1f})"
PY
echo ok
