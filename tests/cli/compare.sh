# tannery compare: detects degraded decoders; the paired test sees what the unpaired one misses.
. "$(dirname "$0")/lib.sh"
SIMS="$2"
cd "$WORK"
# The scalar reference decoder, as in the README's figures of this demonstration.
Q=(--code qc-rate-half-z54 --plot "" --quiet --frame-errors 1000000 --kernel reference)

# A deliberately degraded decoder: plain min-sum against the sum-product reference, same seed.
"$T" simulate --scenario "$SIMS/qc-sum-product.toml" --algorithm min-sum --output ms.json --plot "" --quiet || fail "min-sum run"
expect_exit 1 "$T" compare ms.json "$SIMS/qc-sum-product.json"
expect_in "test: paired" "$WORK/out"
expect_in "result: REGRESSION" "$WORK/out"
expect_in "warning: settings differ: decoder (min-sum" "$WORK/out"
# The reference against itself: no regression (exact mode).
expect_exit 0 "$T" compare "$SIMS/qc-sum-product.json" "$SIMS/qc-sum-product.json" --json
expect_in '"regression": false' "$WORK/out"

# A 0.1 dB degradation at FER ~1e-2: the same frames (seed, point 0, frame i) sent 0.1 dB lower,
# labelled as the reference's point. Paired McNemar detects it; Fisher's unpaired test does not
# at these frame counts.
"$T" simulate "${Q[@]}" --sweep 2.5 --max-frames 4000 --output ref.json || fail "reference run"
"$T" simulate "${Q[@]}" --sweep 2.4 --max-frames 4000 --output worse.json || fail "degraded run"
/usr/bin/python3 - <<'PY' || fail "relabel"
import json
j = json.load(open("worse.json"))
j["points"][0]["parameter"] = 2.5
j["run"]["sweep"] = [2.5]
json.dump(j, open("worse.json", "w"))
PY
expect_exit 1 "$T" compare worse.json ref.json --mode paired
expect_in "REGRESSION: FER worse" "$WORK/out"
expect_exit 0 "$T" compare worse.json ref.json --mode unpaired
expect_in "no evidence of a regression" "$WORK/out"

# Points present in one file only are listed; errors exit 2.
"$T" simulate "${Q[@]}" --sweep 2.5,3 --max-frames 500 --output two.json || fail "two-point run"
"$T" compare two.json ref.json > cmp.txt
grep -q "only in the current run" cmp.txt || fail "unmatched point not listed"
expect_exit 2 "$T" compare two.json missing.json
expect_in "missing.json: cannot open file" "$WORK/err"
expect_exit 2 "$T" compare two.json ref.json --tolerance-db 0.1 --at-fer 1e-9
expect_in "does not cross FER" "$WORK/err"
finish
