#!/usr/bin/env bash
# Scaling of the MPI build over ranks (README "Performance"): trials per second of `fxmimo run`
# and the wall time of `fxmimo tune` on examples/metro-7-shadowed.toml (7 cells, 256 antennas,
# 32 users per cell) for 1, 2 and 3 ranks of one thread each, every output compared with the
# first, then the serial fraction from 1 and 2 ranks (Amdahl: T(P) = T(1) (f + (1 - f) / P)).
# Wall times from `date`; not a test (no timing is ever asserted).
#   bench/mpi_scaling.sh [FXMIMO] [RUN_TRIALS] [TUNE_OPTIONS...]
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
exe=${1:-build/release/app/fxmimo}
run_trials=${2:-96}
shift $(($# > 2 ? 2 : $#))
tune_options=("$@")
[[ ${#tune_options[@]} -gt 0 ]] || tune_options=(--modulation scenario --trials 16)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
mpirun=(mpirun --oversubscribe --bind-to none --mca btl self,vader)
[[ $(id -u) -eq 0 ]] && mpirun+=(--allow-run-as-root)

seconds() {  # wall seconds of "$@", output to $work/out
  local start end
  start=$(date +%s.%N)
  "$@" >"$work/out" 2>"$work/err" || [[ $? -eq 1 ]] || { cat "$work/err"; exit 1; }
  end=$(date +%s.%N)
  awk "BEGIN { print $end - $start }"
}

declare -A run_time tune_time
for ranks in 1 2 3; do
  run_time[$ranks]=$(seconds "${mpirun[@]}" -np "$ranks" "$exe" run -c examples/metro-7-shadowed.toml \
    --trials "$run_trials" --threads 1 --json "$work/run-$ranks.json")
  cmp "$work/run-1.json" "$work/run-$ranks.json"
  tune_time[$ranks]=$(seconds "${mpirun[@]}" -np "$ranks" "$exe" tune -c examples/metro-7-shadowed.toml \
    "${tune_options[@]}" --threads 1 -o "$work/tune-$ranks.toml" --json "$work/tune-$ranks.json")
  cmp "$work/tune-1.toml" "$work/tune-$ranks.toml"
  cmp "$work/tune-1.json" "$work/tune-$ranks.json"
  printf 'ranks %d: run %d trials %.1f s (%.2f trials/s), tune %.1f s\n' "$ranks" "$run_trials" \
    "${run_time[$ranks]}" "$(awk "BEGIN { print $run_trials / ${run_time[$ranks]} }")" "${tune_time[$ranks]}"
done
for what in run tune; do
  declare -n t=${what}_time
  # f from S(2) = T(1) / T(2) = 1 / (f + (1 - f) / 2):  f = 2 / S(2) - 1.
  f=$(awk "BEGIN { print 2 * ${t[2]} / ${t[1]} - 1 }")
  printf '%s: speed-up %.2f on 2 ranks, %.2f on 3 (oversubscribed: 2 cores); serial fraction f = %.3f\n' "$what" \
    "$(awk "BEGIN { print ${t[1]} / ${t[2]} }")" "$(awk "BEGIN { print ${t[1]} / ${t[3]} }")" "$f"
done
echo "outputs byte-identical for 1, 2 and 3 ranks"
