#!/usr/bin/env bash
# Submit a sharded sojourn run, or a sharded sweep, to Slurm: a job array with one task per
# shard, then a merge job that starts only when every shard has succeeded.
#
#   examples/cluster/submit.sh run   MODEL.json N OUT [run options, e.g. --photons 10000000]
#   examples/cluster/submit.sh sweep SPEC.json  N OUT
#
# Shards are numbered 1..N, the same as the array task ids (--array=1-N). OUT must be on a
# file system that every node sees. Set SOJOURN to the binary's path if it is not on PATH.
# Edit the #SBATCH lines of shard.sbatch and merge.sbatch for your site (partition,
# account, time, cores).
set -euo pipefail
if [ $# -lt 4 ]; then
    sed -n '2,11p' "$0"
    exit 2
fi
here=$(cd "$(dirname "$0")" && pwd)
mode=$1 input=$2 shards=$3 out=$4
shift 4
case $mode in run | sweep) ;; *) echo "mode must be run or sweep" >&2; exit 2 ;; esac
mkdir -p "$out/logs"
array=$(sbatch --parsable --array=1-"$shards" --output="$out/logs/shard-%a.log" \
    "$here/shard.sbatch" "$mode" "$input" "$out" "$@")
array=${array%%;*} # --parsable prints "jobid" or "jobid;cluster"
merge=$(sbatch --parsable --dependency=afterok:"$array" --output="$out/logs/merge.log" \
    "$here/merge.sbatch" "$mode" "$shards" "$out")
echo "shards: job array $array (1-$shards); merge: job ${merge%%;*}, after all shards succeed"
