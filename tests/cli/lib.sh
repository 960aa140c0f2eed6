# Shared helpers for the end-to-end tests: each script gets the tannery binary as $1.
set -u
T="$1"
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
failures=0
fail() { echo "FAIL: $*" >&2; failures=$((failures + 1)); }
# expect_exit CODE CMD...: run CMD, keep stdout in $WORK/out and stderr in $WORK/err.
expect_exit() {
  local want=$1; shift
  "$@" >"$WORK/out" 2>"$WORK/err"
  local got=$?
  [ "$got" = "$want" ] || fail "exit $got (wanted $want): $* -- $(head -c 300 "$WORK/err")"
}
expect_in() { grep -qF -- "$1" "$2" || fail "'$1' not in $2: $(head -c 400 "$2")"; }
finish() { [ "$failures" = 0 ] && echo "all checks passed" || { echo "$failures check(s) failed"; exit 1; }; }
# all_counts FILE: every count of every point of a results file, one line per point (what must
# be identical between two runs of the same settings, whatever ran them).
all_counts() {
  /usr/bin/python3 -c 'import json,sys
for p in json.load(open(sys.argv[1]))["points"]:
    print(p["parameter"], p["frames"], p["frame_errors"], p["bit_errors"], p["bits"], p["coded_bit_errors"],
          p["undetected_errors"], p["bit_error_squares"], p["iteration_histogram"], p["failed_frames"],
          p["chunks"], p["complete"], p["stop_reason"], p["failure_classes"], p["larger_failures"])' "$1"
}
# wait_for_handlers PID: returns once the process catches SIGINT and SIGTERM (bits 1 and 14 of
# SigCgt), at most 5 s. Before that a signal meets the default action whatever the tool does -
# SIGINT is even ignored by a background job of a script - and a sanitized build on a loaded
# machine can take longer to load than a test's delay.
wait_for_handlers() {
  local mask
  for _ in $(seq 500); do
    mask=$(sed -n 's/^SigCgt:\s*//p' "/proc/$1/status" 2>/dev/null)
    [ -n "$mask" ] && (( (0x$mask & 0x4002) == 0x4002 )) && return 0
    sleep 0.01
  done
}
