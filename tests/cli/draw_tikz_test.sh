#!/usr/bin/env bash
# The TikZ output compiles in a plain LaTeX document via \input (pdflatex from
# Debian texlive-latex-base + texlive-pictures). Skipped (77) where pdflatex is
# not installed: the CI image does not carry TeX Live.
set -u
pleat=$1
source_dir=$2
command -v pdflatex > /dev/null || { echo "skip: pdflatex not installed"; exit 77; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
fail() { echo "FAIL: $*" >&2; exit 1; }
"$pleat" draw "$source_dir/data/fold2d.json" --view -3,3,-3,3 --labels --out "$work/fold.tex" -q > /dev/null \
  || fail "draw failed"
"$pleat" draw "$source_dir/data/ramp1d.json" --view -2,5 --out "$work/ramp.tex" -q > /dev/null || fail "1-D draw failed"
cat > "$work/paper.tex" <<'TEX'
\documentclass{article}
\usepackage{tikz}
\begin{document}
\input{fold.tex}

\input{ramp.tex}
\end{document}
TEX
(cd "$work" && pdflatex -interaction=nonstopmode -halt-on-error paper.tex > log.txt 2>&1) \
  || { tail -30 "$work/log.txt"; fail "pdflatex failed"; }
[ -s "$work/paper.pdf" ] || fail "no PDF"
echo ok
