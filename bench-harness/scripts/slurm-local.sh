# shellcheck shell=bash
# A one-machine Slurm cluster on localhost, for running job arrays in tests.
# Source this file; it only defines functions and leaves the caller's shell options alone.
#
#   slurm_install                          install the Debian packages that are missing
#   slurm_up DIR                           write a config into DIR and start munged, slurmctld
#                                          and slurmd; exports SLURM_CONF and SLURM_LOCAL_DIR
#   slurm_down [DIR]                       cancel every job, stop the daemons, leave nothing
#                                          running (safe to call twice, and from an EXIT trap)
#   slurm_wait_job JOBID [TIMEOUT]         wait until no task of JOBID is queued, then print
#                                          each task's final state (see slurm_task_states);
#                                          0 if all COMPLETED, 1 if not, 2 on timeout/error
#   slurm_task_states JOBID                print "TASK STATE EXITCODE" per task on stdout
#                                          (TASK is "-" for a job that is not an array)
#   slurm_wait_running JOBID TASKID [TIMEOUT]  wait until that array task runs
#   slurm_kill_task JOBID TASKID [TIMEOUT]     SIGKILL one running array task, no cleanup
#
# Every state, spool, log, pid and socket file lives under DIR; slurm_up changes nothing in
# /etc (the packages' own files there are left as installed, and unused).
# The node is called "localhost" and has the machine's cores and memory.
# Knobs (environment): SLURM_LOCAL_PORT (slurmctld port, default 6817; slurmd uses the next
# one), SLURM_LOCAL_CPUS (default: nproc), SLURM_LOCAL_UP_TIMEOUT (seconds, default 60).
# Progress goes to stderr as "slurm-local: ..." lines.

_slurm_log() { printf 'slurm-local: %s\n' "$*" >&2; }

_slurm_err() { printf 'slurm-local: error: %s\n' "$*" >&2; }

_slurm_now() { date +%s.%N; }

_slurm_since() { awk -v a="$1" -v b="$(_slurm_now)" 'BEGIN { printf "%.1f", b - a }'; }

