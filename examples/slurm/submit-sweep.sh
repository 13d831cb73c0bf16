#!/bin/bash
# Submits a sharded sweep: the job array of sweep-array.sbatch with N tasks, then a merge job that
# Slurm starts once every task has succeeded (--dependency=afterok) and that writes
# $FXMIMO_RESULTS.json and .csv from the parts. Prints the two job ids.
#
#   examples/slurm/submit-sweep.sh N [SBATCH OPTIONS...]
#
# Environment: FXMIMO, FXMIMO_SWEEP and FXMIMO_PARTS as in sweep-array.sbatch (FXMIMO_PARTS
# defaults to fxmimo-parts/ARRAYJOBID here too); FXMIMO_RESULTS, the results without their
# extension (default: FXMIMO_PARTS/sweep). SBATCH_WAIT=1 makes each sbatch wait for its job, so that
# the script returns when the merge has finished (and fails if it failed).
#
# Examples:
#   examples/slurm/submit-sweep.sh 8
#   examples/slurm/submit-sweep.sh 32 --partition=long --time=02:00:00
#   FXMIMO_SWEEP='-c my.toml --key array.antennas --values 64,128,256 --trials 200' \
#     examples/slurm/submit-sweep.sh 3
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
if [[ $# -lt 1 || ! $1 =~ ^[1-9][0-9]*$ ]]; then
  echo "usage: $0 N [SBATCH OPTIONS...]  (N shards, N >= 1)" >&2
  exit 2
fi
shards=$1
shift

array_job=$(sbatch --parsable --array="1-$shards" "$@" "$here/sweep-array.sbatch")
array_job=${array_job%%;*}  # "JOBID;CLUSTER" on a federation
parts=${FXMIMO_PARTS:-fxmimo-parts/$array_job}
results=${FXMIMO_RESULTS:-$parts/sweep}
fxmimo=${FXMIMO:-fxmimo}
merge_job=$(sbatch --parsable --dependency="afterok:$array_job" --kill-on-invalid-dep=yes --job-name=fxmimo-merge \
  --ntasks=1 --output="${results}-merge-%j.log" "$@" \
  --wrap="$(printf '%q ' "$fxmimo" merge) $(printf '%q' "$parts")/part-*.json $(printf -- '-o %q --csv %q' \
    "$results.json" "$results.csv")")
echo "array job $array_job ($shards shards, parts in $parts), merge job ${merge_job%%;*} (writes $results.json)"
