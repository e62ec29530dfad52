#!/usr/bin/env bash
# A sweep as a job array: each array task runs one shard of it.
#
#   sbatch --array=1-N bench-harness/scripts/sweep-array.sh OUT [wend bench options...]
#
# `wend bench` takes its shard from the task's variables (task id less the lowest id, plus 1,
# of the task count) and appends each finished run to OUT/runs.shard-K-of-N.jsonl. Every task
# writes into the same OUT, on storage that all nodes share. The first task to start records
# the sweep's plan in OUT/plan.json, and a task with another plan is refused. A task that died
# is redone by submitting the same array again: finished shards end at once, the others do only
# their missing runs. When every task is done: wend bench --report OUT.
#
#SBATCH --job-name=wend-sweep
#SBATCH --cpus-per-task=1
#SBATCH --output=wend-sweep-%A_%a.out
set -euo pipefail
out=${1:?usage: sbatch --array=1-N sweep-array.sh OUT [wend bench options...]}
shift
# WEND names the binary (default: wend on the PATH). A task with more cores runs more runs at once.
exec "${WEND:-wend}" bench --out "$out" --jobs "${SLURM_CPUS_PER_TASK:-1}" "$@"
