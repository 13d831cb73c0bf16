#!/usr/bin/env bash
# The Slurm examples end to end on a one-node cluster that this test starts and stops
# (.ci/local-slurm, on ports of its own): the job array of examples/slurm/sweep-array.sbatch
# submitted with sbatch --wait and its parts merged here, then examples/slurm/submit-sweep.sh
# (array and dependent merge job); both merged outputs (JSON, CSV, the printed table) must equal
# byte for byte what the same sweep without --shard writes (the program's own unsharded run).
# In a build with MPI, also examples/slurm/tune-mpi.sbatch on 2 tasks (srun --mpi=pmix): its
# tuned scenario and JSON must equal the same tune in one process.
#   tests/slurm/sweep_array_test.sh FXMIMO WORK_DIR [HAVE_MPI: ON or OFF]
# Exit 77 (ctest: skipped) where Slurm or munge is not installed or root is not to be had;
# `./run.sh slurm` installs them and runs this test (ctest label slurm).
set -euo pipefail
exe=$1
work=$2
have_mpi=${3:-OFF}
source_dir=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
export PATH="$PATH:/usr/local/sbin:/usr/sbin:/sbin"
start=$SECONDS

for program in sbatch srun slurmctld slurmd munged; do
  if ! command -v "$program" >/dev/null; then
    echo "slurm test: skipped: $program is not installed (Debian slurm-wlm and munge; ./run.sh slurm installs them)"
    exit 77
  fi
done
if [[ $(id -u) -ne 0 ]] && ! sudo -n true 2>/dev/null; then
  echo "slurm test: skipped: starting munged and slurmd needs root or sudo without a password"
  exit 77
fi

rm -rf "$work"
mkdir -p "$work"
cd "$work"
cp -r "$source_dir/examples" examples
# Ports of its own, so that a cluster started by hand (.ci/local-slurm start: 6817, 6818) may run.
export FXMIMO_SLURM_CTLD_PORT=${FXMIMO_SLURM_CTLD_PORT:-6917} FXMIMO_SLURM_NODE_PORT=${FXMIMO_SLURM_NODE_PORT:-6918}
cluster=$work/cluster
trap '"$source_dir/.ci/local-slurm" stop "$cluster" >/dev/null 2>&1 || true' EXIT
eval "$("$source_dir/.ci/local-slurm" start "$cluster")"

sweep="-c examples/tower-128-neumann.toml --node inv_iter,weights --bits 9:12 --trials 4"
# shellcheck disable=SC2086
"$exe" sweep $sweep --json whole.json --csv whole.csv >whole.txt

same() {  # what, then pairs of files that must be equal
  local what=$1
  shift
  while [[ $# -gt 0 ]]; do
    cmp "$1" "$2" || { echo "slurm test: FAILED: $what: $2 differs from the unsharded $1"; exit 1; }
    shift 2
  done
  echo "slurm test: $what: byte-identical to the unsharded sweep"
}

# 1. The job array, 3 shards on one CPU each, then the merge as a follow-up command.
FXMIMO=$exe FXMIMO_SWEEP=$sweep FXMIMO_PARTS=$work/array-parts \
  timeout 120 sbatch --wait --array=1-3 --cpus-per-task=1 examples/slurm/sweep-array.sbatch
"$exe" merge array-parts/part-*.json -o array.json --csv array.csv >array.txt
same "sbatch --wait --array=1-3, then fxmimo merge" whole.json array.json whole.csv array.csv whole.txt array.txt

# 2. submit-sweep.sh: 5 shards (8 points) and the merge job after them; SBATCH_WAIT makes each sbatch wait.
FXMIMO=$exe FXMIMO_SWEEP=$sweep FXMIMO_PARTS=$work/job-parts FXMIMO_RESULTS=$work/job SBATCH_WAIT=1 \
  timeout 120 examples/slurm/submit-sweep.sh 5 --cpus-per-task=1
same "submit-sweep.sh 5 (array and dependent merge job)" whole.json job.json whole.csv job.csv

# 3. The MPI tune on two tasks of one job, against the same tune in one process.
if [[ $have_mpi == ON ]]; then
  tune="-c examples/rooftop-64.toml --trials 4 --range-trials 100 --verify-trials 6 --max-sinr-loss 0.3 --max-evm 2"
  # shellcheck disable=SC2086
  "$exe" tune $tune -o alone.toml --json alone.json >alone.txt || [[ $? -eq 1 ]]
  FXMIMO=$exe FXMIMO_TUNE="$tune -o ranks.toml --json ranks.json" \
    timeout 180 sbatch --wait --ntasks=2 --cpus-per-task=1 --output="$work/tune-%j.log" examples/slurm/tune-mpi.sbatch ||
    [[ $? -eq 1 ]] || { echo "slurm test: FAILED: the MPI tune job failed:"; cat "$work"/tune-*.log; exit 1; }
  cmp alone.toml ranks.toml && cmp alone.json ranks.json ||
    { echo "slurm test: FAILED: the MPI tune on 2 tasks differs from one process"; exit 1; }
  echo "slurm test: tune-mpi.sbatch on 2 tasks (srun --mpi=pmix): byte-identical to one process"
else
  echo "slurm test: tune-mpi.sbatch not run: this fxmimo was built without MPI"
fi
echo "slurm test: passed in $((SECONDS - start)) s"
