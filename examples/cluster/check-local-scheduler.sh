#!/usr/bin/env bash
# Checks the Slurm scripts on a real scheduler. Sets up a throw-away single-node Slurm
# (slurmctld, slurmd and munged from the distribution's packages, installed with apt-get
# when missing), submits a 3-shard run and a 3-shard sweep through submit.sh, waits for
# their merge jobs, compares the merged results with unsplit runs byte for byte (the run
# report's wall-clock field aside), and tears everything down again.
#
#   examples/cluster/check-local-scheduler.sh
#
# Needs root: the daemons run as root, with their configuration, keys, state and logs in a
# temporary folder, on two loopback ports. The scheduler's only partition is not the
# default one, so the jobs start only if submit.sh passes --partition through; the shard
# cores are set once by option and once by environment variable. SOJOURN names the binary
# (default: target/release/sojourn of this repository, else sojourn on PATH); SOJOURN_NO_INSTALL=1
# forbids apt-get. Exit status: 0 passed, 1 failed, 77 cannot run here (the reason is printed).
set -euo pipefail
started=$(date +%s)
repo=$(cd "$(dirname "$0")/../.." && pwd)
cd "$repo"
skip() {
    echo "cluster check: skipped: $*" >&2
    exit 77
}
fail() {
    echo "cluster check: FAILED: $*" >&2
    exit 1
}
say() { echo "cluster check: $* ($(($(date +%s) - started)) s)"; }

[ "$(id -u)" = 0 ] || skip "needs root to start munged, slurmctld and slurmd"

sojourn=${SOJOURN:-}
if [ -z "$sojourn" ]; then
    if [ -x target/release/sojourn ]; then sojourn=$repo/target/release/sojourn; else sojourn=$(command -v sojourn || true); fi
