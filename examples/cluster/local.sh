#!/usr/bin/env bash
# The workstation equivalent of submit.sh: N shards, P at a time (xargs -P), then the
# merge, with the same files in OUT.
#
#   examples/cluster/local.sh run   MODEL.json N P OUT [run options, e.g. --photons 100000]
#   examples/cluster/local.sh sweep SPEC.json  N P OUT
#
# Each shard runs on one thread (--threads 1), so P is the number of cores to use. Run it
# again after an interruption: finished shards are run again from their checkpoints (runs)
# or skip their finished points (sweeps). Set SOJOURN to the binary if it is not on PATH.
set -euo pipefail
if [ $# -lt 5 ]; then
    sed -n '2,11p' "$0"
    exit 2
fi
SOJOURN=${SOJOURN:-sojourn}
mode=$1 input=$2 n=$3 p=$4 out=$5
shift 5
mkdir -p "$out"
case $mode in
run)
    seq 1 "$n" | xargs -P "$p" -I{} "$SOJOURN" run "$input" --shard {}/"$n" --threads 1 \
        --quiet --json "$out/shard-{}-of-$n.json" --checkpoint "$out/shard-{}-of-$n.checkpoint" \
        "$@" >/dev/null
    ;;
sweep)
    seq 1 "$n" | xargs -P "$p" -I{} "$SOJOURN" sweep "$input" --shard {}/"$n" --threads 1 \
        --quiet --out "$out" >/dev/null
    ;;
*)
    echo "mode must be run or sweep" >&2
    exit 2
    ;;
esac
shards=()
for k in $(seq 1 "$n"); do
    shards+=("$out/shard-$k-of-$n.json")
done
case $mode in
run) "$SOJOURN" merge "${shards[@]}" --json "$out/merged.json" ;;
sweep) "$SOJOURN" merge "${shards[@]}" --out "$out" ;;
esac
