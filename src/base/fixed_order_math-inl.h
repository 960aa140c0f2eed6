// Logarithm, exponential and fused multiply-add of doubles for every Highway target, from IEEE
// add, subtract, multiply, divide and correctly rounded fused multiply-add in a fixed order, so
// that each lane gives the same bits on every target and machine (the C library's exp and log may
// differ in the last bit between machines). Included by the kernels that must be reproducible:
// the noise generator and the demapper. Compile without floating-point contraction.
// Per-target include guard (Highway's convention for code included once per target).
#if defined(TANNERY_BASE_FIXED_ORDER_MATH_INL_H_) == defined(HWY_TARGET_TOGGLE)
#ifdef TANNERY_BASE_FIXED_ORDER_MATH_INL_H_
#undef TANNERY_BASE_FIXED_ORDER_MATH_INL_H_
#else
#define TANNERY_BASE_FIXED_ORDER_MATH_INL_H_
#endif

#include <hwy/highway.h>
#include <cmath>
#include <cstddef>
#include <cstdint>

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {

namespace hn = hwy::HWY_NAMESPACE;

namespace fixed_order {
using DD = hn::ScalableTag<double>;
using DU = hn::RebindToUnsigned<DD>;
using VD = hn::Vec<DD>;
}  // namespace fixed_order

// a * b + c rounded once, on every target: the fused multiply-add instruction where the target
// has one, else the C library's fma lane by lane (correctly rounded as well, only slower).
HWY_INLINE fixed_order::VD Fma(fixed_order::VD a, fixed_order::VD b, fixed_order::VD c) {
#if HWY_NATIVE_FMA
  return hn::MulAdd(a, b, c);
#else
  const fixed_order::DD dd;
  constexpr std::size_t N = hn::MaxLanes(fixed_order::DD());
  alignas(64) double x[N], y[N], z[N];
  hn::Store(a, dd, x);
  hn::Store(b, dd, y);
  hn::Store(c, dd, z);
  for (std::size_t i = 0; i < N; ++i) x[i] = std::fma(x[i], y[i], z[i]);
  return hn::Load(dd, x);
#endif
}

// Natural logarithm of positive normal numbers x, K vectors at a time (independent chains
// overlap), in place: x = 2^k m with m in [sqrt(1/2), sqrt(2)), log m = 2 atanh(s),
// s = (m - 1)/(m + 1), |s| < 0.172, by its series to s^21 (truncation below 1e-18 relative);
// k log 2 with log 2 split in two (the fdlibm constants).
template <std::size_t K>
HWY_INLINE void Ln(fixed_order::VD (&x)[K]) {
  using fixed_order::VD;
  const fixed_order::DU du;
  const fixed_order::DD dd;
  VD s[K], k[K], p[K];
  for (std::size_t j = 0; j < K; ++j) {
    const auto bits = hn::BitCast(du, x[j]);
    VD m = hn::BitCast(dd, hn::Or(hn::And(bits, hn::Set(du, 0x000FFFFFFFFFFFFFull)),
                                  hn::Set(du, 0x3FF0000000000000ull)));
    // The biased exponent as a double, exactly: 2^52 + e read back, minus 2^52 + 1023.
    k[j] = hn::Sub(
        hn::BitCast(dd, hn::Or(hn::ShiftRight<52>(bits), hn::Set(du, 0x4330000000000000ull))),
        hn::Set(dd, 4503599627371519.0));
    const auto big = hn::Gt(m, hn::Set(dd, 1.4142135623730951));
    m = hn::IfThenElse(big, hn::Mul(m, hn::Set(dd, 0.5)), m);
    k[j] = hn::Add(k[j], hn::IfThenElseZero(big, hn::Set(dd, 1.0)));
    s[j] = hn::Div(hn::Sub(m, hn::Set(dd, 1.0)), hn::Add(m, hn::Set(dd, 1.0)));
    x[j] = hn::Mul(s[j], s[j]);  // z = s^2
    p[j] = hn::Set(dd, 1.0 / 21);
  }
  for (int i = 9; i >= 0; --i) {
    for (std::size_t j = 0; j < K; ++j) p[j] = Fma(p[j], x[j], hn::Set(dd, 1.0 / (2 * i + 1)));
  }
  for (std::size_t j = 0; j < K; ++j) {
    const VD log_m = hn::Mul(hn::Add(s[j], s[j]), p[j]);
    x[j] = Fma(k[j], hn::Set(dd, 6.93147180369123816490e-01),
               Fma(k[j], hn::Set(dd, 1.90821492927058770002e-10), log_m));
  }
}

HWY_INLINE fixed_order::VD Ln(fixed_order::VD x) {
  fixed_order::VD one[1] = {x};
  Ln(one);
  return one[0];
}

// e^x for x in [-708, 0] (callers clamp): x = k log 2 + r with k = round(x / log 2) and
// |r| <= log(2)/2, e^r by its Taylor series to r^13 (truncation below 4e-18 relative), times 2^k
// built in the exponent bits (k >= -1022: a normal number).
HWY_INLINE fixed_order::VD Exp(fixed_order::VD x) {
  using fixed_order::VD;
  const fixed_order::DD dd;
  const fixed_order::DU du;
  // Rounds to nearest exactly: 1.5 * 2^52 added and subtracted.
  const VD shifter = hn::Set(dd, 6755399441055744.0);
  const VD k = hn::Sub(hn::Add(hn::Mul(x, hn::Set(dd, 1.4426950408889634)), shifter), shifter);
  VD r = Fma(hn::Neg(k), hn::Set(dd, 6.93147180369123816490e-01), x);
  r = Fma(hn::Neg(k), hn::Set(dd, 1.90821492927058770002e-10), r);
  // 1 / i!, correctly rounded (i! is exact in a double up to 18!).
  auto inverse_factorial = [](int i) {
    double f = 1;
    for (int j = 2; j <= i; ++j) f *= j;
    return 1 / f;
  };
  VD p = hn::Set(dd, inverse_factorial(13));
  for (int i = 12; i >= 0; --i) p = Fma(p, r, hn::Set(dd, inverse_factorial(i)));
  // 2^k: (k + 1023) << 52, k + 1023 read from the low bits of k + 2^52 + 1023.
  const auto biased = hn::BitCast(du, hn::Add(k, hn::Set(dd, 4503599627371519.0)));
  const VD scale = hn::BitCast(dd, hn::ShiftLeft<52>(biased));
  return hn::Mul(p, scale);
}

}  // namespace tannery::detail::HWY_NAMESPACE
HWY_AFTER_NAMESPACE();

#endif  // per-target include guard
