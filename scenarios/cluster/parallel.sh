#!/usr/bin/env bash
# Run a layflow experiment in shards on one machine (or over ssh with
# GNU parallel's -S option), then merge them:
#
#   scenarios/cluster/parallel.sh PLAN.yaml SHARDS RESULTS_DIR
#
# GNU parallel records every shard's exit status in RESULTS_DIR/logs/parallel.joblog.
# If a shard fails or is killed, run the same command again: --resume-failed
# reruns only the shards that failed or never started (each resumes its own
# saved units), then the merge runs. On a first run there is nothing to resume.
# Each shard uses every core it is given; with SHARDS jobs at once, pass
# e.g. --threads to layflow or -j to parallel to share the machine.
set -euo pipefail
usage="usage: parallel.sh PLAN.yaml SHARDS RESULTS_DIR"
plan=${1:?$usage}; shards=${2:?$usage}; out=${3:?$usage}
mkdir -p "$out/logs"
# --halt soon,fail=1: after a failure start no new shard, let the running ones finish and save.
seq 1 "$shards" | parallel --joblog "$out/logs/parallel.joblog" --resume-failed --halt soon,fail=1 \
    layflow experiment "$plan" --shard "{}/$shards" --out "$out/shard-{}" --resume --quiet
layflow merge $(seq -f "$out/shard-%g" 1 "$shards") --out "$out/merged"
