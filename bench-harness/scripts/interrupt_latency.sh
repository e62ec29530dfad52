#!/usr/bin/env bash
# Seconds from Ctrl-C (SIGINT) to the exit of a wend command, and its exit code.
# Usage: interrupt_latency.sh DELAY_SECONDS -- wend-args...
# Starts `target/release/wend wend-args...`, sends SIGINT after DELAY_SECONDS, and prints
# "delay D s: exit CODE after L s" (stdout and stderr of wend go to /dev/null).
set -euo pipefail
delay=$1
shift
[ "$1" = "--" ] && shift
bin=${WEND:-target/release/wend}
"$bin" "$@" >/dev/null 2>&1 &
pid=$!
sleep "$delay"
t0=$(date +%s.%N)
kill -INT "$pid"
set +e
wait "$pid"
code=$?
set -e
t1=$(date +%s.%N)
awk -v d="$delay" -v c="$code" -v a="$t0" -v b="$t1" 'BEGIN { printf "delay %s s: exit %s after %.3f s\n", d, c, b - a }'
