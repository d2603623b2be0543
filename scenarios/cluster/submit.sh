#!/usr/bin/env bash
# Submit a layflow experiment to a Slurm cluster: a job array with one task
# per shard, then a merge job that starts only when every shard succeeded.
#
#   scenarios/cluster/submit.sh PLAN.yaml SHARDS RESULTS_DIR [AT_ONCE]
#
# e.g. scenarios/cluster/submit.sh scenarios/plans/overnight.yaml 8 /scratch/$USER/exp1 4
# AT_ONCE caps how many shards run at the same time (Slurm's array throttle,
# --array=1-SHARDS%AT_ONCE); without it Slurm runs as many as fit. Sites cap
# array sizes (MaxArraySize, often 1,000 or so): see docs/cluster.md on
# choosing SHARDS and AT_ONCE.
# RESULTS_DIR must be on a file system every node sees. `layflow` must be on
# the nodes' PATH. Adjust the #SBATCH lines in the two job scripts to your
# site (partition, time, memory).
#
# Submitting the same command again is safe: every shard resumes its own
# saved units (finished shards end at once) and a new merge job waits for
# the new array. docs/cluster.md says what to do when a shard fails.
set -euo pipefail
usage="usage: submit.sh PLAN.yaml SHARDS RESULTS_DIR [AT_ONCE]"
plan=$(realpath "${1:?$usage}")
shards=${2:?$usage}
out=$(realpath -m "${3:?$usage}")
at_once=${4:-}
case "$shards" in ''|*[!0-9]*|0) echo "submit.sh: SHARDS must be a whole number of at least 1, not '$shards'" >&2; exit 2 ;; esac
case "$at_once" in *[!0-9]*|0) echo "submit.sh: AT_ONCE must be a whole number of at least 1, not '$at_once'" >&2; exit 2 ;; esac
here=$(cd "$(dirname "$0")" && pwd)
mkdir -p "$out/logs"

range="1-$shards${at_once:+%$at_once}"
# --parsable prints "jobid" or "jobid;cluster". --open-mode=append: a task
# that is requeued (a lost node, scontrol requeue) adds to its log instead
# of wiping the first attempt's.
array=$(sbatch --parsable --array="$range" --open-mode=append --output="$out/logs/shard-%a.out" \
    --export="ALL,PLAN=$plan,SHARDS=$shards,OUT=$out" "$here/experiment-array.sbatch")
array=${array%%;*}
merge=$(sbatch --parsable --dependency="afterok:$array" --open-mode=append --output="$out/logs/merge.out" \
    --export="ALL,SHARDS=$shards,OUT=$out" "$here/merge.sbatch")
merge=${merge%%;*}
echo "submitted shards as job array $array and the merge as job $merge"
echo "results: $out/merged (progress: layflow summarize $out/shard-1, logs in $out/logs)"
