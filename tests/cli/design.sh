# Design support end to end: construct, threshold --json, the Tanner graph drawn.
. "$(dirname "$0")/lib.sh"
SOURCES="$(cd "$(dirname "$0")/../../codes" && pwd)"
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
expect_in "block cycle conditions closed (4/6/8): 0/0/" "$WORK/err"
expect_exit 0 "$T" inspect lifted.qc --json
/usr/bin/python3 -c "import json; assert json.load(open('$WORK/out'))['girth'] >= 8" || fail "lifted girth"

printf '2 1 1 0\n1 1 1 1\n' > mult.txt
expect_exit 0 "$T" construct lift --base mult.txt --lifting 42 -o mult.qc
expect_in "parallel edges split by copying the base 2 times" "$WORK/err"
expect_exit 2 "$T" construct lift --base mult.txt --lifting 41 -o bad.qc
expect_in "need a first lifting size divisible by 2" "$WORK/err"
# The greedy pass alone rebuilds the shipped quasi-cyclic code (codes/README.md's command).
expect_exit 0 "$T" construct lift --base "$SOURCES/sources/qc-rate-half-pattern.dense" --lifting 54 \
  --seed 5 --passes 0 -o old.qc
cmp -s old.qc "$SOURCES/qc-rate-half-z54.qc" || fail "--passes 0 does not rebuild qc-rate-half-z54"

# Protographs: the rate-1/2 AR4JA protograph (Divsalar, Dolinar, Jones & Andrews, IEEE JSAC
# 2009: threshold 0.628 dB, from memory), punctured column 5.
printf '0 0 1 0 2\n1 1 0 1 3\n1 2 0 2 1\npunctured 5\n' > ar4ja.proto
expect_exit 0 "$T" threshold --base ar4ja.proto --json
/usr/bin/python3 -c "
import json; j = json.load(open('$WORK/out'))
assert abs(j['ebn0_db'] - 0.628) < 0.02 and j['rate'] == 0.5 and j['protograph']['punctured'] == 1, j
" || fail "AR4JA threshold"
expect_exit 0 "$T" threshold --base ar4ja.proto --channel bec
expect_in "exact erasure density evolution" "$WORK/out"
expect_exit 2 "$T" threshold --base ar4ja.proto --method discretized
expect_in "reduces to an ensemble" "$WORK/err"
expect_exit 2 "$T" threshold --base ar4ja.proto --algorithm min-sum
expect_in "drop --algorithm" "$WORK/err"
printf '1 1\npunctured 3\n' > bad.proto
expect_exit 2 "$T" threshold --base bad.proto
expect_in "bad.proto:2: punctured column 3 is beyond the 2 columns" "$WORK/err"

# The search: deterministic for a seed and a round count, whatever the threads; the file it
# writes is a protograph whose threshold is the one it printed.
search="construct protograph --rate 0.5 --rows 4 --encodable --max-multiplicity 2 --rounds 2 --steps 30 --seed 4"
expect_exit 0 "$T" $search --threads 1 -o one.proto
expect_in "made by: tannery construct protograph --rate 0.5 --rows 4 --max-multiplicity 2 --encodable --steps 30 --rounds 2 --seed 4" "$WORK/out"
expect_exit 0 "$T" $search --threads 2 -o two.proto
cmp -s <(tail -n +3 one.proto) <(tail -n +3 two.proto) || fail "the search depends on the threads"
printed=$(sed -n 's/.*threshold Eb\/N0 = \([0-9.-]*\) dB.*/\1/p' one.proto)
expect_exit 0 "$T" threshold --base one.proto --json
/usr/bin/python3 -c "
import json; j = json.load(open('$WORK/out')); assert abs(j['ebn0_db'] - $printed) < 1e-4, j
" || fail "the written protograph's threshold"
expect_exit 2 "$T" construct protograph --rate 0.6 --rows 3 -o x.proto
expect_in "not a whole number" "$WORK/err"
# Lifted with the encodable parity part kept, in one step and in two: peeling encodes them with
# a dense part of one check per parity system at most (2 systems: the base split in 2 copies).
expect_exit 0 "$T" construct lift --base one.proto --lifting 60 --encodable -o enc.qc
expect_exit 0 "$T" inspect enc.qc --json
/usr/bin/python3 -c "
import json; j = json.load(open('$WORK/out'))
assert j['n'] == 480 and j['encoder']['dense_checks'] <= 2, j['encoder']
" || fail "encodable lifting"
expect_exit 0 "$T" construct lift --base one.proto --lifting 6,10 --encodable -o enc2.qc
expect_exit 0 "$T" inspect enc2.qc --json
/usr/bin/python3 -c "
import json; j = json.load(open('$WORK/out'))
assert j['n'] == 480 and j['encoder']['dense_checks'] <= 6, j['encoder']
" || fail "two-step encodable lifting"
# The bound on the minimum distance of encodable liftings (the unit test encodes the codewords
# it counts): kept by the search and recorded, and printed by threshold --base.
expect_exit 0 "$T" construct protograph --rate 0.5 --rows 4 --encodable --min-weight 16 --rounds 1 \
  --steps 20 --seed 4 -o bound.proto
expect_in "made by: tannery construct protograph --rate 0.5 --rows 4 --max-multiplicity 3 --encodable --min-weight 16" bound.proto
bound=$(sed -n 's/.*; encodable weight bound \([0-9]*\)$/\1/p' bound.proto)
[ -n "$bound" ] && [ "$bound" -ge 16 ] || fail "the search's weight bound: '$bound'"
expect_exit 0 "$T" threshold --base bound.proto
expect_in "one information bit makes a codeword of weight <= $bound" "$WORK/out"
expect_exit 2 "$T" construct protograph --rate 0.5 --rows 4 --min-weight 16 -o x.proto
expect_in "needs the encodable parity part" "$WORK/err"
expect_exit 2 "$T" construct lift --base ar4ja.proto --lifting 30 --encodable -o x.qc
expect_in "--encodable" "$WORK/err"
# The punctured columns of a lifted protograph as a puncture map for simulate.
expect_exit 0 "$T" construct lift --base ar4ja.proto --lifting 30 --puncture-output ar4ja.punct -o ar4ja.qc
expect_in "punctured 120-149" ar4ja.punct

expect_exit 0 "$T" inspect hamming-7-4 --dot h.dot
grep -q "v6 \[shape=circle, color" h.dot || fail "cycle not highlighted"
grep -q "c0 \[shape=square" h.dot || fail "checks are not squares"
if command -v dot > /dev/null; then
  expect_exit 0 "$T" inspect hamming-7-4 --dot h.svg
  /usr/bin/python3 -c "import xml.etree.ElementTree as E; E.parse('h.svg')" || fail "rendered svg"
fi
finish
