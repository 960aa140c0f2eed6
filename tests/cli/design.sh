# Design support end to end: construct, threshold --json, the Tanner graph drawn.
. "$(dirname "$0")/lib.sh"
cd "$WORK"

expect_exit 0 "$T" threshold --regular 3,6 --channel bec --json
/usr/bin/python3 - "$WORK/out" <<'PY' || fail "threshold --json keys"
import json, sys
j = json.load(open(sys.argv[1]))
for k in ["threshold", "ebn0_db", "rate", "gap_db"]:
    assert k in j, k
assert abs(j["threshold"] - 0.4294) < 1e-4 and j["rate"] == 0.5   # Richardson & Urbanke (2008)
PY
expect_exit 0 "$T" threshold --regular 3,6 --method gaussian --json
/usr/bin/python3 -c "
import json; j = json.load(open('$WORK/out'))
assert 0.85 < j['threshold'] < 0.89 and abs(j['gap_db'] - (j['ebn0_db'] - 0.1871)) < 1e-3, j
" || fail "gaussian threshold"
expect_exit 0 "$T" threshold --code hamming-7-4 --channel bec
expect_in "threshold epsilon" "$WORK/out"
expect_exit 2 "$T" threshold --regular 3,6 --code hamming-7-4
expect_in "exactly one of" "$WORK/err"
expect_exit 2 "$T" threshold --lambda 2:0.5 --rho 6:1
expect_in "lambda coefficients sum to 0.5" "$WORK/err"
# Options of a decoder implementation are refused, never printed as if applied.
for opt in "--quantize 6.2" "--schedule layered" "--iterations 10" "--kernel simd" "--no-early-stop"; do
  # shellcheck disable=SC2086
  expect_exit 2 "$T" threshold --regular 3,6 --algorithm min-sum $opt
  expect_in "threshold does not take ${opt%% *}" "$WORK/err"
done

expect_exit 0 "$T" construct peg --length 504 --rate 0.5 --seed 4 -o peg.alist
expect_in "girth = 8" "$WORK/err"
expect_exit 0 "$T" inspect peg.alist --json
expect_in '"girth": 8' "$WORK/out"
printf '1 1 1 1 0 0\n0 1 1 1 1 1\n1 0 1 0 1 1\n' > base.dense
expect_exit 0 "$T" construct lift --base base.dense --lifting 40 --seed 2 -o lifted.qc
expect_in "girth >= 8 claimed" "$WORK/err"
expect_exit 0 "$T" inspect lifted.qc --json
/usr/bin/python3 -c "import json; assert json.load(open('$WORK/out'))['girth'] >= 8" || fail "lifted girth"

printf '2 1 1 0\n1 1 1 1\n' > mult.txt
expect_exit 0 "$T" construct lift --base mult.txt --lifting 42 -o mult.qc
expect_in "parallel edges split by copying the base 2 times, circulants of size 21" "$WORK/err"
expect_exit 2 "$T" construct lift --base mult.txt --lifting 41 -o bad.qc
expect_in "need a lifting size divisible by 2" "$WORK/err"

expect_exit 0 "$T" inspect hamming-7-4 --dot h.dot
grep -q "v6 \[shape=circle, color" h.dot || fail "cycle not highlighted"
grep -q "c0 \[shape=square" h.dot || fail "checks are not squares"
if command -v dot > /dev/null; then
  expect_exit 0 "$T" inspect hamming-7-4 --dot h.svg
  /usr/bin/python3 -c "import xml.etree.ElementTree as E; E.parse('h.svg')" || fail "rendered svg"
fi
finish
