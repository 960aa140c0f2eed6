# tannery inspect prints the right figures; convert round-trips through every format.
. "$(dirname "$0")/lib.sh"
CODES="$2"

expect_exit 0 "$T" inspect hamming-7-4
expect_in "dimension k    4" "$WORK/out"
expect_in "min distance   3" "$WORK/out"
expect_in "A(z) = 1 + 7z^3 + 7z^4 + z^7" "$WORK/out"  # Lin & Costello, Hamming (7,4)

expect_exit 0 "$T" inspect qc-rate-half-z54 --json
expect_in '"rank": 324' "$WORK/out"
expect_in '"min_distance": null' "$WORK/out"
expect_in '"lifting": 54' "$WORK/out"
if [ -x /usr/bin/python3 ]; then
  /usr/bin/python3 - "$WORK/out" <<'PY' || fail "inspect --json keys"
import json, sys
j = json.load(open(sys.argv[1]))
for key in ["n", "m", "rank", "k", "rate", "girth", "min_distance", "variable_degrees", "check_degrees"]:
    assert key in j, key
assert j["n"] == 648 and j["k"] == 324 and j["girth"] >= 6
assert j["variable_degrees"] == {"2": 324, "3": 324} and j["check_degrees"] == {"5": 324}
PY
fi

# No argument: the default code.
expect_exit 0 "$T" inspect
expect_in "length n       2016" "$WORK/out"

for fmt in tannery alist mtx dense qc; do
  expect_exit 0 "$T" convert "$CODES/qc-rate-half-z54.qc" "$WORK/c.$fmt" --to "$fmt"
  expect_exit 0 "$T" convert "$WORK/c.$fmt" "$WORK/back.tanner"
  expect_exit 0 "$T" convert "$CODES/qc-rate-half-z54.qc" "$WORK/ref.tanner"
  cmp -s "$WORK/back.tanner" "$WORK/ref.tanner" || fail "round trip through $fmt"
  # The quasi-cyclic structure is recognised from any format: back to the same base table.
  expect_exit 0 "$T" convert "$WORK/c.$fmt" "$WORK/again.qc"
  expect_exit 0 "$T" convert "$CODES/qc-rate-half-z54.qc" "$WORK/orig.qc"
  cmp -s "$WORK/again.qc" "$WORK/orig.qc" || fail "base table not recovered from $fmt"
  expect_exit 0 "$T" inspect "$WORK/c.$fmt" --json
  expect_in '"lifting": 54' "$WORK/out"
done
expect_exit 0 "$T" convert hamming-7-4 - --to dense
expect_in "1 0 1 0 1 0 1" "$WORK/out"
# stdin in, extension picks the format out
"$T" convert - "$WORK/h.alist" < "$CODES/hamming-7-4.tanner" || fail "convert from stdin"
head -1 "$WORK/h.alist" | grep -qx "7 3" || fail "alist header"
# Files with CRLF line ends (written on Windows) read as the same matrix, in every text format.
for fmt in tanner alist mtx qc dense; do
  "$T" convert qc-rate-half-z54 "$WORK/lf.$fmt" || fail "convert to $fmt"
  sed 's/$/\r/' "$WORK/lf.$fmt" > "$WORK/crlf.$fmt"
  expect_exit 0 "$T" convert "$WORK/crlf.$fmt" "$WORK/crlf-back.tanner"
  "$T" convert "$WORK/lf.$fmt" "$WORK/lf-back.tanner" || fail "convert back from $fmt"
  cmp -s "$WORK/crlf-back.tanner" "$WORK/lf-back.tanner" || fail "CRLF $fmt reads differently"
done
# An all-zero H (no edges) survives every format that can hold it.
printf '0 0 0\n0 0 0\n' > "$WORK/zero.dense"
for fmt in tanner alist mtx; do
  expect_exit 0 "$T" convert "$WORK/zero.dense" "$WORK/zero.$fmt"
  expect_exit 0 "$T" inspect "$WORK/zero.$fmt"
  expect_in "rank           0" "$WORK/out"
done
finish
