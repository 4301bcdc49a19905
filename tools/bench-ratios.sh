#!/usr/bin/env bash
# Runs armpath's benches side by side with the k crate RUNS times (default 3) and prints, for
# every armpath/k pair, the ratio k time ÷ armpath time of each run (both measured in the same
# run, so machine load moves them together), then the median and the spread (min–max).
#
#   tools/bench-ratios.sh            # 3 runs of every bench
#   RUNS=5 tools/bench-ratios.sh check
#
# Needs only cargo, awk and sort. The raw criterion output of each run is kept in
# target/bench-ratios/ for inspection.
set -euo pipefail
cd "$(dirname "$0")/.."
runs=${RUNS:-3}
benches=("$@")
[ ${#benches[@]} -eq 0 ] && benches=(kinematics analytic_ik check)
out=target/bench-ratios
mkdir -p "$out"
cargo bench --no-run "${benches[@]/#/--bench=}" >/dev/null 2>&1 || cargo bench --no-run

# Pairs: "label|armpath bench id|k bench id" (ids as criterion prints them).
pairs=(
  "forward kinematics|fk/armpath|fk/k"
  "FK + Jacobian|jacobian/armpath|jacobian/k"
  "IK per path sample|ik_line/armpath|ik_line/k"
  "IK random targets|ik_random/armpath|ik_random/k"
  "closed form, all in-range solutions vs one k solve|ik_arm6/closed_form_all_in_limit|ik_arm6/k_jacobian_one_solve_near_seed"
  "closed form, one branch vs one k solve|ik_arm6/closed_form_one_branch_near|ik_arm6/k_jacobian_one_solve_near_seed"
  "numerical IK, one solve vs one k solve|ik_arm6/numeric_one_solve_near_seed|ik_arm6/k_jacobian_one_solve_near_seed"
  "whole check vs plain k IK loop|check_30k/armpath check (all findings)|check_30k/k IK loop (IK only)"
  "whole check on two threads vs plain k IK loop|check_30k/armpath check (all findings, 2 threads)|check_30k/k IK loop (IK only)"
  "whole check, two threads vs one|check_30k/armpath check (all findings, 2 threads)|check_30k/armpath check (all findings)"
)

# Median time of a bench id in one criterion log, in nanoseconds.
median_ns() {
  awk -v id="$2" '
    function ns(v, u) { return u == "ps" ? v / 1000 : u == "ns" ? v : u == "µs" || u == "us" ? v * 1e3 : u == "ms" ? v * 1e6 : v * 1e9 }
    $0 == id || index($0, id " ") == 1 { want = 1 }
    want && /time:/ { sub(/.*time:[ \t]*\[/, ""); split($0, a, " "); print ns(a[3], a[4]); exit }
  ' "$1"
}

for r in $(seq 1 "$runs"); do
  for b in "${benches[@]}"; do
    echo "run $r/$runs: cargo bench --bench $b" >&2
    cargo bench --bench "$b" >"$out/$b.$r.log" 2>&1
  done
done

printf '%-58s %-26s %s\n' "pair" "ratio per run (k ÷ armpath)" "median [min–max]"
for p in "${pairs[@]}"; do
  IFS='|' read -r label ours theirs <<<"$p"
  ratios=()
  for r in $(seq 1 "$runs"); do
    for b in "${benches[@]}"; do
      f="$out/$b.$r.log"
      a=$(median_ns "$f" "$ours"); k=$(median_ns "$f" "$theirs")
      if [ -n "$a" ] && [ -n "$k" ]; then
        ratios+=("$(awk -v a="$a" -v k="$k" 'BEGIN { printf "%.2f", k / a }')")
      fi
    done
  done
  [ ${#ratios[@]} -eq 0 ] && continue
  sorted=$(printf '%s\n' "${ratios[@]}" | sort -g)
  n=${#ratios[@]}
  med=$(echo "$sorted" | awk -v n="$n" 'NR == int((n + 1) / 2) { print }')
  lo=$(echo "$sorted" | head -1); hi=$(echo "$sorted" | tail -1)
  printf '%-58s %-26s %s× [%s–%s]\n' "$label" "${ratios[*]}" "$med" "$lo" "$hi"
done
echo
echo "success rates and path facts printed by the benches (run 1):"
for b in "${benches[@]}"; do
  grep -hE "success|samples|verdict" "$out/$b.1.log" | grep -v "^Benchmarking" | sed 's/^/  /' || true
done
