#!/usr/bin/env bash
# Self-test of slurm-local.sh: installs Slurm if needed, starts a one-node cluster in a
# temporary folder, and checks that
#   1. every task of --array=1-4 (and of the stepped --array=0-6:2) runs once, with the
#      SLURM_ARRAY_TASK_* variables expected;
#   2. a task killed hard (SIGKILL) while it runs ends cut short, and an array of just that
#      task, submitted at once while the killed one is still being cleaned up, completes;
#   3. after slurm_down no slurm or munge process is left.
# Usage: slurm-local-selftest.sh   (as root; prints "selftest: ..." lines and the elapsed time)
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
# shellcheck source=slurm-local.sh
. "$here/slurm-local.sh"

t_start=$(date +%s.%N)
say() { printf 'selftest: %s\n' "$*"; }
fail() {
    say "FAIL: $*"
    exit 1
}
elapsed() { awk -v a="$t_start" -v b="$(date +%s.%N)" 'BEGIN { printf "%.1f", b - a }'; }

# Daemon processes still alive anywhere on the machine (zombies waiting to be reaped by
# init are not counted: they have already exited).
live_daemons() {
    local name pid state
    for name in slurmctld slurmd slurmstepd slurmscriptd munged; do
        for pid in $(pgrep -x "$name" || true); do
            state=$(awk '{ print $3 }' "/proc/$pid/stat" 2>/dev/null || true)
            [ -n "$state" ] && [ "$state" != Z ] && ps -o pid=,args= -p "$pid" || true
        done
    done
}

work=
cleanup() {
    local rc=$?
    slurm_down || rc=1
    if [ -n "$work" ]; then
        if [ "$rc" = 0 ]; then
            rm -rf "$work"
        else
            say "kept $work for its logs (cluster/log/)"
        fi
    fi
    say "elapsed $(elapsed) s"
    if [ "$rc" = 0 ]; then say "PASS"; else say "FAILED (exit $rc)"; fi
    exit "$rc"
}
trap cleanup EXIT

say "installing"
t=$(date +%s.%N)
slurm_install
say "install step took $(awk -v a="$t" -v b="$(date +%s.%N)" 'BEGIN { printf "%.1f", b - a }') s"

work=$(mktemp -d /tmp/slurm-selftest.XXXXXX)
t=$(date +%s.%N)
slurm_up "$work/cluster"
say "slurm_up took $(awk -v a="$t" -v b="$(date +%s.%N)" 'BEGIN { printf "%.1f", b - a }') s"
mkdir -p "$work/out"

# The task: append its array variables to its own file, then tick once a second for TICKS
# seconds and write "done". A task killed midway has fewer ticks and no "done".
cat >"$work/task.sh" <<'EOF'
#!/bin/bash
out="$OUT_DIR/${SLURM_ARRAY_JOB_ID}_${SLURM_ARRAY_TASK_ID}.txt"
trap 'echo "got SIGTERM" >>"$out"; exit 143' TERM
printf 'id=%s min=%s max=%s count=%s step=%s\n' "${SLURM_ARRAY_TASK_ID-unset}" \
    "${SLURM_ARRAY_TASK_MIN-unset}" "${SLURM_ARRAY_TASK_MAX-unset}" \
    "${SLURM_ARRAY_TASK_COUNT-unset}" "${SLURM_ARRAY_TASK_STEP-unset}" >>"$out"
for i in $(seq 1 "$TICKS"); do
    sleep 1
    echo "tick $i" >>"$out"
done
echo done >>"$out"
EOF
chmod +x "$work/task.sh"

submit() { # submit TICKS ARRAY-SPEC: prints the array job id
    sbatch --parsable --array="$2" --output="$work/out/slurm-%A_%a.log" \
        --export="ALL,OUT_DIR=$work/out,TICKS=$1" "$work/task.sh"
}

# Check that task TASK of JOB wrote the variables WANT (e.g. "id=2 min=1 ...") and finished.
check_task() {
    local job=$1 task=$2 want=$3 f=$work/out/${1}_${2}.txt
    [ -f "$f" ] || fail "task ${job}_$task wrote nothing ($f missing)"
    [ "$(head -n 1 "$f")" = "$want" ] || fail "task ${job}_$task: got '$(head -n 1 "$f")', want '$want'"
    [ "$(grep -c '^id=' "$f")" = 1 ] || fail "task ${job}_$task ran more than once"
    [ "$(tail -n 1 "$f")" = "done" ] || fail "task ${job}_$task did not finish: $(tail -n 1 "$f")"
    say "task ${job}_$task: $want, finished"
}

# 1. Two arrays, a plain and a stepped one.
say "part 1: --array=1-4 and --array=0-6:2"
j1=$(submit 3 1-4)
j2=$(submit 1 0-6:2)
say "submitted job $j1 (--array=1-4) and job $j2 (--array=0-6:2)"
slurm_wait_job "$j1" 120 >/dev/null || fail "job $j1 did not complete"
slurm_wait_job "$j2" 120 >/dev/null || fail "job $j2 did not complete"
for t in 1 2 3 4; do check_task "$j1" "$t" "id=$t min=1 max=4 count=4 step=1"; done
for t in 0 2 4 6; do check_task "$j2" "$t" "id=$t min=0 max=6 count=4 step=2"; done
[ "$(find "$work/out" -name "${j1}_*.txt" | wc -l)" = 4 ] || fail "job $j1 has other than 4 task files"

# 2. Kill task 2 of an array hard while it runs, resubmit it straight away, wait for both.
say "part 2: kill task 2 hard, resubmit it"
j3=$(submit 8 1-4)
say "submitted job $j3 (--array=1-4, 8 s per task)"
slurm_wait_running "$j3" 2 60
sleep 2
slurm_kill_task "$j3" 2
j4=$(submit 3 2)
say "resubmitted task 2 as job $j4 (--array=2) at once; job $j3 is at: $(squeue -h -r -j "$j3" -o '%i:%T' | tr '\n' ' ')"
rc=0
states=$(slurm_wait_job "$j3" 120) || rc=$?
[ "$rc" = 1 ] || fail "slurm_wait_job $j3 returned $rc, want 1 (one task not completed)"
say "job $j3 final states (task state exit):"
printf '%s\n' "$states" | sed 's/^/selftest:   /'
st2=$(printf '%s\n' "$states" | awk '$1 == 2 { print $2 }')
[ "$st2" != COMPLETED ] || fail "killed task ${j3}_2 is COMPLETED"
f=$work/out/${j3}_2.txt
say "output of killed task ${j3}_2: $(tr '\n' '|' <"$f")"
grep -qx "done" "$f" && fail "killed task ${j3}_2 ran to the end"
grep -q SIGTERM "$f" && fail "killed task ${j3}_2 got SIGTERM, so it had a chance to clean up"
for t in 1 3 4; do check_task "$j3" "$t" "id=$t min=1 max=4 count=4 step=1"; done
slurm_wait_job "$j4" 120 >/dev/null || fail "resubmitted job $j4 did not complete"
check_task "$j4" 2 "id=2 min=2 max=2 count=1 step=1"

# 3. Tear down and check that nothing is left.
say "part 3: teardown"
slurm_down
slurm_down # a second call must be a harmless no-op
left=$(live_daemons)
if [ -n "$left" ]; then
    sleep 2 # give init a moment to reap daemons that have just exited
    left=$(live_daemons)
fi
[ -z "$left" ] || fail "still running after slurm_down: $left"
say "no slurm or munge process left"
