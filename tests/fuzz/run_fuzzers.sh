#!/usr/bin/env bash
# Runs the built libFuzzer programs of build/asan (preset asan; this script builds nothing).
#   tests/fuzz/run_fuzzers.sh SECONDS [TARGET...]     (default: every target)
# Each target runs for SECONDS on a scratch corpus build/asan/corpus-work/NAME, seeded from the
# committed tests/fuzz/corpus/NAME (never written to), two targets at a time. Crashes, leaks,
# sanitizer reports, timeouts (10 s) and out-of-memory (2 GB) inputs land in
# build/asan/findings/NAME/. Prints executions, seconds and the verdict per target; exits 1 when
# any target found something (0 with FXMIMO_FUZZ_REPORT_ONLY=1, which only reports), 2 on bad usage.
set -euo pipefail
root=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
build=$root/build/asan
all_targets=(scenario format quant dump manifest npy results part cli)
parallel=2

if [[ $# -lt 1 || ! $1 =~ ^[0-9]+$ || $1 -eq 0 ]]; then
  echo "usage: tests/fuzz/run_fuzzers.sh SECONDS [TARGET...] (targets: ${all_targets[*]})" >&2
  exit 2
fi
seconds=$1
shift
targets=("$@")
[[ ${#targets[@]} -eq 0 ]] && targets=("${all_targets[@]}")
for name in "${targets[@]}"; do
  if [[ ! -x $build/tests/fuzz/fuzz_$name ]]; then
    echo "run_fuzzers.sh: $build/tests/fuzz/fuzz_$name is not built (cmake --preset asan && cmake --build --preset asan --target fuzz_programs)" >&2
    exit 2
  fi
done

# One target: fuzz for the given time, then print one line. Paths are absolute: fuzz_cli changes
# its working directory.
run_one() {
  local name=$1
  local work=$build/corpus-work/$name findings=$build/findings/$name log=$build/findings/$name.log
  mkdir -p "$work" "$findings"
  cp -n "$root/tests/fuzz/corpus/$name"/* "$work"/ 2>/dev/null || true
  local status=0 start=$SECONDS
  UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 ASAN_OPTIONS=detect_leaks=1 \
    "$build/tests/fuzz/fuzz_$name" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 \
    -print_final_stats=1 -artifact_prefix="$findings/" "$work" >"$log" 2>&1 || status=$?
  local elapsed=$((SECONDS - start)) execs found
  execs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -1)
  found=$(find "$findings" -maxdepth 1 -type f | wc -l)
  if [[ $status -eq 0 && $found -eq 0 ]]; then
    printf '%-9s %12s execs %6d s  nothing found\n' "$name" "${execs:-?}" "$elapsed"
  else
    printf '%-9s %12s execs %6d s  FOUND (exit %d, %d file(s) in %s; log %s)\n' "$name" "${execs:-?}" \
      "$elapsed" "$status" "$found" "$findings" "$log"
    return 1
  fi
}

failed=0
running=0
for name in "${targets[@]}"; do
  if [[ $running -ge $parallel ]]; then
    wait -n || failed=1
    running=$((running - 1))
  fi
  run_one "$name" &
  running=$((running + 1))
done
while [[ $running -gt 0 ]]; do
  wait -n || failed=1
  running=$((running - 1))
done
if [[ $failed -ne 0 && ${FXMIMO_FUZZ_REPORT_ONLY:-0} == 1 ]]; then
  echo "run_fuzzers.sh: FINDINGS above (FXMIMO_FUZZ_REPORT_ONLY=1: reported, not failing)" >&2
  exit 0
fi
exit $failed
