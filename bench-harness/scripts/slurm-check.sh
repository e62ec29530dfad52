#!/usr/bin/env bash
# End-to-end check of sweeps under a batch scheduler, on a one-machine Slurm cluster:
#
#   bench-harness/scripts/slurm-check.sh [--wend PATH]
#
# 1. installs the scheduler's packages if missing and brings up a cluster on localhost in a
#    temporary folder (bench-harness/scripts/slurm-local.sh);
# 2. runs a small sweep without the scheduler, as the reference;
# 3. submits the same sweep as the job array of bench-harness/scripts/sweep-array.sh, waits,
#    merges (wend bench --report) and compares: the same (instance, method, seed) runs, each
#    once, with the same tour lengths (runs have iteration budgets, so lengths repeat);
# 4. submits it again into a new folder, kills one array task with SIGKILL while it runs (as
#    a lost node), leaves a half-written record at the end of its file (as a node lost while
#    writing), resubmits the whole array, and checks that the sweep ends with exactly the
#    planned runs, each once, with the reference's lengths;
# 5. submits a task with another plan into that folder, and the array's task 2 alone (an
#    array of one task): both are refused, naming what differs;
# 6. tears the cluster down, leaving nothing running.
#
# Needs root (it may install packages and starts daemons) and python3.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
wend=$root/target/release/wend
while [ $# -gt 0 ]; do
    case $1 in
    --wend) wend=$(cd "$(dirname "$2")" && pwd)/$(basename "$2"); shift 2 ;;
    *) echo "usage: $0 [--wend PATH]" >&2; exit 2 ;;
    esac
done
[ -x "$wend" ] || { echo "slurm-check: no wend binary at $wend (cargo build --release)" >&2; exit 2; }
export WEND=$wend
start=$SECONDS
say() { printf 'slurm-check: %s\n' "$*" >&2; }
fail() { printf 'slurm-check: FAILED: %s\n' "$*" >&2; exit 1; }

# shellcheck source=slurm-local.sh
source "$here/slurm-local.sh"
slurm_install
work=$(mktemp -d /tmp/wend-slurm-check.XXXXXX)
cleanup() {
    slurm_down "$work/cluster" || true
    rm -rf "$work"
}
trap cleanup EXIT
trap 'exit 130' INT TERM HUP
slurm_up "$work/cluster"
mkdir -p "$work/logs"

# The sweep: 4 instances of the project's folder, 2 methods, 3 seeds = 24 runs, each with one
# run of an iteration budget, so its tour is the same wherever it runs.
inst=$root/instances
sweep=(--instances "$inst/a280.tsp" "$inst/att532.tsp" "$inst/ch150.tsp" "$inst/gr666.tsp"
    --methods lk 2opt --seeds 3 --runs 1 --iterations 6000 --time-limit 120)
planned=24

say "the reference: the sweep without the scheduler"
"$wend" bench "${sweep[@]}" --jobs 2 --out "$work/reference" 2>"$work/logs/reference.err" \
    || { cat "$work/logs/reference.err" >&2; fail "the reference sweep"; }

# Checks that DIR's records hold exactly the reference's runs, each once, with its lengths.
same_as_reference() {
    python3 - "$work/reference" "$1" "$planned" <<'PY'
import glob, json, os, sys
ref_dir, dir, planned = sys.argv[1], sys.argv[2], int(sys.argv[3])
def records(d):
    out = []
    for f in sorted(glob.glob(os.path.join(d, "runs*.jsonl"))):
        with open(f) as fh:
            for n, line in enumerate(fh, 1):
                if not line.endswith("\n"):
                    sys.exit(f"{f}:{n}: a line without its line break is left")
                out.append(json.loads(line))
    return out
key = lambda r: (r["instance"], r["method"], r["seed"])
ref = {key(r): r["length"] for r in records(ref_dir)}
got = records(dir)
seen = {}
for r in got:
    seen[key(r)] = seen.get(key(r), 0) + 1
twice = sorted(k for k, c in seen.items() if c > 1)
missing = sorted(set(ref) - set(seen))
extra = sorted(set(seen) - set(ref))
differ = sorted(k for k in ref if k in seen
                and [r["length"] for r in got if key(r) == k][0] != ref[k])
problems = []
if len(ref) != planned:
    problems.append(f"the reference has {len(ref)} runs, not {planned}")
for what, ks in [("twice", twice), ("missing", missing), ("not planned", extra),
                 ("with another length", differ)]:
    if ks:
        problems.append(f"{len(ks)} runs {what}: {ks[:5]}")
if problems:
    sys.exit("; ".join(problems))
print(f"{len(got)} records: the {len(ref)} planned runs, each once, lengths as the reference's")
PY
}

# Submits the sweep as an array into OUT; prints the job id.
submit() {
    local array=$1 out=$2
    shift 2
    sbatch --parsable --array="$array" --output="$work/logs/%A_%a.out" \
        "$here/sweep-array.sh" "$out" "$@"
}

