# The shipped protograph family (codes/README.md): each code is rebuilt from its recorded command
# and must equal the shipped file byte for byte; unless the second argument is "quick" (the
# checking build), the long codes too, and the short codes' protographs are searched again from
# their commands (the long codes' searches, 7 minutes, are left to scripts/build-family). Every
# code's girth and shortest-cycle count and its encoder's dense part (one check per parity
# system) are checked by inspect against the table.
. "$(dirname "$0")/lib.sh"
CODES="$(cd "$(dirname "$0")/../../codes" && pwd)"
BUILD="$(cd "$(dirname "$0")/../../scripts" && pwd)/build-family"
MODE="${2:-full}"
cd "$WORK"

mkdir -p short/sources
cp "$CODES"/sources/pg-*.proto short/sources/
sh "$BUILD" "$T" short codes || fail "build-family codes"
for f in "$CODES"/pg-*-n648.qc "$CODES"/pg-*-n1296.qc "$CODES"/pg-*-n1944.qc; do
  cmp -s "$f" "short/$(basename "$f")" || fail "$(basename "$f") is not what its command builds"
done
if [ "$MODE" = full ]; then
  sh "$BUILD" "$T" short long-codes || fail "build-family long-codes"
  for f in "$CODES"/pg-*-n16200.* "$CODES"/pg-*-n64800.*; do
    cmp -s "$f" "short/$(basename "$f")" || fail "$(basename "$f") is not what its command builds"
  done
  sh "$BUILD" "$T" searched protographs || fail "build-family protographs"
  for f in "$CODES"/sources/pg-[0-9]-[0-9].proto; do
    cmp -s "$f" "searched/sources/$(basename "$f")" ||
      fail "$(basename "$f") is not what its search command finds"
  done
fi
# Girth and the encoder, as codes/README.md's table states them (its "girth" column: girth and
# the count of shortest cycles).
for f in "$CODES"/pg-*.qc; do
  name=$(basename "$f" .qc)
  expect_exit 0 "$T" inspect "$f" --json
  claim=$(sed -n "s/.*| \`$name\` |[^|]*|[^|]*|[^|]*| \([0-9]*\) (\([0-9]*\)) | peeling + \([0-9]*\) dense.*/\1 \2 \3/p" "$CODES/README.md")
  [ -n "$claim" ] || fail "$name: no girth in codes/README.md"
  /usr/bin/python3 - "$WORK/out" "$claim" "$name" <<'PY' || fail "$name: girth or encoder"
import json, sys
j = json.load(open(sys.argv[1]))
girth, count, dense = map(int, sys.argv[2].split())
assert j["girth"] == girth and j["shortest_cycles"] == count, (sys.argv[3], j["girth"], j["shortest_cycles"], girth, count)
assert j["encoder"]["dense_checks"] == dense, (sys.argv[3], j["encoder"], dense)
PY
done
finish
