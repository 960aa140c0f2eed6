#!/usr/bin/python3
"""Polynomials of the float32 sum-product kernel (src/decode/simd_kernels-inl.h), refitted and
checked by this script: weighted least squares on 4000 Chebyshev nodes (near-minimax), then the
worst error on 200 001 points evaluated in float32 by Horner's rule as the kernel does.

  2^f, f in [-1/2, 1/2], degree 6, relative error
  log(1 + x) / x, x in [sqrt(1/2) - 1, sqrt(2) - 1], degree 8 (log(1 + x) = x times it), absolute
  error of log

Run: /usr/bin/python3 scripts/fit-kernel-polynomials.py   (needs python3-numpy)
"""
import numpy as np
from numpy.polynomial import polynomial as P


def fit(f, a, b, deg, weight):
    k = np.arange(4000)
    x = (a + b) / 2 + (b - a) / 2 * np.cos(np.pi * (k + 0.5) / 4000)
    return P.polyfit(x, f(x), deg, w=weight(x))


def horner32(c, x):
    r = np.zeros_like(x, dtype=np.float32)
    for cc in np.float32(c)[::-1]:
        r = np.float32(r * x + cc)
    return r


exp2 = fit(lambda x: 2.0**x, -0.5, 0.5, 6, lambda x: 2.0**-x)
xs = np.linspace(-0.5, 0.5, 200001).astype(np.float32)
err_exp2 = np.max(np.abs(horner32(exp2, xs) / 2.0 ** xs.astype(np.float64) - 1))

def log1p_over_x(x):
    return np.where(x == 0, 1.0, np.log1p(x) / np.where(x == 0, 1, x))

lo, hi = np.sqrt(0.5) - 1, np.sqrt(2) - 1
logc = fit(log1p_over_x, lo, hi, 8, lambda x: np.abs(x) + 1e-3)
xs = np.linspace(lo, hi, 200001).astype(np.float32)
err_log = np.max(np.abs(np.float32(xs * horner32(logc, xs)) - np.log1p(xs.astype(np.float64))))

for name, c in (("kExp2", exp2), ("kLog1pOverX", logc)):
    print(f"constexpr float {name}[] = {{" + ", ".join(f"{v:.9e}f" for v in c) + "};")
print(f"// worst relative error of 2^f: {err_exp2:.2e}; worst absolute error of log(1 + x): {err_log:.2e}")
