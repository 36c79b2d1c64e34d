#!/usr/bin/env bash
# Submit a sharded sojourn run, or a sharded sweep, to Slurm: a job array with one task per
# shard, then a merge job that starts only when every shard has succeeded.
#
#   examples/cluster/submit.sh [OPTIONS] run   MODEL.json N OUT [run options, e.g. --photons 10000000]
#   examples/cluster/submit.sh [OPTIONS] sweep SPEC.json  N OUT
#
# OPTIONS (before the mode):
#   --cpus-per-task C    cores of each shard task, which runs C threads
#                        (default: $SOJOURN_CPUS_PER_TASK, else 4)
#   --sbatch-option OPT  one more option for both sbatch calls, e.g.
#                        --sbatch-option --partition=short (repeat it for more); the
#                        words of $SOJOURN_SBATCH_OPTIONS come first
#
# Shards are numbered 1..N, the same as the array task ids (--array=1-N). OUT must be on a
# file system that every node sees. Set SOJOURN to the binary's path if it is not on PATH.
# The #SBATCH lines of shard.sbatch and merge.sbatch hold the other defaults (time limit,
# requeue); options given here override them.
set -euo pipefail
usage() {
    sed -n '2,18p' "$0"
    exit 2
}
here=$(cd "$(dirname "$0")" && pwd)
cpus=${SOJOURN_CPUS_PER_TASK:-4}
read -r -a extra <<<"${SOJOURN_SBATCH_OPTIONS:-}"
while [ $# -gt 0 ]; do
    case $1 in
    --cpus-per-task) [ $# -ge 2 ] || usage; cpus=$2; shift 2 ;;
    --cpus-per-task=*) cpus=${1#*=}; shift ;;
    --sbatch-option) [ $# -ge 2 ] || usage; extra+=("$2"); shift 2 ;;
    --sbatch-option=*) extra+=("${1#*=}"); shift ;;
    -h | --help) usage ;;
    -*) echo "unknown option $1 (see --help)" >&2; exit 2 ;;
    *) break ;;
    esac
done
if [ $# -lt 4 ]; then
    usage
fi
case $cpus in
'' | *[!0-9]* | 0) echo "--cpus-per-task must be a whole number >= 1, not \"$cpus\"" >&2; exit 2 ;;
esac
mode=$1 input=$2 shards=$3 out=$4
shift 4
case $mode in run | sweep) ;; *) echo "mode must be run or sweep" >&2; exit 2 ;; esac
mkdir -p "$out/logs"
array=$(sbatch --parsable --cpus-per-task="$cpus" --array=1-"$shards" \
    --output="$out/logs/shard-%a.log" ${extra[@]+"${extra[@]}"} \
    "$here/shard.sbatch" "$mode" "$input" "$out" "$@")
array=${array%%;*} # --parsable prints "jobid" or "jobid;cluster"
merge=$(sbatch --parsable --dependency=afterok:"$array" --output="$out/logs/merge.log" \
    ${extra[@]+"${extra[@]}"} "$here/merge.sbatch" "$mode" "$shards" "$out")
echo "shards: job array $array (1-$shards, $cpus cores each); merge: job ${merge%%;*}, after all shards succeed"
