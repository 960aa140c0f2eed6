# Matrix Market both ways with scipy.io (python3-scipy from Debian): tannery's output is readable
# by mmread, and every form mmwrite produces (pattern, integer, real, dense array) reads back.
. "$(dirname "$0")/lib.sh"
if ! /usr/bin/python3 -c "import scipy.io" 2>/dev/null; then
  echo "SKIP: python3-scipy is not installed"; exit 77
fi
expect_exit 0 "$T" convert regular-3-6-n2016 "$WORK/h.mtx"
/usr/bin/python3 - "$WORK/h.mtx" <<'PY' || fail "scipy could not read the file"
import sys, scipy.io
a = scipy.io.mmread(sys.argv[1]).tocsr()
assert a.shape == (1008, 2016), a.shape
assert a.nnz == 6048
assert (a.sum(axis=1) == 6).all() and (a.sum(axis=0) == 3).all()
PY

# Files written by scipy itself: a random binary 12 x 20 matrix (invented, seeded) in four forms.
(cd "$WORK" && /usr/bin/python3 - <<'PY') || fail "scipy could not write the files"
import numpy as np, scipy.io, scipy.sparse
rng = np.random.default_rng(5)
h = (rng.random((12, 20)) < 0.25).astype(np.int64)
h[0, :] = 0; h[0, 3] = 1  # a row of weight one, to catch an off-by-one
np.savetxt("want.txt", h, fmt="%d", delimiter="")
sparse = scipy.sparse.coo_matrix(h)
scipy.io.mmwrite("pattern.mtx", sparse, field="pattern")
scipy.io.mmwrite("integer.mtx", sparse)
scipy.io.mmwrite("real.mtx", sparse.astype(np.float64))   # values as 1.000000000000000e+00
scipy.io.mmwrite("array.mtx", h.astype(np.float64))        # dense: the array layout
scipy.io.mmwrite("bad.mtx", scipy.sparse.coo_matrix(h * 2))  # a 2 is no binary entry
PY
grep -q "e+00" "$WORK/real.mtx" || fail "scipy wrote no exponent form (the test would be vacuous)"
grep -qi "array" "$WORK/array.mtx" || fail "scipy wrote no array layout"
for form in pattern integer real array; do
  expect_exit 0 "$T" convert "$WORK/$form.mtx" "$WORK/$form.dense"
  tr -d ' ' < "$WORK/$form.dense" | grep -v '^#' | cmp -s - "$WORK/want.txt" || fail "$form.mtx reads differently"
done
expect_exit 2 "$T" convert "$WORK/bad.mtx" "$WORK/bad.dense"
expect_in "bad.mtx:" "$WORK/err"
expect_in "is not a binary entry" "$WORK/err"
finish
