#!/usr/bin/env bash
# Re-measures the README's memory, time and page-size figures RUNS times (default 3) and
# prints each figure's runs with the median and the spread (min–max).
#
#   tools/figures.sh            # 3 runs of every figure
#   RUNS=5 tools/figures.sh
#
# Needs the release binary (built here), GNU time (/usr/bin/time, Debian's `time`) and awk.
# Absolute times depend on the machine's load; peak memory and page size do not (much).
set -euo pipefail
cd "$(dirname "$0")/.."
runs=${RUNS:-3}
cargo build --release -q
bin=target/release/armpath
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

# The same zig-zag CSV as tests/memory.rs (mm, deg): reachable, one row per waypoint.
zigzag() { # n named
  awk -v n="$1" -v named="$2" 'BEGIN {
    print (named ? "name," : "") "x,y,z,roll,pitch,yaw"
    for (i = 0; i < n; i++) {
      t = i % 2000; y = t < 1000 ? -100 + 0.2 * t : 100 - 0.2 * (t - 1000)
      x = -50 + 2 * (i % 2)
      printf "%s%d,%.1f,0,180,0,0\n", (named ? "p" i "," : ""), x, y
    }
  }'
}
zigzag 1000000 0 >"$tmp/plain.csv"
zigzag 1000000 1 >"$tmp/named.csv"
csv_flags=(--robot robots/arm6.urdf --speed 10 --tool 0,0,180,0,0,0 --work-frame 900,0,250,0,0,0 -q)

# run LABEL -- command...: peak RSS (MB) and wall time (s) of one run, appended to $tmp/LABEL.
run() {
  local label=$1; shift; shift
  local status=0
  /usr/bin/time -f '%M %e' -o "$tmp/time" "$@" >/dev/null 2>"$tmp/err" || status=$?
  # 0 pass, 1 error findings: both are a measured check; anything else is a broken figure.
  if [ "$status" -gt 1 ]; then
    echo "$label: exit $status: $(cat "$tmp/err")" >&2
    exit 1
  fi
  read -r kib secs < <(tail -n 1 "$tmp/time")
  echo "$(awk -v k="$kib" 'BEGIN { printf "%.1f", k / 1024 }') $secs" >>"$tmp/$label"
}

for r in $(seq 1 "$runs"); do
  echo "run $r/$runs" >&2
  run long -- "$bin" check paths/bracket_fillet.yaml --step 0.000865 -q
  run long_html -- "$bin" check paths/bracket_fillet.yaml --step 0.000865 -q --html "$tmp/long.html"
  echo "$(stat -c %s "$tmp/long.html")" >>"$tmp/page_bytes"
  run csv_plain -- "$bin" check "$tmp/plain.csv" "${csv_flags[@]}"
  run csv_named -- "$bin" check "$tmp/named.csv" "${csv_flags[@]}"
  run place -- "$bin" place paths/bracket_fillet.yaml --x -95:95:10 --y -95:95:10
done

# stats FILE COLUMN: the runs in order, then median [min–max] (plain awk and sort).
stats() {
  local runs sorted
  runs=$(awk -v c="$2" '{ printf "%s ", $c }' "$1")
  sorted=$(awk -v c="$2" '{ print $c }' "$1" | sort -g)
  awk -v runs="$runs" '{ v[NR] = $1 } END {
    printf "%s→ %s [%s–%s]", runs, v[int((NR + 1) / 2)], v[1], v[NR] }' <<<"$sorted"
}
printf '%-52s %s\n' "figure" "runs → median [min–max]"
printf '%-52s %s\n' "1,001,251-sample check: peak RSS (MB)" "$(stats "$tmp/long" 1)"
printf '%-52s %s\n' "1,001,251-sample check: wall time (s)" "$(stats "$tmp/long" 2)"
printf '%-52s %s\n' "same with --html: peak RSS (MB)" "$(stats "$tmp/long_html" 1)"
printf '%-52s %s\n' "same with --html: page size (bytes)" "$(stats "$tmp/page_bytes" 1)"
printf '%-52s %s\n' "1,000,000-row CSV, no names: peak RSS (MB)" "$(stats "$tmp/csv_plain" 1)"
printf '%-52s %s\n' "1,000,000-row CSV, short names: peak RSS (MB)" "$(stats "$tmp/csv_named" 1)"
printf '%-52s %s\n' "place, 20 × 20 grid: wall time (s)" "$(stats "$tmp/place" 2)"
