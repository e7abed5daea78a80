#!/usr/bin/env bash
# What a scheduler (cron, a nightly CI job) calls to gate the fictional credit union's suite.
#
#   examples/nightly.sh            # from anywhere; works in the repository root
#
# 1. The first time, no baseline exists: it saves one (review it, then commit it where
#    BASELINE points, so later nights compare against it).
# 2. Every night: runs the suite (stored runs with the same inputs are reused), compares with
#    the baseline, appends the verdicts to the store's gate history, and keeps a JUnit XML file
#    and a Markdown summary in a folder named after the time.
# 3. Exits with the gate's status: 0 pass, 1 regression, 2 bad input (130 when interrupted).
#
# Settings come from the environment, with these defaults:
set -u
cd "$(dirname "$0")/.."
HEEDFUL=${HEEDFUL:-.venv/bin/heedful}
SUITE=${SUITE:-suites/nightly.toml}
BASELINE=${BASELINE:-baselines/nightly.json}
STORE=${STORE:-runs/nightly.db}
REPORTS=${REPORTS:-runs/gate-reports}
JOBS=${JOBS:-1}

stamp=$(date -u +%Y-%m-%dT%H%M%SZ)
out="$REPORTS/$stamp"
mkdir -p "$out"

if [ ! -f "$BASELINE" ]; then
    echo "nightly: no baseline at $BASELINE; saving one now (review and commit it)"
    "$HEEDFUL" baseline "$SUITE" --save "$BASELINE" --store "$STORE" --jobs "$JOBS" || exit $?
fi

"$HEEDFUL" gate "$SUITE" --baseline "$BASELINE" --store "$STORE" --jobs "$JOBS" \
    --junit "$out/gate.xml" --markdown "$out/gate.md"
status=$?

case $status in
    0) verdict="passed" ;;
    1) verdict="found a regression" ;;
    2) verdict="stopped on bad input" ;;
    *) verdict="ended with status $status" ;;
esac
echo "nightly: gate $verdict; JUnit XML in $out/gate.xml, summary in $out/gate.md"
"$HEEDFUL" history "$SUITE" --store "$STORE" || true
exit $status
