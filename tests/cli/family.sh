# The shipped protograph family (codes/README.md): each short code is rebuilt from its recorded
# command and must equal the shipped file byte for byte; the protographs are searched again from
# theirs (unless the second argument is "quick"); the long codes, whose two-step lifts take
# minutes, are checked by the SHA-256 recorded in codes/README.md. Every code's girth and its
# encoder's dense part (at most one check per parity system) are checked by inspect.
. "$(dirname "$0")/lib.sh"
CODES="$(cd "$(dirname "$0")/../../codes" && pwd)"
BUILD="$(cd "$(dirname "$0")/../../scripts" && pwd)/build-family"
MODE="${2:-full}"
cd "$WORK"

mkdir -p short/sources
cp "$CODES"/sources/pg-*.proto short/sources/
sh "$BUILD" "$T" short short || fail "build-family short"
for f in "$CODES"/pg-*-n648.qc "$CODES"/pg-*-n1296.qc "$CODES"/pg-*-n1944.qc; do
  cmp -s "$f" "short/$(basename "$f")" || fail "$(basename "$f") is not what its command builds"
done
if [ "$MODE" = full ]; then
  sh "$BUILD" "$T" searched protographs || fail "build-family protographs"
  for f in "$CODES"/sources/pg-*.proto; do
    cmp -s "$f" "searched/sources/$(basename "$f")" ||
      fail "$(basename "$f") is not what its search command finds"
  done
fi
for name in pg-1-2-n16200 pg-1-2-n64800 pg-3-4-n16200 pg-3-4-n64800; do
  recorded=$(sed -n "s/.*| \`$name\` .*sha256 \`\([0-9a-f]*\)\`.*/\1/p" "$CODES/README.md")
  [ -n "$recorded" ] || fail "$name: no SHA-256 in codes/README.md"
  actual=$(sha256sum "$CODES/$name.qc" | cut -d' ' -f1)
  [ "$recorded" = "$actual" ] || fail "$name: SHA-256 $actual, codes/README.md records $recorded"
done
# Girth and the encoder, as codes/README.md's table states them (its "girth" column: girth and
# the count of shortest cycles).
for f in "$CODES"/pg-*.qc; do
  name=$(basename "$f" .qc)
  expect_exit 0 "$T" inspect "$f" --json
  claim=$(sed -n "s/.*| \`$name\` |[^|]*|[^|]*|[^|]*| \([0-9]*\) (\([0-9]*\)) |.*/\1 \2/p" "$CODES/README.md")
  [ -n "$claim" ] || fail "$name: no girth in codes/README.md"
  /usr/bin/python3 - "$WORK/out" "$claim" "$name" <<'PY' || fail "$name: girth or encoder"
import json, sys
j = json.load(open(sys.argv[1]))
girth, count = map(int, sys.argv[2].split())
assert j["girth"] == girth and j["shortest_cycles"] == count, (sys.argv[3], j["girth"], j["shortest_cycles"], girth, count)
assert j["encoder"]["dense_checks"] <= 10, (sys.argv[3], j["encoder"])
PY
done
finish
