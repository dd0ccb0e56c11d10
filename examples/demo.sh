#!/usr/bin/env bash
# The Kelpmoor tide-workshop demo: generates five procedural props
# (examples/demo_props.rs), compares the three energies on each with
# `polyflat compare`, and prints the energy each prop should use.
#
# Usage: examples/demo.sh [OUT_DIR]      (default: target/demo)
# Writes OUT_DIR/props/<prop>.obj and OUT_DIR/<prop>/ (the compare outputs).
set -euo pipefail
cd "$(dirname "$0")/.."
out=${1:-target/demo}
target=${CARGO_TARGET_DIR:-target}

cargo build --release --quiet --bin polyflat --example demo_props
"$target/release/examples/demo_props" "$out/props"

printf '\n%-14s %-20s %10s %10s %8s\n' prop suggested "stretch L2" "angle" flipped
for obj in "$out"/props/*.obj; do
  name=$(basename "$obj" .obj)
  "$target/release/polyflat" --quiet compare "$obj" \
    --energies arap,symmetric-dirichlet,conformal \
    --out-dir "$out/$name" --resolution 512
  energy=$(sed -n 's/^Suggested energy: \([a-z-]*\).*/\1/p' "$out/$name/comparison.md")
  # The suggested energy's row of the table: | energy | iterations | time | stretch L2 | … | flipped | …
  row=$(grep "^| $energy |" "$out/$name/comparison.md")
  stretch=$(echo "$row" | cut -d'|' -f5 | tr -d ' ')
  angle=$(echo "$row" | cut -d'|' -f7 | tr -d ' ')
  flipped=$(echo "$row" | cut -d'|' -f11 | tr -d ' ')
  printf '%-14s %-20s %10s %10s %8s\n' "$name" "$energy" "$stretch" "$angle" "$flipped"
done
printf '\nTables, atlases and convergence plots: %s/<prop>/comparison.{md,png} and convergence.png\n' "$out"
