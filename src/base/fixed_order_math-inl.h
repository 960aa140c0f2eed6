// Fused multiply-add, and the exponential, logarithm and log-ratio of floats, for every Highway
// target, from IEEE add, subtract, multiply, divide and correctly rounded fused multiply-add in
// a fixed order, so that each lane gives the same bits on every target and machine (the C
// library's exp and log may differ in the last bit between machines). Included by the kernels that
// must be reproducible: the noise generator and the demapper. Compile without floating-point
// contraction. Per-target include guard (Highway's convention for code included once per target).
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
using DF = hn::ScalableTag<float>;
using DFU = hn::RebindToUnsigned<DF>;
using VF = hn::Vec<DF>;

// 1 / i!, correctly rounded to T (i! is exact in a double up to 18!).
template <class T>
constexpr T inverse_factorial(int i) {
  double f = 1;
  for (int j = 2; j <= i; ++j) f *= j;
  return static_cast<T>(1 / f);
}
}  // namespace fixed_order

// a * b + c rounded once, on every target: the fused multiply-add instruction where the target
// has one, else the C library's fma lane by lane (correctly rounded as well, only slower).
template <class V>
HWY_INLINE V Fma(V a, V b, V c) {
#if HWY_NATIVE_FMA
  return hn::MulAdd(a, b, c);
#else
  const hn::DFromV<V> d;
  using T = hn::TFromV<V>;
  constexpr std::size_t N = hn::MaxLanes(hn::DFromV<V>());
  alignas(64) T x[N], y[N], z[N];
  hn::Store(a, d, x);
  hn::Store(b, d, y);
  hn::Store(c, d, z);
  for (std::size_t i = 0; i < N; ++i) x[i] = std::fma(x[i], y[i], z[i]);
  return hn::Load(d, x);
#endif
}

// e^x for x in [-87, 0] (callers clamp): x = k log 2 + r with k = round(x / log 2) and
// |r| <= log(2)/2, e^r by its Taylor series to r^7 (truncation below 6e-9 relative), times 2^k
// built in the exponent bits (k >= -126: a normal float).
HWY_INLINE fixed_order::VF Exp(fixed_order::VF x) {
  using fixed_order::VF;
  const fixed_order::DF df;
  const fixed_order::DFU du;
  const VF shifter = hn::Set(df, 12582912.0f);  // 1.5 * 2^23
  const VF k = hn::Sub(hn::Add(hn::Mul(x, hn::Set(df, 1.44269504f)), shifter), shifter);
  // log 2 split: the high part ends in 9 zero bits, so k * high is exact for |k| < 512.
  VF r = Fma(hn::Neg(k), hn::Set(df, 0.693145751953125f), x);
  r = Fma(hn::Neg(k), hn::Set(df, 1.42860677e-06f), r);
  VF p = hn::Set(df, fixed_order::inverse_factorial<float>(7));
  for (int i = 6; i >= 0; --i) p = Fma(p, r, hn::Set(df, fixed_order::inverse_factorial<float>(i)));
  // 2^k: (k + 127) << 23, read from the low bits of k + 2^23 + 127.
  const auto biased = hn::BitCast(du, hn::Add(k, hn::Set(df, 8388735.0f)));
  return hn::Mul(p, hn::BitCast(df, hn::ShiftLeft<23>(biased)));
}

// The exponent field of positive normal floats as 2^23 + biased exponent (a float, exact), and
// their significands m in [1, 2).
HWY_INLINE fixed_order::VF SplitFloat(fixed_order::VF x, fixed_order::VF& m) {
  const fixed_order::DFU du;
  const fixed_order::DF df;
  const auto bits = hn::BitCast(du, x);
  m = hn::BitCast(df, hn::Or(hn::And(bits, hn::Set(du, 0x007FFFFFu)), hn::Set(du, 0x3F800000u)));
  return hn::BitCast(df, hn::Or(hn::ShiftRight<23>(bits), hn::Set(du, 0x4B000000u)));
}

// k log 2 + log((1 + s) / (1 - s)) for |s| < 0.172 and integer k, |k| < 512: 2 atanh(s) by its
// series to s^11 (truncation below 1e-10 relative), log 2 split so that k times its high part
// (9 trailing zero bits) is exact.
HWY_INLINE fixed_order::VF LnOfParts(fixed_order::VF k, fixed_order::VF s) {
  using fixed_order::VF;
  const fixed_order::DF df;
  const VF z = hn::Mul(s, s);
  VF p = hn::Set(df, 1.0f / 11);
  for (int i = 4; i >= 0; --i) p = Fma(p, z, hn::Set(df, 1.0f / static_cast<float>(2 * i + 1)));
  const VF log_m = hn::Mul(hn::Add(s, s), p);
  return Fma(k, hn::Set(df, 0.693145751953125f), Fma(k, hn::Set(df, 1.42860677e-06f), log_m));
}

// Natural logarithm of positive normal floats: x = 2^k m with m in [sqrt(1/2), sqrt(2)),
// s = (m - 1) / (m + 1).
HWY_INLINE fixed_order::VF Ln(fixed_order::VF x) {
  using fixed_order::VF;
  const fixed_order::DF df;
  VF m;
  VF k = hn::Sub(SplitFloat(x, m), hn::Set(df, 8388735.0f));  // 2^23 + 127
  const auto big = hn::Gt(m, hn::Set(df, 1.41421356f));
  m = hn::IfThenElse(big, hn::Mul(m, hn::Set(df, 0.5f)), m);
  k = hn::Add(k, hn::IfThenElseZero(big, hn::Set(df, 1.0f)));
  return LnOfParts(k, hn::Div(hn::Sub(m, hn::Set(df, 1.0f)), hn::Add(m, hn::Set(df, 1.0f))));
}

// log(num / den) of positive normal floats with one division: num / den = 2^k (m_num / m_den),
// the significand ratio brought into [sqrt(1/2), sqrt(2)) and s = (m_num - m_den) /
// (m_num + m_den).
HWY_INLINE fixed_order::VF LnRatio(fixed_order::VF num, fixed_order::VF den) {
  using fixed_order::VF;
  const fixed_order::DF df;
  VF mn, md;
  VF k = hn::Sub(SplitFloat(num, mn), SplitFloat(den, md));  // exact
  const auto big = hn::Gt(mn, hn::Mul(md, hn::Set(df, 1.41421356f)));
  const auto small = hn::Lt(mn, hn::Mul(md, hn::Set(df, 0.707106781f)));
  mn = hn::IfThenElse(big, hn::Mul(mn, hn::Set(df, 0.5f)),
                      hn::IfThenElse(small, hn::Add(mn, mn), mn));
  k = hn::Add(
      k, hn::IfThenElse(big, hn::Set(df, 1.0f), hn::IfThenElseZero(small, hn::Set(df, -1.0f))));
  return LnOfParts(k, hn::Div(hn::Sub(mn, md), hn::Add(mn, md)));
}

}  // namespace tannery::detail::HWY_NAMESPACE
HWY_AFTER_NAMESPACE();

#endif  // per-target include guard