# Print the last lines of every daemon log under DIR, so a failure explains itself.
_slurm_show_logs() {
    local dir=$1 f
    for f in "$dir"/log/munged.log "$dir"/log/slurmctld.log "$dir"/log/slurmd.log "$dir"/log/*.out; do
        [ -s "$f" ] || continue
        printf 'slurm-local: ---- last lines of %s ----\n' "$f" >&2
        tail -n 25 "$f" >&2
    done
}

# The pid in a pid file, if the file holds one and that process is alive (zombies count as dead).
_slurm_pid_from() {
    local f=$1 pid
    [ -r "$f" ] || return 1
    read -r pid 2>/dev/null <"$f" || return 1
    case $pid in '' | *[!0-9]*) return 1 ;; esac
    _slurm_alive "$pid" || return 1
    printf '%s\n' "$pid"
}

_slurm_alive() {
    local state
    kill -0 "$1" 2>/dev/null || return 1
    state=$(awk '/^State:/ { print $2 }' "/proc/$1/status" 2>/dev/null)
    [ "$state" != Z ]
}

# Send SIGTERM to PID, wait up to TIMEOUT seconds for it to exit, then SIGKILL it.
_slurm_stop_pid() {
    local name=$1 pid=$2 timeout=$3 t0
    _slurm_alive "$pid" || return 0
    kill -TERM "$pid" 2>/dev/null
    t0=$SECONDS
    while _slurm_alive "$pid"; do
        if [ $((SECONDS - t0)) -ge "$timeout" ]; then
            _slurm_log "$name (pid $pid) ignored SIGTERM for ${timeout}s; sending SIGKILL"
            kill -KILL "$pid" 2>/dev/null
            sleep 0.5
            break
        fi
        sleep 0.2
    done
    if _slurm_alive "$pid"; then
        _slurm_err "$name (pid $pid) is still alive after SIGKILL"
        return 1
    fi
    return 0
}

# Pids of Slurm or munge daemons that belong to the cluster in DIR: their command line, their
# working directory (slurmd and the slurmstepd it forks work in DIR/log) or an open file
# points into DIR.
_slurm_dir_pids() {
    local dir=$1 p pid comm hit fd
    for p in /proc/[0-9]*; do
        pid=${p#/proc/}
        read -r comm 2>/dev/null <"$p/comm" || continue
        case $comm in slurmctld | slurmd | slurmstepd | slurmscriptd | munged) ;; *) continue ;; esac
        hit=0
        case $(tr '\0' ' ' 2>/dev/null <"$p/cmdline") in *"$dir/"*) hit=1 ;; esac
        case $(readlink "$p/cwd" 2>/dev/null) in "$dir" | "$dir"/*) hit=1 ;; esac
        if [ $hit = 0 ]; then
            for fd in "$p"/fd/*; do
                case $(readlink "$fd" 2>/dev/null) in "$dir"/*) hit=1 && break ;; esac
            done
        fi
        [ $hit = 1 ] && _slurm_alive "$pid" && printf '%s\n' "$pid"
    done
    return 0
}

# True if some process listens on TCP port PORT (read from /proc, no extra tools needed).
_slurm_port_busy() {
    local hex
    hex=$(printf '%04X' "$1")
    awk -v h=":$hex" 'FNR > 1 && $4 == "0A" && substr($2, length($2) - 4) == h { found = 1 }
        END { exit !found }' /proc/net/tcp /proc/net/tcp6 2>/dev/null
}

# Run a daemon: stdin from /dev/null, output appended to LOG, and none of the caller's other
# open files (munged would keep them open for its whole life, so a pipe the caller reads
# would never see its end). Returns the command's exit status.
_slurm_spawn() {
    local log=$1
    shift
    (
        for fd in /proc/self/fd/*; do
            fd=${fd##*/}
            case $fd in 0 | 1 | 2 | *[!0-9]*) ;; *) eval "exec $fd>&-" 2>/dev/null ;; esac
        done
        exec "$@" </dev/null >>"$log" 2>&1
    )
}

# Sorted pids of every munged, slurmctld and slurmd on the machine.
_slurm_daemon_pids() {
    local name
    for name in munged slurmctld slurmd; do pgrep -x "$name"; done | sort
    return 0
}

