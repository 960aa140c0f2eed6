# Undecided bits (posterior exactly 0: an unresolved erasure, a tie) are errors, never lucky
# guesses: error rates of repetition codes on the BEC and the BSC against their closed forms, with
# and without --all-zero, for every decoder that runs there; iterative erasure decoding of a
# random code against an independent peeling decoder written here in numpy.
. "$(dirname "$0")/lib.sh"
cd "$WORK"

"$T" construct repetition --length 4 -o rep4.tanner 2>/dev/null || fail "construct repetition-4"

# check RESULT.json TRUE_FER [-]: the run's 99.9% Clopper-Pearson interval holds the exact FER,
# and (without "-") BER = FER (k = 1: the one information bit is wrong exactly when the frame is).
check() {
  /usr/bin/python3 - "$@" <<'PY' || fail "$1: FER does not match $2"
import json, sys
j = json.load(open(sys.argv[1]))
truth = float(sys.argv[2])
for p in j["points"]:
    assert p["fer_low"] <= truth <= p["fer_high"], (p["fer_low"], p["fer"], p["fer_high"], truth)
    if len(sys.argv) < 4:
        assert p["bit_errors"] == p["frame_errors"], (p["bit_errors"], p["frame_errors"])
PY
}
RUN=(--max-frames 40000 --frame-errors 100000000 --confidence 0.999 --plot "" --quiet)
# Closed forms (common practice: a repetition code fails on the BEC only when every bit is
# erased, eps^n; on the BSC when more than half the bits flip, and with even n a tie at n/2 is
# a failure too).
#   repetition-5, BEC eps = 0.5: 0.5^5 = 0.03125
#   repetition-5, BSC p = 0.2: sum_{j=3}^{5} C(5,j) 0.2^j 0.8^(5-j) = 0.05792
#   repetition-4, BSC p = 0.2: 1 - 0.8^4 - 4 * 0.2 * 0.8^3 = 0.1808 (ties at two flips fail)
for zero in "" --all-zero; do
  for kernel in reference simd; do
    tag="$kernel${zero}"
    "$T" simulate --code repetition-5 --channel bec --sweep 0.5 --kernel $kernel $zero "${RUN[@]}" \
      --output bec5-$tag.json || fail "bec repetition-5 $tag"
    check bec5-$tag.json 0.03125
    "$T" simulate --code repetition-5 --channel bsc --sweep 0.2 --kernel $kernel $zero "${RUN[@]}" \
      --output bsc5-$tag.json || fail "bsc repetition-5 $tag"
    check bsc5-$tag.json 0.05792
    "$T" simulate --code rep4.tanner --channel bsc --sweep 0.2 --kernel $kernel $zero "${RUN[@]}" \
      --output bsc4-$tag.json || fail "bsc repetition-4 $tag"
    check bsc4-$tag.json 0.1808
  done
  # Fixed point (ties of integer posteriors are common), layered min-sum and exhaustive ML (ties
  # between codewords). Plain min-sum: on these trees it passes the channel values on unchanged.
  for dec in "--algorithm min-sum --schedule layered" \
             "--algorithm min-sum --schedule layered --quantize 6.2 --kernel simd" \
             "--algorithm min-sum --schedule layered --quantize 6.2 --kernel reference" \
             "--algorithm ml"; do
    tag=$(echo "$dec$zero" | tr -dc 'a-z0-9')
    # shellcheck disable=SC2086
    "$T" simulate --code rep4.tanner --channel bsc --sweep 0.2 $dec $zero "${RUN[@]}" \
      --output d4-$tag.json || fail "bsc repetition-4 $dec $zero"
    check d4-$tag.json 0.1808
    # shellcheck disable=SC2086
    "$T" simulate --code repetition-5 --channel bec --sweep 0.5 $dec $zero "${RUN[@]}" \
      --output e5-$tag.json || fail "bec repetition-5 $dec $zero"
    check e5-$tag.json 0.03125
  done
  # Bit-flipping is no erasure decoder: an erased position stays undecided, so every frame with
  # an erasure fails, 1 - 0.5^5 = 0.96875 (its bit errors include guesses that outvote known bits).
  "$T" simulate --code repetition-5 --channel bec --sweep 0.5 --algorithm bit-flip $zero "${RUN[@]}" \
    --output bf5$zero.json || fail "bec bit-flip $zero"
  check bf5$zero.json 0.96875 -
