#!/usr/bin/env bash
# Writes the JSON of every demo (check with both solvers, fix, place) into DIR, with the
# version and timing fields blanked, so that two builds can be compared byte for byte:
#   tools/json-snapshot.sh /tmp/before   # on the old build
#   tools/json-snapshot.sh /tmp/after    # on the new build
#   diff -r /tmp/before /tmp/after
# BIN picks the binary (default target/release/armpath).
set -euo pipefail
cd "$(dirname "$0")/.."
out=${1:?usage: tools/json-snapshot.sh DIR}
bin=${BIN:-target/release/armpath}
mkdir -p "$out"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
strip() { sed -E -e 's/"armpath_version": "[^"]*"/"armpath_version": "-"/' -e 's/"seconds": [0-9.e+-]+/"seconds": 0/' ; }
for p in paths/*.yaml; do
  n=$(basename "$p" .yaml)
  "$bin" check "$p" --json - | strip > "$out/check-$n.json" || true
  "$bin" check "$p" --ik numeric --json - | strip > "$out/check-$n-numeric.json" || true
  cp "$p" "$work/$n.yaml"
  # fix writes beside a copy so that the demo folder stays untouched; the robot path is
  # made absolute in the copy, and the file names are blanked in the snapshot.
  sed -i -E "s#^robot: *(\.\./)?robots/#robot: $PWD/robots/#" "$work/$n.yaml"
  sed -i -E "s#^cell: *#cell: $PWD/paths/#" "$work/$n.yaml"
  "$bin" fix "$work/$n.yaml" --out "$work/$n.fixed.yaml" --json - | sed "s#$work#WORK#g" | strip > "$out/fix-$n.json" || true
  [ -f "$work/$n.fixed.yaml" ] && sed "s#$work#WORK#g" "$work/$n.fixed.yaml" > "$out/fix-$n.fixed.yaml"
done
"$bin" check paths/seam.csv --robot robots/arm6.urdf --speed 50 --work-frame 900,0,300,0,0,0 --json - | strip > "$out/check-seam.json" || true
"$bin" place paths/bracket_fillet.yaml --x -100:100:100 --y -100:100:100 --yaw -20:20:20 --json - | strip > "$out/place-bracket.json" || true
ls "$out" | wc -l