slurm_install() {
    local - pkgs=() missing=() p t0 before after newpids pid aptlog updated
    set +eu +o pipefail
    t0=$(_slurm_now)
    # A command from each package, and the package that ships it.
    for p in slurmctld:slurmctld slurmd:slurmd sbatch:slurm-client munged:munge; do
        command -v "${p%%:*}" >/dev/null 2>&1 || missing+=("${p#*:}")
    done
    if [ ${#missing[@]} -eq 0 ]; then
        _slurm_log "slurmctld, slurmd, slurm-client and munge already installed"
        return 0
    fi
    pkgs=("${missing[@]}")
    _slurm_log "installing ${pkgs[*]}"
    # The packages' install scripts may try to start their daemons (where no policy forbids
    # it); remember what ran before so that anything started by the install can be stopped.
    before=$(_slurm_daemon_pids)
    # Refresh the package lists only when apt does not know the packages yet, or when the
    # install fails with the lists as they are (stale lists name files no longer served).
    updated=0
    if ! apt-cache show "${pkgs[@]}" >/dev/null 2>&1; then
        _slurm_log "apt-get update"
        apt-get update -qq || { _slurm_err "apt-get update failed"; return 1; }
        updated=1
    fi
    # apt's own output goes to a log file, shown only if the install fails.
    aptlog=$(mktemp "${TMPDIR:-/tmp}/slurm-install.XXXXXX") || return 1
    while ! DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends \
        "${pkgs[@]}" >"$aptlog" 2>&1; do
        if [ $updated = 0 ]; then
            _slurm_log "install failed; apt-get update and retry"
            apt-get update -qq || { _slurm_err "apt-get update failed"; rm -f "$aptlog"; return 1; }
            updated=1
            continue
        fi
        tail -n 30 "$aptlog" >&2
        rm -f "$aptlog"
        _slurm_err "apt-get install ${pkgs[*]} failed"
        return 1
    done
    rm -f "$aptlog"
    after=$(_slurm_daemon_pids)
    newpids=$(comm -13 <(printf '%s\n' "$before") <(printf '%s\n' "$after"))
    for pid in $newpids; do
        _slurm_log "stopping $(cat "/proc/$pid/comm" 2>/dev/null) (pid $pid) started by the package install"
        _slurm_stop_pid "installed daemon" "$pid" 10
    done
    for p in slurmctld slurmd sbatch squeue scancel scontrol munged munge; do
        command -v "$p" >/dev/null 2>&1 || { _slurm_err "$p missing after install"; return 1; }
    done
    _slurm_log "installed ${pkgs[*]} in $(_slurm_since "$t0")s"
}

slurm_up() {
    local - dir=${1:-} t0 cpus hwcpus mem port dport timeout key sock p state reason force
    set +eu +o pipefail
    t0=$(_slurm_now)
    if [ -z "$dir" ]; then
        _slurm_err "usage: slurm_up DIR"
        return 1
    fi
    for p in slurmctld slurmd sbatch squeue scontrol munged munge unmunge; do
        command -v "$p" >/dev/null 2>&1 || { _slurm_err "$p not found; run slurm_install first"; return 1; }
    done
    mkdir -p "$dir" || { _slurm_err "cannot create $dir"; return 1; }
    dir=$(cd "$dir" && pwd -P) || return 1
    case $dir in *[[:space:]]*)
        _slurm_err "DIR must not contain whitespace (slurm.conf cannot quote it): $dir"
        return 1 ;;
    esac
    if [ -n "${SLURM_LOCAL_DIR:-}" ] && _slurm_pid_from "$SLURM_LOCAL_DIR/slurmctld.pid" >/dev/null; then
        _slurm_err "a cluster is already up in $SLURM_LOCAL_DIR; call slurm_down first"
        return 1
    fi
    if [ -n "$(_slurm_dir_pids "$dir")" ]; then
        _slurm_err "daemons of an earlier cluster in $dir are still running; call slurm_down $dir first"
        return 1
    fi
    port=${SLURM_LOCAL_PORT:-6817}
    dport=$((port + 1))
    timeout=${SLURM_LOCAL_UP_TIMEOUT:-60}
    for p in "$port" "$dport"; do
        if _slurm_port_busy "$p"; then
            _slurm_err "TCP port $p is already in use (another Slurm? see 'pgrep -a slurm'); set SLURM_LOCAL_PORT to another port"
            return 1
        fi
    done

    # Node size: the cores nproc reports, never more than slurmd itself detects (a node
    # configured larger than the hardware is drained), and the memory slurmd detects.
    hwcpus=$(slurmd -C 2>/dev/null | sed -n 's/.*CPUs=\([0-9]*\).*/\1/p' | head -n 1)
    mem=$(slurmd -C 2>/dev/null | sed -n 's/.*RealMemory=\([0-9]*\).*/\1/p' | head -n 1)
    cpus=${SLURM_LOCAL_CPUS:-$(nproc)}
    [ -n "$hwcpus" ] && [ "$cpus" -gt "$hwcpus" ] && cpus=$hwcpus
    [ -n "$mem" ] || mem=$(awk '/^MemTotal:/ { print int($2 / 1024) }' /proc/meminfo)

    # munged insists that every directory above its socket be searchable by all users, and
    # that its own directories be writable by root only.
    chmod go+x "$dir" || return 1
    mkdir -p "$dir/munge" "$dir/state" "$dir/spool" "$dir/log" || return 1
    chmod 0755 "$dir/munge" "$dir/spool" "$dir/log" && chmod 0700 "$dir/state" || return 1
    key=$dir/munge/munge.key
    sock=$dir/munge/munge.sock
    if [ ! -s "$key" ]; then
        (umask 077 && head -c 1024 /dev/urandom >"$key") || { _slurm_err "cannot write $key"; return 1; }
    fi
    chmod 0400 "$key"
    : >"$dir/plugstack.conf"

    # The configuration. Plugins are chosen to work without cgroups or systemd:
    # - proctrack/pgid: a task's processes are its process group, so when a task's shell is
    #   killed its children are still found and killed (linuxproc loses re-parented orphans);
    # - task/none, jobacct_gather/none, accounting_storage/none: no cgroups, no database;
    # - jobcomp/filetxt: one line per finished job or array task, a record of final states
    #   that outlives the controller's memory of the job;
    # - select/cons_tres with CR_Core: each task takes one core, so tasks share the node.
    # JobRequeue=0: a failed task is never rerun behind the caller's back.
    # KillWait=5: cancelled tasks get SIGKILL 5 s after SIGTERM, so teardown is quick.
    # MinJobAge=600: finished tasks stay visible to scontrol for 10 minutes (then their
    # final states are still in the completion file).
    # MaxArraySize=100001 allows task ids 0..100000; every task counts towards MaxJobCount,
    # finished ones too until MinJobAge has passed, hence MaxJobCount well above it (much
    # higher and slurmctld warns that its saved state could outgrow its buffer).
    cat >"$dir/slurm.conf" <<EOF
ClusterName=local
SlurmctldHost=localhost
SlurmctldPort=$port
SlurmdPort=$dport
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$sock
StateSaveLocation=$dir/state
SlurmdSpoolDir=$dir/spool
SlurmctldPidFile=$dir/slurmctld.pid
SlurmdPidFile=$dir/slurmd.pid
SlurmctldLogFile=$dir/log/slurmctld.log
SlurmdLogFile=$dir/log/slurmd.log
SlurmctldDebug=info
SlurmdDebug=info
PlugStackConfig=$dir/plugstack.conf
MailProg=/bin/true
ProctrackType=proctrack/pgid
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/filetxt
JobCompLoc=$dir/log/jobcomp.txt
MpiDefault=none
SwitchType=switch/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
ReturnToService=2
JobRequeue=0
KillWait=5
MinJobAge=600
MaxArraySize=100001
MaxJobCount=150000
NodeName=localhost NodeAddr=127.0.0.1 CPUs=$cpus RealMemory=$mem State=UNKNOWN
PartitionName=local Nodes=localhost Default=YES MaxTime=INFINITE State=UP
EOF
    export SLURM_CONF=$dir/slurm.conf
    export SLURM_LOCAL_DIR=$dir
    _slurm_log "config $SLURM_CONF: node localhost with $cpus CPUs and ${mem} MB, ports $port/$dport"

    # munged: its own key, socket, pid, seed and log file, all in DIR. It forks and its
    # parent exits only once the socket is ready (or with an error). munged refuses a socket
    # that some user could not reach because a directory above it is not searchable by all
    # (mktemp -d makes 0700 folders); --force turns that refusal into a warning, which is
    # harmless here since the daemons, the clients and the jobs all run as root.
    force=()
    p=$dir
    while [ -n "$p" ] && [ "$p" != / ]; do
        p=$(dirname "$p")
        if [ "$(( 0$(stat -c %a "$p") & 1 ))" = 0 ]; then
            _slurm_log "$p is not searchable by all users; starting munged with --force"
            force=(--force)
            break
        fi
    done
    if ! _slurm_spawn "$dir/log/munged.out" munged "${force[@]}" --socket="$sock" --key-file="$key" \
        --pid-file="$dir/munge/munged.pid" --seed-file="$dir/munge/munged.seed" \
        --log-file="$dir/log/munged.log"; then
        _slurm_err "munged failed to start; see $dir/log/munged.log"
        _slurm_show_logs "$dir"
        slurm_down "$dir"
        return 1
    fi
    if ! munge -n -S "$sock" 2>/dev/null | unmunge -S "$sock" >/dev/null 2>&1; then
        _slurm_err "munged does not answer on $sock; see $dir/log/munged.log"
        _slurm_show_logs "$dir"
        slurm_down "$dir"
        return 1
    fi
    _slurm_log "munged up (pid $(_slurm_pid_from "$dir/munge/munged.pid"))"

    # slurmctld, starting from an empty state (-c); it forks into the background.
    _slurm_spawn "$dir/log/slurmctld.out" slurmctld -c
    # slurmd, told its node name since the host's own name is not "localhost".
    _slurm_spawn "$dir/log/slurmd.out" slurmd -N localhost

    # Wait until the controller answers and the node has registered as idle.
    while :; do
        if ! _slurm_pid_from "$dir/slurmctld.pid" >/dev/null && [ "$(_slurm_since "$t0" | cut -d. -f1)" -ge 3 ]; then
            _slurm_err "slurmctld is not running; see $dir/log/slurmctld.log"
            _slurm_show_logs "$dir"
            slurm_down "$dir"
            return 1
        fi
        if ! _slurm_pid_from "$dir/slurmd.pid" >/dev/null && [ "$(_slurm_since "$t0" | cut -d. -f1)" -ge 3 ]; then
            _slurm_err "slurmd is not running; see $dir/log/slurmd.log"
            _slurm_show_logs "$dir"
            slurm_down "$dir"
            return 1
        fi
        state=$(sinfo -h -n localhost -o %T 2>/dev/null | head -n 1)
        case $state in
        idle) break ;;
        *drain* | *down* | *fail*)
            reason=$(scontrol show node localhost 2>/dev/null | sed -n 's/.*Reason=//p')
            _slurm_err "node localhost is $state (${reason:-no reason given}); see $dir/log/slurmd.log and $dir/log/slurmctld.log"
            _slurm_show_logs "$dir"
            slurm_down "$dir"
            return 1 ;;
        esac
        if [ "$(_slurm_since "$t0" | cut -d. -f1)" -ge "$timeout" ]; then
            _slurm_err "node localhost not idle after ${timeout}s (state '${state:-unknown}'); see $dir/log/slurmctld.log and $dir/log/slurmd.log"
            _slurm_show_logs "$dir"
            slurm_down "$dir"
            return 1
        fi
        sleep 0.2
    done
    _slurm_log "cluster up in $dir after $(_slurm_since "$t0")s (slurmctld pid $(_slurm_pid_from "$dir/slurmctld.pid"), slurmd pid $(_slurm_pid_from "$dir/slurmd.pid"))"
}

