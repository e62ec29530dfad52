#!/usr/bin/env bash
# Renders a front report (report.html, written by `wend sky plan --front --out DIR`) in a
# headless Chromium and checks that it shows what the people choosing a plan need.
#
# Usage: bench-harness/scripts/check_report.sh DIR
#
# What it does:
#   1. loads file://DIR/report.html twice in headless Chromium: once to take a screenshot
#      (DIR/report.png, window 1200×2400) and once to dump the DOM after loading
#      (DIR/report.dom.html); the browser's log (stderr, console messages included) goes to
#      DIR/report.screenshot.log and DIR/report.dom.log;
#   2. checks that the screenshot was written, that the DOM holds the trade-off table and the
#      front image (<img src="front.svg">), that every file the DOM refers to (src and href:
#      front.svg, plan-K-sky-map.svg, plan-K-momentum.svg, plan-K.csv) exists beside the page
#      (SVGs must start like SVG) and none is an external address, and that the logs show no
#      error about the page: a console message (the page has no script, so any is a
#      complaint), a resource that failed to load, an uncaught error. Headless Chromium does
#      not log local images that fail to load, hence the file check. Chromium's own start-up
#      noise (no D-Bus in a container and the like) is not about the page and is ignored.
#
# Exit status: 0 when every check passes, 1 when one fails, 2 when it cannot run (no
# Chromium, no report.html, bad arguments).
#
# Needs the Debian package `chromium` (/usr/bin/chromium; another binary can be given in the
# CHROMIUM environment variable). The browser is started without network use: no sync, no
# component updates, no background networking, a throw-away profile directory.
#
# The page and the pictures are planning aids: plans are planning proposals to be confirmed
# by the operations team's validated tools.

set -u

if [ $# -ne 1 ]; then
    echo "usage: $0 DIR   (DIR holds report.html, front.svg and the plan files)" >&2
    exit 2
fi
dir=$1
if [ ! -f "$dir/report.html" ]; then
    echo "no report.html in $dir" >&2
    exit 2
fi
chromium=${CHROMIUM:-/usr/bin/chromium}
if [ ! -x "$chromium" ]; then
    echo "Chromium is not installed at $chromium." >&2
    echo "Install it (Debian, as root):  apt-get install -y chromium" >&2
    echo "or point CHROMIUM at a Chromium binary." >&2
    exit 2
fi

dir=$(cd "$dir" && pwd)
url="file://$dir/report.html"
png="$dir/report.png"
dom="$dir/report.dom.html"
shot_log="$dir/report.screenshot.log"
dom_log="$dir/report.dom.log"
profiles=()
cleanup() {
    for p in "${profiles[@]}"; do
        rm -rf -- "$p"
    done
}
trap cleanup EXIT

# Runs Chromium headless on the page with the given extra flags; stdout and stderr as the
# caller redirects them. A fresh profile each time.
run_chromium() {
    local profile
    profile=$(mktemp -d)
    profiles+=("$profile")
    timeout 120 "$chromium" \
        --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
        --disable-background-networking --disable-component-update --disable-sync \
        --user-data-dir="$profile" \
        --enable-logging=stderr --v=0 \
        "$@" "$url"
}

rm -f "$png" "$dom"
echo "checking $url with $chromium"
echo "  $("$chromium" --version 2>/dev/null || echo 'version unknown')"

run_chromium --screenshot="$png" --window-size=1200,2400 >/dev/null 2>"$shot_log"
shot_status=$?
run_chromium --dump-dom >"$dom" 2>"$dom_log"
dom_status=$?

failed=0
pass() { echo "  ok    $1"; }
fail() {
    echo "  FAIL  $1"
    failed=1
}

if [ $shot_status -eq 0 ]; then
    pass "screenshot run exited 0"
else
    fail "screenshot run exited $shot_status (log: $shot_log)"
fi
if [ $dom_status -eq 0 ]; then
    pass "DOM dump run exited 0"
else
    fail "DOM dump run exited $dom_status (log: $dom_log)"
fi
if [ -s "$png" ]; then
    pass "screenshot written: $png ($(stat -c %s "$png") bytes)"
else
    fail "no screenshot at $png"
fi
if [ -s "$dom" ]; then
    pass "DOM dumped: $dom ($(stat -c %s "$dom") bytes)"
else
    fail "empty DOM dump at $dom"
fi
if grep -q '<table' "$dom" && grep -q '<tbody' "$dom"; then
    rows=$(grep -o '<th scope="row">' "$dom" | wc -l)
    pass "the DOM holds the trade-off table ($rows plan rows)"
else
    fail "the DOM holds no trade-off table"
fi
if grep -q '<img src="front.svg"' "$dom"; then
    pass "the DOM holds the front image <img src=\"front.svg\">"
else
    fail "the DOM holds no <img src=\"front.svg\">"
fi
# Every file the page refers to (images, plan tables) is there, and nothing is fetched from
# elsewhere. Headless Chromium does not log a local image that fails to load, so the files
# are checked here; an SVG must also start like one.
refs=$(grep -o -E '(src|href)="[^"]*"' "$dom" | sed -E 's/^(src|href)="(.*)"$/\2/' | sort -u)
n_refs=0
missing=""
external=""
for ref in $refs; do
    case $ref in
    '#'*) continue ;;
    *://* | //*) external="$external $ref"; continue ;;
    esac
    n_refs=$((n_refs + 1))
    file="$dir/${ref%%#*}"
    if [ ! -s "$file" ]; then
        missing="$missing $ref"
    elif [ "${file%.svg}" != "$file" ] && ! head -c 200 "$file" | grep -q -E '^(<svg|<\?xml)'; then
        missing="$missing $ref(not-svg)"
    fi
done
images=$(grep -o '<img src="[^"]*"' "$dom" | wc -l)
if [ -z "$missing" ]; then
    pass "all $n_refs local files the page refers to exist ($images images; SVGs look like SVG)"
else
    fail "files the page refers to are missing or broken:$missing"
fi
if [ -z "$external" ]; then
    pass "no external address in src or href"
else
    fail "the page refers to external addresses:$external"
fi

# Errors about the page: console messages, failed loads, uncaught errors, refused loads.
# The page has no script, so any console message is the browser complaining about the page.
page_errors=$(cat "$shot_log" "$dom_log" |
    grep -E -i 'Failed to load resource|Uncaught|net::ERR_FILE|Not allowed to load|Refused to|:CONSOLE' |
    sort -u)
if [ -z "$page_errors" ]; then
    pass "no page errors in the browser logs (console messages, failed loads, uncaught errors)"
else
    fail "the browser logs show errors about the page:"
    printf '%s\n' "$page_errors" | sed 's/^/          /'
fi

if [ $failed -eq 0 ]; then
    echo "report check passed: $dir/report.html"
else
    echo "report check FAILED: $dir/report.html"
fi
exit $failed