fi
[ -n "$sojourn" ] && [ -x "$sojourn" ] || fail "no sojourn binary: build it with cargo build --release or set SOJOURN"
case $sojourn in /*) ;; *) sojourn=$(cd "$(dirname "$sojourn")" && pwd)/$(basename "$sojourn") ;; esac
export SOJOURN=$sojourn

# The scheduler's programs, from the distribution's packages.
tools=(munged munge slurmctld slurmd sbatch squeue scontrol sinfo)
missing() {
    for tool in "${tools[@]}"; do command -v "$tool" >/dev/null || return 0; done
    return 1
}
if missing; then
    [ -z "${SOJOURN_NO_INSTALL:-}" ] || skip "Slurm and munge are not installed and SOJOURN_NO_INSTALL is set"
    command -v apt-get >/dev/null || skip "Slurm and munge are not installed and there is no apt-get"
    say "installing slurmctld, slurmd, slurm-client and munge with apt-get"
    # Keep the packages' own services from starting: this check starts its own daemons.
    policy=/usr/sbin/policy-rc.d
    own_policy=""
    if [ ! -e "$policy" ]; then
        printf '#!/bin/sh\nexit 101\n' >"$policy" && chmod 755 "$policy" && own_policy=$policy
    fi
    install() {
        DEBIAN_FRONTEND=noninteractive apt-get install -y -q --no-install-recommends \
            slurmctld slurmd slurm-client munge >"${TMPDIR:-/tmp}/sojourn-apt.log" 2>&1
    }
    installed=0
    if install || { apt-get update -q >/dev/null 2>&1 && install; }; then installed=1; fi
    [ -z "$own_policy" ] || rm -f "$own_policy"
    [ "$installed" = 1 ] || skip "apt-get could not install Slurm and munge (packages unreachable?): see ${TMPDIR:-/tmp}/sojourn-apt.log"
    ! missing || skip "the installed packages lack one of: ${tools[*]}"
fi

work=$(mktemp -d "${TMPDIR:-/tmp}/sojourn-slurm.XXXXXX")
export SLURM_CONF=$work/slurm.conf
node=$(hostname -s)
port=$((20000 + RANDOM % 20000))
teardown() {
    status=$?
    if [ -f "$work/slurm.conf" ]; then
        scontrol shutdown >/dev/null 2>&1 || true
    fi
    # slurmctld and slurmd stop on `scontrol shutdown` (given 5 s), munged on SIGTERM.
    for pid_file in "$work/slurmctld.pid" "$work/slurmd.pid" "$work/munge/munged.pid"; do
        [ -f "$pid_file" ] || continue
        pid=$(cat "$pid_file")
        if [ "$pid_file" != "$work/munge/munged.pid" ]; then
            for _ in $(seq 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
        fi
        kill "$pid" 2>/dev/null || true
        for _ in $(seq 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
    done
    if [ "$status" != 0 ] && [ "$status" != 77 ]; then
        for log in "$work"/log/*.log "$work"/*/logs/*.log; do
            [ -f "$log" ] || continue
            echo "--- $log (last lines)" >&2
            tail -n 15 "$log" >&2
        done
    fi
    rm -rf "$work"
    exit "$status"
}
trap teardown EXIT
trap 'exit 130' INT TERM

# munge: a fresh key and its own socket.
mkdir -p "$work/munge" "$work/state" "$work/spool" "$work/log"
chmod 711 "$work/munge"
dd if=/dev/urandom of="$work/munge/munge.key" bs=1024 count=1 status=none
chmod 400 "$work/munge/munge.key"
munged --force --key-file="$work/munge/munge.key" --socket="$work/munge/munge.socket" \
    --pid-file="$work/munge/munged.pid" --log-file="$work/log/munged.log" \
    --seed-file="$work/munge/munged.seed" || fail "munged did not start"

partition=sojourn-check
cat >"$SLURM_CONF" <<EOF
ClusterName=sojourn-check
SlurmctldHost=$node(127.0.0.1)
SlurmctldPort=$port
SlurmdPort=$((port + 1))
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
AuthInfo=socket=$work/munge/munge.socket
CredType=cred/munge
StateSaveLocation=$work/state
SlurmdSpoolDir=$work/spool
SlurmctldPidFile=$work/slurmctld.pid
SlurmdPidFile=$work/slurmd.pid
SlurmctldLogFile=$work/log/slurmctld.log
SlurmdLogFile=$work/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SchedulerType=sched/backfill
SchedulerParameters=sched_interval=1
MpiDefault=none
ReturnToService=2
MinJobAge=600
NodeName=$node NodeAddr=127.0.0.1 CPUs=$(nproc) State=UNKNOWN
PartitionName=$partition Nodes=$node Default=NO MaxTime=INFINITE State=UP
EOF
slurmctld || fail "slurmctld did not start"
slurmd || fail "slurmd did not start"
for _ in $(seq 150); do
    [ "$(sinfo -h -p "$partition" -o %T 2>/dev/null)" = idle ] && break
    sleep 0.2
done
[ "$(sinfo -h -p "$partition" -o %T 2>/dev/null)" = idle ] || fail "the node did not come up"
say "single-node Slurm up (node $node, $(nproc) cores, partition $partition)"

# A 3-shard run (2 cores per shard, by option) and a 3-shard sweep (1 core, by variable).
model=models/diffuser-three-layer.json
spec=examples/sweeps/sphere-optical-depth.json
run_out=$work/run
sweep_out=$work/sweep
SOJOURN_SBATCH_OPTIONS="--partition=$partition --time=00:10:00" \
    examples/cluster/submit.sh --cpus-per-task 2 run "$model" 3 "$run_out" --photons 3000 --seed 4
SOJOURN_CPUS_PER_TASK=1 \
    examples/cluster/submit.sh --sbatch-option "--partition=$partition" sweep "$spec" 3 "$sweep_out"
for _ in $(seq 900); do
    [ -z "$(squeue -h -o %i)" ] && break
    sleep 0.2
done
[ -z "$(squeue -h -o %i)" ] || fail "jobs still queued or running after 3 minutes: $(squeue -h)"
jobs=$(scontrol show job -o)
count() { grep -c -- "$1" <<<"$jobs" || true; }
[ "$(count 'JobState=COMPLETED')" = 8 ] ||
    fail "expected 8 completed jobs (2 arrays of 3 shards, 2 merges), got: $(grep -o 'JobState=[A-Z_]*' <<<"$jobs" | sort | uniq -c | tr -s ' ')"
# Shard cores: 2 by option for the run, 1 by variable for the sweep; both words of
# SOJOURN_SBATCH_OPTIONS reached the run's jobs (its time limit).
[ "$(count 'JobName=sojourn-shard .* CPUs/Task=2 ')" = 3 ] || fail "the run's shards did not get 2 cores each"
[ "$(count 'JobName=sojourn-shard .* CPUs/Task=1 ')" = 3 ] || fail "the sweep's shards did not get 1 core each"
[ "$(count 'TimeLimit=00:10:00 ')" = 4 ] || fail "the run's jobs did not get the time limit of SOJOURN_SBATCH_OPTIONS"
say "6 shard tasks and 2 merge jobs completed in partition $partition"

# The unsplit results, and the comparison.
"$SOJOURN" run "$model" --photons 3000 --seed 4 --quiet --json "$work/unsplit-run.json" >/dev/null
"$SOJOURN" sweep "$spec" --out "$work/unsplit-sweep" --quiet >/dev/null
cmp <(grep -v '"elapsed_s":' "$run_out/merged.json") <(grep -v '"elapsed_s":' "$work/unsplit-run.json") ||
    fail "the merged run differs from the unsplit run"
grep -q 'Lumen-3' "$run_out/merged.txt" || fail "no text report of the merged run"
for table in sweep.csv sweep.jsonl; do
    cmp "$sweep_out/$table" "$work/unsplit-sweep/$table" ||
        fail "the merged sweep's $table differs from the unsplit sweep's"
done
say "PASSED: merged run and sweep equal the unsplit ones byte for byte"