slurm_down() {
    local - dir=${1:-${SLURM_LOCAL_DIR:-}} conf t0 joblist pids left rc=0 name pid
    set +eu +o pipefail
    if [ -z "$dir" ]; then
        _slurm_log "slurm_down: no cluster to stop"
        return 0
    fi
    if [ ! -d "$dir" ]; then
        _slurm_log "slurm_down: $dir is gone; nothing to stop"
        return 0
    fi
    dir=$(cd "$dir" && pwd -P)
    conf=$dir/slurm.conf
    t0=$(_slurm_now)
    if [ -z "$(_slurm_dir_pids "$dir")" ]; then
        _slurm_log "slurm_down: nothing running for $dir"
        [ "${SLURM_LOCAL_DIR:-}" = "$dir" ] && unset SLURM_LOCAL_DIR
        [ "${SLURM_CONF:-}" = "$conf" ] && unset SLURM_CONF
        return 0
    fi

    # Cancel every job while the controller and slurmd still run, and wait for the tasks
    # to end (SIGTERM, then SIGKILL after KillWait).
    if _slurm_pid_from "$dir/slurmctld.pid" >/dev/null; then
        joblist=$(SLURM_CONF=$conf timeout 10 squeue -h -o %F 2>/dev/null | sort -u | tr '\n' ' ')
        if [ -n "${joblist// /}" ]; then
            _slurm_log "cancelling jobs ${joblist% }"
            # shellcheck disable=SC2086
            SLURM_CONF=$conf timeout 10 scancel $joblist 2>/dev/null
            while [ -n "$(SLURM_CONF=$conf timeout 10 squeue -h -o %i 2>/dev/null)" ]; do
                if [ "$(_slurm_since "$t0" | cut -d. -f1)" -ge 30 ]; then
                    _slurm_log "jobs still listed after 30s; killing their processes"
                    pids=$(SLURM_CONF=$conf timeout 10 scontrol listpids 2>/dev/null | awk 'NR > 1 && $1 ~ /^[0-9]+$/ { print $1 }')
                    # shellcheck disable=SC2086
                    [ -n "$pids" ] && kill -KILL $pids 2>/dev/null
                    break
                fi
                sleep 0.5
            done
        fi
    fi

    # Stop the daemons: slurmd first (no new tasks), then the controller, then munged.
    for name in slurmd slurmctld munged; do
        case $name in munged) pid=$(_slurm_pid_from "$dir/munge/munged.pid") ;; *) pid=$(_slurm_pid_from "$dir/$name.pid") ;; esac
        if [ -n "$pid" ]; then
            _slurm_log "stopping $name (pid $pid)"
            _slurm_stop_pid "$name" "$pid" 15 || rc=1
        fi
    done

    # Anything of this cluster still alive (a slurmstepd whose task would not die, a
    # daemon whose pid file was lost) gets SIGKILL.
    pids=$(_slurm_dir_pids "$dir")
    if [ -n "$pids" ]; then
        for pid in $pids; do
            _slurm_log "killing leftover $(cat "/proc/$pid/comm" 2>/dev/null) (pid $pid)"
            kill -KILL "$pid" 2>/dev/null
        done
        sleep 0.5
    fi
    left=$(_slurm_dir_pids "$dir")
    if [ -n "$left" ]; then
        _slurm_err "processes of the cluster in $dir survived SIGKILL: ${left//$'\n'/ }"
        rc=1
    fi
    [ "${SLURM_LOCAL_DIR:-}" = "$dir" ] && unset SLURM_LOCAL_DIR
    [ "${SLURM_CONF:-}" = "$conf" ] && unset SLURM_CONF
    if [ $rc = 0 ]; then
        _slurm_log "cluster in $dir stopped after $(_slurm_since "$t0")s"
    else
        _slurm_err "cluster in $dir not stopped cleanly; logs are in $dir/log"
    fi
    return $rc
}

