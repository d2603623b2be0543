#!/usr/bin/env bash
# A throwaway single-node Slurm on loopback, for CI and for trying the
# cluster scripts on one machine (docs/cluster.md):
#
#   tests/cluster/slurm-local.sh start    # prints the line to export SLURM_CONF
#   tests/cluster/slurm-local.sh stop     # stops every daemon it started
#
# Needs Debian's slurmctld, slurmd, slurm-client and munge packages (no
# systemd: the daemons are started by hand). Everything it writes lives in
# $LAYFLOW_SLURM_DIR (default /tmp/layflow-slurm): its own munge key and
# socket, slurm.conf, state, spool and logs. The node claims 8 CPUs and
# 8 GB whatever the machine has (SlurmdParameters=config_overrides), so the
# shipped job scripts' --cpus-per-task=4 and --mem=2G fit unchanged; two
# shards run at once. Run as root (the daemons and the jobs run as root).
set -euo pipefail
dir=${LAYFLOW_SLURM_DIR:-/tmp/layflow-slurm}
conf=$dir/slurm.conf

stop() {
    # Each daemon by its pid file; whatever happens, try them all.
    local rc=0
    for d in slurmd slurmctld munged; do
        local pidf=$dir/$d.pid
        [ -f "$pidf" ] || continue
        local pid
        pid=$(cat "$pidf" 2>/dev/null || true)
        if [ -n "$pid" ] && kill -0 "$pid" 2>/dev/null; then
            kill "$pid" 2>/dev/null || true
            for _ in $(seq 1 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
            if kill -0 "$pid" 2>/dev/null; then kill -9 "$pid" 2>/dev/null || rc=1; fi
        fi
        rm -f "$pidf"
    done
    return $rc
}

fail() {
    echo "error: the single-node Slurm did not start: $1" >&2
    for log in "$dir"/slurmctld.log "$dir"/slurmd.log "$dir"/munged.log; do
        [ -f "$log" ] && { echo "--- last lines of $log" >&2; tail -n 15 "$log" >&2; }
    done
    stop || true
    exit 1
}

start() {
    for b in munged slurmctld slurmd sbatch sinfo; do
        command -v "$b" >/dev/null 2>&1 \
            || fail "$b is not installed (Debian: apt-get install slurmctld slurmd slurm-client munge)"
    done
    stop || true
    rm -rf "$dir"
    mkdir -p "$dir/state" "$dir/spool" "$dir/munge"
    # Others must reach munged's socket here (sbatch run by a user when the
    # daemons run under sudo); the key itself stays readable by root only.
    chmod 755 "$dir" "$dir/munge"
    # A fresh key for this cluster of one: 1 KiB of random bytes, readable by its owner only.
    head -c 1024 /dev/urandom > "$dir/munge/munge.key"
    chmod 400 "$dir/munge/munge.key"
    # --force: munged refuses to run as root without it.
    munged --force --key-file="$dir/munge/munge.key" --socket="$dir/munge/munge.socket" \
        --pid-file="$dir/munged.pid" --log-file="$dir/munged.log" --seed-file="$dir/munge/munge.seed" \
        || fail "munged exited with status $?"
    local host
    host=$(hostname -s)
    cat > "$conf" <<CONF
# Written by tests/cluster/slurm-local.sh: one node, loopback only.
ClusterName=layflow-local
SlurmctldHost=$host(127.0.0.1)
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$dir/munge/munge.socket
SlurmctldPort=16817
SlurmdPort=16818
StateSaveLocation=$dir/state
SlurmdSpoolDir=$dir/spool
SlurmctldPidFile=$dir/slurmctld.pid
SlurmdPidFile=$dir/slurmd.pid
SlurmctldLogFile=$dir/slurmctld.log
SlurmdLogFile=$dir/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
MpiDefault=none
SwitchType=switch/none
JobCompType=jobcomp/none
AccountingStorageType=accounting_storage/none
JobAcctGatherType=jobacct_gather/none
# Start jobs as soon as they can run, in order; no backfill pass to wait for.
SchedulerType=sched/builtin
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SlurmdParameters=config_overrides
ReturnToService=2
# A job's record stays visible to scontrol for 10 min after it ends.
MinJobAge=600
KillWait=5
NodeName=$host NodeAddr=127.0.0.1 CPUs=8 RealMemory=8000 State=UNKNOWN
PartitionName=local Nodes=ALL Default=YES MaxTime=INFINITE State=UP
CONF
    export SLURM_CONF=$conf
    slurmctld -f "$conf" || fail "slurmctld exited with status $?"
    slurmd -f "$conf" || fail "slurmd exited with status $?"
    # Ready when the node is idle.
    for _ in $(seq 1 100); do
        if sinfo -h -N -o '%t' 2>/dev/null | grep -qx 'idle'; then
            echo "export SLURM_CONF=$conf"
            return 0
        fi
        sleep 0.2
    done
    fail "the node did not become idle within 20 s (sinfo: $(sinfo -h -N -o '%t %E' 2>&1 | head -n 1))"
}

case "${1:-}" in
    start) start ;;
    stop) stop ;;
    *) echo "usage: $0 start|stop" >&2; exit 2 ;;
esac