say "part 1: the sweep as a job array of 4 tasks"
job=$(submit 1-4 "$work/array" "${sweep[@]}")
slurm_wait_job "$job" 600 >/dev/null || fail "job $job: a task did not complete (logs in $work/logs)"
"$wend" bench --report "$work/array" 2>"$work/logs/report1.err" \
    || { cat "$work/logs/report1.err" >&2; fail "the report of part 1"; }
grep -q "all $planned planned runs recorded" "$work/logs/report1.err" \
    || { cat "$work/logs/report1.err" >&2; fail "the report does not count $planned runs"; }
msg=$(same_as_reference "$work/array") || fail "part 1: $msg"
say "part 1: $msg"
[ "$(ls "$work/array"/runs.shard-*-of-4.jsonl | wc -l)" = 4 ] || fail "not one records file per task"

say "part 2: a task killed mid-run, then the array resubmitted"
out=$work/killed
job=$(submit 1-4 "$out" "${sweep[@]}")
slurm_wait_running "$job" 2 120 || fail "task 2 never ran"
# Wait for its first record, so that it dies with some runs done and others not.
records=$out/runs.shard-2-of-4.jsonl
for _ in $(seq 1 600); do
    [ -s "$records" ] && break
    sleep 0.1
done
[ -s "$records" ] || fail "task 2 wrote no record"
slurm_kill_task "$job" 2 60 || fail "could not kill task 2"
done_before=$(wc -l <"$records")
[ "$done_before" -lt 6 ] || fail "task 2 finished its 6 runs before it was killed; the check needs longer runs"
# A node lost while writing leaves half a record: emulated by writing one.
head -n 1 "$records" | head -c 300 >>"$records"
slurm_wait_job "$job" 600 >"$work/logs/states2" || true
grep -q '^2 FAILED' "$work/logs/states2" || { cat "$work/logs/states2" >&2; fail "task 2 did not end as killed"; }
[ "$(grep -c COMPLETED "$work/logs/states2")" = 3 ] || fail "the other tasks did not complete"
"$wend" bench --report "$out" 2>"$work/logs/report2.err" || fail "the report after the kill"
grep -q "cut short" "$work/logs/report2.err" || { cat "$work/logs/report2.err" >&2; fail "the torn record was not reported"; }
grep -q "of the $planned planned runs are recorded" "$work/logs/report2.err" \
    || { cat "$work/logs/report2.err" >&2; fail "the report does not say runs are missing"; }
say "part 2: task 2 killed after $done_before of its 6 runs; $(grep -o '[0-9]* of the [0-9]* planned runs are recorded' "$work/logs/report2.err")"
job=$(submit 1-4 "$out" "${sweep[@]}")
slurm_wait_job "$job" 600 >/dev/null || fail "job $job (the resubmission): a task did not complete"
grep -q "removed, and the run is done again" "$work/logs/${job}_2.out" \
    || { cat "$work/logs/${job}_2.out" >&2; fail "task 2 did not remove the torn record"; }
"$wend" bench --report "$out" 2>"$work/logs/report3.err" || fail "the report after the resubmission"
grep -q "all $planned planned runs recorded" "$work/logs/report3.err" \
    || { cat "$work/logs/report3.err" >&2; fail "runs are still missing"; }
msg=$(same_as_reference "$out") || fail "part 2: $msg"
say "part 2: $msg"

say "part 3: tasks of another plan are refused"
job=$(submit 1-4 "$out" "${sweep[@]/#6000/3000}")
slurm_wait_job "$job" 600 >/dev/null && fail "tasks with another iteration budget were not refused"
log=$work/logs/${job}_1.out
grep -q "iterations: folder 6000, this command 3000" "$log" \
    || { cat "$log" >&2; fail "the refusal does not name the budget"; }
say "part 3: refused: $(grep -o 'iterations: folder 6000, this command 3000' "$log")"
job=$(submit 2 "$out" "${sweep[@]}")
slurm_wait_job "$job" 600 >/dev/null && fail "task 2 resubmitted alone was not refused"
log=$work/logs/${job}_2.out
grep -q "shards: folder 4, this command 1" "$log" \
    || { cat "$log" >&2; fail "the refusal does not name the shard count"; }
say "part 3: refused: $(grep -o 'shards: folder 4, this command 1' "$log")"
msg=$(same_as_reference "$out") || fail "the refused tasks changed the records: $msg"

slurm_down "$work/cluster"
for name in slurmctld slurmd slurmstepd munged; do
    for pid in $(pgrep -x "$name" || true); do
        # A daemon that has exited may linger a moment as a zombie: not running.
        _slurm_alive "$pid" && fail "$name (pid $pid) is still running after the teardown"
    done
done
say "passed in $((SECONDS - start)) s; nothing left running"