# Fail (naming the log) if the controller of the current cluster is gone.
_slurm_check_ctld() {
    local dir=${SLURM_LOCAL_DIR:-}
    [ -n "$dir" ] || { _slurm_err "no cluster is up (SLURM_LOCAL_DIR unset); call slurm_up first"; return 1; }
    if ! _slurm_pid_from "$dir/slurmctld.pid" >/dev/null; then
        _slurm_err "slurmctld is not running; see $dir/log/slurmctld.log"
        _slurm_show_logs "$dir"
        return 1
    fi
}

slurm_task_states() {
    local - jid=${1:-} base task out dir rc=0 tid st ec
    set +eu +o pipefail
    [ -n "$jid" ] || { _slurm_err "usage: slurm_task_states JOBID"; return 2; }
    dir=${SLURM_LOCAL_DIR:-}
    # The controller's records: one line per task ("ArrayTaskId=3-5" for tasks never split off).
    out=$(scontrol show job -o "$jid" 2>/dev/null | awk '
        { t = "-"; s = "?"; e = "?"
          for (i = 1; i <= NF; i++) {
              if ($i ~ /^ArrayTaskId=/) t = substr($i, 13)
              else if ($i ~ /^JobState=/) s = substr($i, 10)
              else if ($i ~ /^ExitCode=/) e = substr($i, 10)
          }
          print t, s, e }')
    # Past the controller's memory, the job completion file has the final states.
    if [ -z "$out" ] && [ -n "$dir" ] && [ -r "$dir/log/jobcomp.txt" ]; then
        base=${jid%%_*}
        task=
        case $jid in *_*) task=${jid#*_} ;; esac
        out=$(awk -v j="$base" -v want="$task" '
            { id = ""; aj = ""; t = "-"; s = "?"; e = "?"
              for (i = 1; i <= NF; i++) {
                  if ($i ~ /^JobId=/) id = substr($i, 7)
                  else if ($i ~ /^ArrayJobId=/) aj = substr($i, 12)
                  else if ($i ~ /^ArrayTaskId=/) t = substr($i, 13)
                  else if ($i ~ /^JobState=/) s = substr($i, 10)
                  else if ($i ~ /^ExitCode=/) e = substr($i, 10)
              }
              if ((aj == j || (aj == "" && id == j)) && (want == "" || t == want)) last[t] = t " " s " " e
            }
            END { for (k in last) print last[k] }' "$dir/log/jobcomp.txt")
    fi
    if [ -z "$out" ]; then
        _slurm_err "job $jid is unknown to slurmctld and to the completion log"
        return 2
    fi
    out=$(printf '%s\n' "$out" | sort -n -k1,1)
    while read -r tid st ec; do
        _slurm_log "job $jid task $tid: $st (exit $ec)"
        [ "$st" = COMPLETED ] || rc=1
    done <<<"$out"
    printf '%s\n' "$out"
    return $rc
}

slurm_wait_job() {
    local - jid=${1:-} timeout=${2:-3600} t0 out rc summary last=
    set +eu +o pipefail
    [ -n "$jid" ] || { _slurm_err "usage: slurm_wait_job JOBID [TIMEOUT]"; return 2; }
    t0=$SECONDS
    while :; do
        _slurm_check_ctld || return 2
        out=$(squeue -h -r -j "$jid" -o %T 2>&1)
        rc=$?
        if [ $rc != 0 ]; then
            case $out in
            *"Invalid job id"*) out= ;; # finished long enough ago to be forgotten
            *) _slurm_log "squeue failed ($out); retrying" ;;
            esac
        fi
        if [ $rc = 0 ] || [ -z "$out" ]; then
            [ -z "$out" ] && break
            summary=$(printf '%s\n' "$out" | sort | uniq -c | awk '{ printf "%s%s %s", (NR > 1 ? ", " : ""), $1, tolower($2) }')
            if [ "$summary" != "$last" ]; then
                _slurm_log "job $jid: $summary"
                last=$summary
            fi
        fi
        if [ $((SECONDS - t0)) -ge "$timeout" ]; then
            _slurm_err "job $jid still queued after ${timeout}s (${last:-unknown}); see ${SLURM_LOCAL_DIR:-?}/log/slurmctld.log and slurmd.log"
            squeue -r -j "$jid" >&2 2>/dev/null
            return 2
        fi
        sleep 1
    done
    _slurm_log "job $jid: no task pending or running after $((SECONDS - t0))s"
    slurm_task_states "$jid"
}

