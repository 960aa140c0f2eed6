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
