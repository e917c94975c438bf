#!/usr/bin/env bash
# Run a lumisift workflow as a Slurm job array, one shard per array task, then merge.
#
# Usage (from a login node, in the folder holding the workflow):
#   sbatch --array=1-32 workflows/cluster-array.sh workflows/large-1m.toml
#   # when every task has finished:
#   sbatch --dependency=afterok:<array job id> workflows/cluster-array.sh --merge workflows/large-1m.toml
#
# Each task writes its own store, shards/<workflow name>.<K>-of-<N>.sqlite, so tasks never
# contend for one SQLite file on a shared file system. A task that is killed (time limit,
# pre-emption) can simply be resubmitted with the same array index: it resumes where it stopped.
# The merge step combines all shard stores into the workflow's own store; the result has the
# same rows as a single unsharded run, and it warns (exit 1) when a shard is missing or unfinished.
#
#SBATCH --job-name=lumisift
#SBATCH --cpus-per-task=8
#SBATCH --mem=4G
#SBATCH --time=12:00:00
#SBATCH --output=lumisift-%A_%a.log

set -euo pipefail

LUMISIFT=${LUMISIFT:-lumisift}   # path to the binary if it is not on PATH

if [[ "${1:-}" == "--merge" ]]; then
    wf=$2
    name=$(basename "$wf" .toml)
    out=${MERGED_STORE:-shards/$name.merged.sqlite}
    shopt -s nullglob
    stores=(shards/"$name".*-of-*.sqlite)
    if (( ${#stores[@]} == 0 )); then
        echo "no shard stores shards/$name.*-of-*.sqlite found" >&2
        exit 2
    fi
    exec "$LUMISIFT" merge "$out" "${stores[@]}"
fi

wf=$1
: "${SLURM_ARRAY_TASK_ID:?run this script through sbatch --array=1-N}"
: "${SLURM_ARRAY_TASK_COUNT:?run this script through sbatch --array=1-N}"
k=$SLURM_ARRAY_TASK_ID
n=$SLURM_ARRAY_TASK_COUNT
name=$(basename "$wf" .toml)
mkdir -p shards
exec "$LUMISIFT" run "$wf" \
    --shard "$k/$n" \
    --store "shards/$name.$k-of-$n.sqlite" \
    --threads "${SLURM_CPUS_PER_TASK:-1}" \
    --no-bar
