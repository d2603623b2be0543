#!/usr/bin/env bash
# Run a layflow experiment in shards on one machine (or over ssh with
# GNU parallel's -S option), then merge them:
#
#   scenarios/cluster/parallel.sh PLAN.yaml SHARDS RESULTS_DIR
#
# Each shard uses every core it is given; with SHARDS jobs at once, pass
# e.g. --threads to layflow or -j to parallel to share the machine.
set -euo pipefail
usage="usage: parallel.sh PLAN.yaml SHARDS RESULTS_DIR"
plan=${1:?$usage}; shards=${2:?$usage}; out=${3:?$usage}
seq 1 "$shards" | parallel --halt now,fail=1 \
    layflow experiment "$plan" --shard "{}/$shards" --out "$out/shard-{}" --resume --quiet
layflow merge $(seq -f "$out/shard-%g" 1 "$shards") --out "$out/merged"
