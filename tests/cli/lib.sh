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