# "STATE RAWJOBID" of one array task, empty if it is no longer queued.
_slurm_task_line() {
    squeue -h -r -j "$1" -o '%T %A' 2>/dev/null | head -n 1
}

# Pids of the processes of the job with raw id RAW (as the local slurmd tracks them).
_slurm_task_pids() {
    scontrol listpids "$1" 2>/dev/null | awk 'NR > 1 && $1 ~ /^[0-9]+$/ { print $1 }' | tr '\n' ' '
}

slurm_wait_running() {
    local - jid=${1:-} tid=${2:-} timeout=${3:-120} id t0 line st raw pids
    set +eu +o pipefail
    if [ -z "$jid" ] || [ -z "$tid" ]; then
        _slurm_err "usage: slurm_wait_running JOBID TASKID [TIMEOUT]"
        return 1
    fi
    id=${jid}_$tid
    t0=$SECONDS
    while :; do
        _slurm_check_ctld || return 1
        line=$(_slurm_task_line "$id")
        if [ -z "$line" ]; then
            _slurm_err "task $id is not queued (already finished, or never existed)"
            slurm_task_states "$id" >/dev/null
            return 1
        fi
        read -r st raw <<<"$line"
        # RUNNING in the controller is not enough: the task's shell must exist on the node,
        # or a signal sent now could arrive before it starts and be lost.
        if [ "$st" = RUNNING ]; then
            pids=$(_slurm_task_pids "$raw")
            if [ -n "${pids// /}" ]; then
                _slurm_log "task $id is running (job $raw, pids ${pids% })"
                return 0
            fi
        fi
        if [ $((SECONDS - t0)) -ge "$timeout" ]; then
            _slurm_err "task $id not running after ${timeout}s (state $st); see ${SLURM_LOCAL_DIR:-?}/log/slurmctld.log"
            return 1
        fi
        sleep 0.2
    done
}

