# Matrix Market output is readable by scipy.io.mmread (python3-scipy from Debian).
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
finish