done

# Iterative erasure decoding of a random (3,6)-regular code of length 400 against a peeling
# decoder written here (repeatedly solve a check with one erased variable: the erasure decoder of
# Richardson and Urbanke, "Modern Coding Theory", chapter 3, from memory). Both must leave exactly
# the same positions erased (the largest stopping set inside the erasures), frame by frame.
"$T" construct regular --length 400 --variable-degree 3 --check-degree 6 --seed 7 -o reg.tanner 2>/dev/null ||
  fail "construct regular"
K=$("$T" inspect reg.tanner --json | /usr/bin/python3 -c 'import json,sys; print(json.load(sys.stdin)["k"])')
/usr/bin/python3 - "$K" <<'PY' || fail "python info bits"
import numpy as np, sys
k = int(sys.argv[1])
rng = np.random.default_rng(11)  # invented data: a seeded random stream
bits = rng.integers(0, 2, size=(300, k))
open("info.txt", "w").write("".join("".join(map(str, r)) + "\n" for r in bits))
PY
"$T" encode --code reg.tanner info.txt --output words.txt || fail "encode"
for alg in sum-product min-sum; do
  for kernel in reference simd; do
    /usr/bin/python3 - <<'PY' || fail "python erasures"
import numpy as np
words = np.array([[int(c) for c in l.strip()] for l in open("words.txt")])
rng = np.random.default_rng(12)
# erasure probabilities around the (3,6) BP threshold 0.4294 (Richardson-Urbanke ch. 3, from memory)
eps = np.repeat([0.35, 0.40, 0.42, 0.44, 0.47, 0.50], 50)[:, None]
erased = rng.random(words.shape) < eps
llr = np.where(words == 0, np.inf, -np.inf).astype("<f4")
llr[erased] = 0
llr.tofile("erased.f32")
np.save("erased.npy", erased)
PY
    "$T" decode --code reg.tanner erased.f32 --algorithm $alg --kernel $kernel --iterations 400 \
      --codeword --output got-$alg-$kernel.txt --posterior post-$alg-$kernel.f32 \
      --report rep-$alg-$kernel.csv 2>/dev/null || fail "decode erasures $alg $kernel"
    /usr/bin/python3 - reg.tanner $alg-$kernel <<'PY' || fail "peeling comparison $alg $kernel"
import csv, sys
import numpy as np
lines = [l.split() for l in open(sys.argv[1]) if l.strip() and not l.startswith("#")]
n = int(lines[0][2].split("=")[1])
checks = [[int(x) for x in l] for l in lines[1:]]
words = np.array([[int(c) for c in l.strip()] for l in open("words.txt")])
erased = np.load("erased.npy")
left = erased.copy()
for f in range(len(words)):
    e = left[f]
    progress = True
    while progress:
        progress = False
        for c in checks:
            unknown = [v for v in c if e[v]]
            if len(unknown) == 1:
                e[unknown[0]] = False
                progress = True
tag = sys.argv[2]
post = np.fromfile(f"post-{tag}.f32", dtype="<f4").reshape(-1, n)
got = np.array([[int(c) for c in l.strip()] for l in open(f"got-{tag}.txt")])
undecided = post == 0
assert (undecided == left).all(), f"frames differ: {np.nonzero((undecided != left).any(axis=1))[0][:10]}"
assert (got[~left] == words[~left]).all(), "a resolved bit is wrong"
assert (got[left] == 0).all(), "undecided bits are written as 0"
report = list(csv.DictReader(open(f"rep-{tag}.csv")))
for f, row in enumerate(report):
    assert int(row["undecided_bits"]) == left[f].sum(), (f, row)
    assert (row["converged"] == "1") == (left[f].sum() == 0), (f, row)
print(f"{tag}: {left.any(axis=1).sum()} of {len(words)} frames keep erasures, "
      f"erasure rate after decoding {left.mean():.4f}")
PY
  done
done
finish