slurm_kill_task() {
    local - jid=${1:-} tid=${2:-} timeout=${3:-30} id t0 line st raw pids sent left pid
    set +eu +o pipefail
    if [ -z "$jid" ] || [ -z "$tid" ]; then
        _slurm_err "usage: slurm_kill_task JOBID TASKID [TIMEOUT]"
        return 1
    fi
    id=${jid}_$tid
    _slurm_check_ctld || return 1
    line=$(_slurm_task_line "$id")
    read -r st raw <<<"$line"
    if [ "$st" != RUNNING ]; then
        _slurm_err "task $id is not running (state ${st:-gone}); call slurm_wait_running first"
        return 1
    fi
    pids=$(_slurm_task_pids "$raw")
    # SIGKILL straight to the task's batch shell, with no SIGTERM first. (A plain scancel,
    # and even "scancel --signal=KILL --full", goes through the cancel path: SIGTERM, then
    # SIGKILL after KillWait, which lets the task clean up.) The shell's children share its
    # process group, which slurmstepd kills as soon as the shell is dead.
    _slurm_log "killing task $id (job $raw, pids ${pids% }): scancel --batch --signal=KILL $id"
    t0=$SECONDS
    sent=$((SECONDS - 10)) # so that the first pass sends at once
    while :; do
        line=$(_slurm_task_line "$id")
        read -r st raw <<<"$line"
        [ "$st" = RUNNING ] || break
        # The task stays RUNNING for about 3 s while slurmstepd reaps its process group.
        # Send again every 10 s, in case the first signal was lost anyway.
        if [ $((SECONDS - sent)) -ge 10 ]; then
            scancel --batch --signal=KILL "$id" || { _slurm_err "scancel failed for $id"; return 1; }
            sent=$SECONDS
        fi
        if [ $((SECONDS - t0)) -ge "$timeout" ]; then
            _slurm_err "task $id still running ${timeout}s after SIGKILL; see ${SLURM_LOCAL_DIR:-?}/log/slurmd.log"
            return 1
        fi
        sleep 0.2
    done
    # Every process the task had must be gone; kill any straggler and say so.
    while :; do
        left=
        for pid in $pids; do _slurm_alive "$pid" && left="$left $pid"; done
        [ -z "$left" ] && break
        if [ $((SECONDS - t0)) -ge "$timeout" ]; then
            _slurm_log "processes of task $id outlived it:$left; sending SIGKILL"
            # shellcheck disable=SC2086
            kill -KILL $left 2>/dev/null
            break
        fi
        sleep 0.2
    done
    _slurm_log "task $id killed after $((SECONDS - t0))s; now ${st:-no longer queued}"
}
