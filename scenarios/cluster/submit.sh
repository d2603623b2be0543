#!/usr/bin/env bash
# Submit a layflow experiment to a Slurm cluster: a job array with one task
# per shard, then a merge job that starts only when every shard succeeded.
#
#   scenarios/cluster/submit.sh PLAN.yaml SHARDS RESULTS_DIR
#
# e.g. scenarios/cluster/submit.sh scenarios/plans/overnight.yaml 8 /scratch/$USER/exp1
# RESULTS_DIR must be on a file system every node sees. `layflow` must be on
# the nodes' PATH. Adjust the #SBATCH lines in the two job scripts to your
# site (partition, time, memory).
set -euo pipefail
usage="usage: submit.sh PLAN.yaml SHARDS RESULTS_DIR"
plan=$(realpath "${1:?$usage}")
shards=${2:?$usage}
out=$(realpath -m "${3:?$usage}")
here=$(cd "$(dirname "$0")" && pwd)
mkdir -p "$out/logs"

# --parsable prints "jobid" or "jobid;cluster".
array=$(sbatch --parsable --array="1-$shards" --output="$out/logs/shard-%a.out" \
    --export="ALL,PLAN=$plan,SHARDS=$shards,OUT=$out" "$here/experiment-array.sbatch")
array=${array%%;*}
merge=$(sbatch --parsable --dependency="afterok:$array" --output="$out/logs/merge.out" \
    --export="ALL,SHARDS=$shards,OUT=$out" "$here/merge.sbatch")
echo "submitted shards as job array $array and the merge as job ${merge%%;*}"
echo "results: $out/merged (progress: layflow summarize $out/shard-1, logs in $out/logs)"
