// Batched layered decoders, one frame per SIMD lane (inter-frame), compiled for every Highway
// target and dispatched at run time. The arithmetic mirrors the scalar references exactly:
// src/decode/fixed_point.cpp for integer lanes (bit-exact) and the min-sum/sum-product rules
// of src/decode/belief_propagation.cpp in float32 for float lanes.
#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "src/decode/simd_kernels.cpp"
#include <hwy/foreach_target.h>  // IWYU pragma: keep

#include <hwy/contrib/math/math-inl.h>
#include <hwy/highway.h>
#include <string>
#include <type_traits>
#include <vector>

#include "src/decode/simd_kernels.hpp"

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {

namespace hn = hwy::HWY_NAMESPACE;

template <class D, class V>
V clamp_to(D d, V x, int limit) {
  using T = hn::TFromD<D>;
  return hn::Min(hn::Max(x, hn::Set(d, static_cast<T>(-limit))), hn::Set(d, static_cast<T>(limit)));
}

// floor(m * k / 8) for 0 <= m, 0 <= k <= 8 without overflow: (m >> 3) * k + ((m & 7) * k) >> 3.
template <class D, class V>
V times_eighths(D d, V m, int k) {
  const V high = hn::ShiftRight<3>(m);
  const V low = hn::And(m, hn::Set(d, static_cast<hn::TFromD<D>>(7)));
  V acc_high = hn::Zero(d), acc_low = hn::Zero(d);
  for (int i = 0; i < k; ++i) {  // k <= 8 additions: no integer multiply needed for any lane type
    acc_high = hn::Add(acc_high, high);
    acc_low = hn::Add(acc_low, low);
  }
  return hn::Add(acc_high, hn::ShiftRight<3>(acc_low));
}

// Polynomials of the sum-product kernel, fitted by scripts/fit-kernel-polynomials.py (numpy,
// near-minimax): 2^f on [-1/2, 1/2] to 9.7e-8 relative, log(1 + x)/x on [-1/4, 1/2] giving
// log(1 + x) to 4.5e-8 absolute, both evaluated in float32.
constexpr float kExp2[] = {1.000000001e+00f, 6.931472056e-01f, 2.402264661e-01f, 5.550328998e-02f,
                           9.618519534e-03f, 1.339986036e-03f, 1.533757683e-04f};
constexpr float kLog1pOverX[] = {1.000000012e+00f,  -5.000013661e-01f, 3.333337763e-01f,
                                 -2.498948990e-01f, 1.997930142e-01f,  -1.688558792e-01f,
                                 1.501751154e-01f,  -1.175529691e-01f, 5.014866428e-02f};

template <class D, std::size_t kTerms>
HWY_INLINE hn::Vec<D> Horner(D d, const float (&c)[kTerms], hn::Vec<D> x) {
  hn::Vec<D> r = hn::Set(d, c[kTerms - 1]);
  for (std::size_t i = kTerms - 1; i-- > 0;) r = hn::MulAdd(r, x, hn::Set(d, c[i]));
  return r;
}

// e^-x for float x >= 0 as 2^k 2^f, k = round(-x log2 e) (at least -125, so the result stays a
// normal number, at most 2^-125: a certainty for the check) and f in [-1/2, 1/2].
template <class D>
HWY_INLINE hn::Vec<D> ExpNeg(D d, hn::Vec<D> x) {
  const hn::RebindToSigned<D> di;
  const auto y = hn::Max(hn::Mul(x, hn::Set(d, -1.44269504088896341f)), hn::Set(d, -125.0f));
  const auto k = hn::Round(y);
  const auto p = Horner(d, kExp2, hn::Sub(y, k));
  return hn::BitCast(d, hn::Add(hn::BitCast(di, p), hn::ShiftLeft<23>(hn::ConvertTo(di, k))));
}

// Natural log of float x in [1, 2^25): x = 2^k m with m in [3/4, 3/2).
template <class D>
HWY_INLINE hn::Vec<D> LogAtLeastOne(D d, hn::Vec<D> x) {
  const hn::RebindToSigned<D> di;
  const auto bits = hn::BitCast(di, x);
  auto k = hn::Sub(hn::ShiftRight<23>(bits), hn::Set(di, 127));
  auto m = hn::BitCast(d, hn::Or(hn::And(bits, hn::Set(di, 0x7FFFFF)), hn::Set(di, 0x3F800000)));
  const auto big = hn::Ge(m, hn::Set(d, 1.5f));
  m = hn::IfThenElse(big, hn::Mul(m, hn::Set(d, 0.5f)), m);
  k = hn::Add(k, hn::IfThenElseZero(hn::RebindMask(di, big), hn::Set(di, 1)));
  const auto u = hn::Sub(m, hn::Set(d, 1.0f));
  return hn::MulAdd(hn::ConvertTo(d, k), hn::Set(d, 0.693147180559945309f),
                    hn::Mul(u, Horner(d, kLog1pOverX, u)));
}

// Everything the check loops use, copied to locals: int8 stores may alias any object, so fields
// read through LayeredArgs would be reloaded after every store.
template <class D>
struct Sweep {
  using T = hn::TFromD<D>;
  using V = hn::Vec<D>;
  using DI = hn::RebindToSigned<D>;
  using VI = hn::Vec<DI>;
  static constexpr bool kFloat = std::is_floating_point_v<T>;
  static constexpr std::size_t L = hn::MaxLanes(D());

  explicit Sweep(const LayeredArgs<T>& a)
      : m(a.m),
        check_start(a.check_start),
        edge_var(a.edge_var),
        post(a.posterior),
        msg(a.messages),
        v2c(a.v2c),
        scratch(a.scratch),
        max_degree(a.max_degree),
        rule(a.rule),
        shrink(8 - a.alpha_eighths),
        init(hn::Set(D(), kFloat ? T(1e5) : static_cast<T>(a.message_limit))),
        m_hi(hn::Set(D(), static_cast<T>(a.message_limit))),
        p_lo(hn::Set(D(), static_cast<T>(-a.posterior_limit))),
        p_hi(hn::Set(D(), static_cast<T>(a.posterior_limit))),
        alpha(hn::Set(D(), static_cast<T>(a.alpha))),
        beta(hn::Set(D(), kFloat ? static_cast<T>(a.beta) : static_cast<T>(a.beta_lsb))) {}

  const std::size_t m;
  const std::uint32_t* const check_start;
  const std::uint32_t* const edge_var;
  T* const post;
  T* const msg;
  T* const v2c;
  T* const scratch;
  const std::size_t max_degree;
  const CheckRule rule;
  const int shrink;
  const V init, m_hi, p_lo, p_hi, alpha, beta;

  // The check's input on edge e: the extrinsic P - R (layered) or the variable-to-check
  // message (flooding). Fixed point: at posterior width (P - R can leave the lane's range).
  template <bool kFlood>
  HWY_INLINE V Extrinsic(std::size_t e) const {
    const D d;
    if constexpr (kFlood) {
      return hn::Load(d, v2c + e * L);
    } else {
      const V p = hn::Load(d, post + edge_var[e] * L), r = hn::Load(d, msg + e * L);
      if constexpr (kFloat) {
        return hn::Sub(p, r);
      } else {
        return hn::Min(hn::Max(hn::SaturatedSub(p, r), p_lo), p_hi);
      }
    }
  }

  // Stores a posterior, keeping the lanes that already stopped when some have. (Their messages
  // may go on changing: only posteriors are read out of a lane.)
  template <bool kFrozen>
  HWY_INLINE void Keep(T* where, V value, hn::Mask<D> frozen) const {
    const D d;
    hn::Store(kFrozen ? hn::IfThenElse(frozen, hn::Load(d, where), value) : value, d, where);
  }

  // The magnitudes a min-sum check sends: rule applied to the two smallest inputs.
  HWY_INLINE V Shape(V x) const {
    const D d;
    if constexpr (kFloat) {
      if (rule == CheckRule::normalized) return hn::Mul(x, alpha);
      if (rule == CheckRule::offset) return hn::Max(hn::Sub(x, beta), hn::Zero(d));
    } else {
      if (rule == CheckRule::normalized) return hn::Sub(x, times_eighths(d, x, shrink));
      if (rule == CheckRule::offset) return hn::Max(hn::Sub(x, beta), hn::Zero(d));
    }
    return x;
  }

  // One pass over all checks: new check-to-variable messages and (layered) posteriors.
  template <bool kFlood, bool kFrozen>
  void Checks(hn::Mask<D> frozen) const {
    const D d;
    const DI di;
    const VI one_i = hn::Set(di, hn::TFromD<DI>(1)), zero_i = hn::Zero(di);
    const V sign_bit = hn::BitCast(d, hn::Set(di, hwy::LimitsMin<hn::TFromD<DI>>()));
    T* const t_store = scratch;
    for (std::size_t c = 0; c < m; ++c) {
      const std::uint32_t b = check_start[c], deg = check_start[c + 1] - b;
      if (deg == 0) continue;
      if constexpr (kFloat) {
        if (rule == CheckRule::sum_product) {
          SumProductCheck<kFlood, kFrozen>(b, deg, frozen);
          continue;
        }
      }
      // Pass 1: extrinsic t, the two smallest |t|, the position of the smallest (first
      // occurrence wins ties), the parity of the signs (in the sign bit).
      V min1 = init, min2 = init, parity = hn::Zero(d);
      VI at = zero_i, index = zero_i;
      for (std::uint32_t i = 0; i < deg; ++i, index = hn::Add(index, one_i)) {
        const V t = Extrinsic<kFlood>(b + i);
        hn::Store(t, d, t_store + i * L);
        V mag = hn::Abs(t);
        if constexpr (!kFloat) mag = hn::Min(mag, m_hi);  // the check sees message width
        at = hn::IfThenElse(hn::RebindMask(di, hn::Lt(mag, min1)), index, at);
        min2 = hn::Min(min2, hn::Max(min1, mag));
        min1 = hn::Min(min1, mag);
        parity = hn::Xor(parity, t);
      }
      // Pass 2: each edge gets the other edges' smallest magnitude with the sign of the others.
      if (deg == 1) min1 = min2 = init;  // a check with one edge sends the saturation value
      V mag1 = Shape(min1), mag2 = Shape(min2);
      index = zero_i;
      if constexpr (kFloat) {
        mag1 = hn::Xor(mag1, hn::And(parity, sign_bit));
        mag2 = hn::Xor(mag2, hn::And(parity, sign_bit));
        for (std::uint32_t i = 0; i < deg; ++i, index = hn::Add(index, one_i)) {
          const V t = hn::Load(d, t_store + i * L);
          const V mag = hn::IfThenElse(hn::RebindMask(d, hn::Eq(at, index)), mag2, mag1);
          const V r = hn::Xor(mag, hn::And(t, sign_bit));
          hn::Store(r, d, msg + (b + i) * L);
          if constexpr (!kFlood) Keep<kFrozen>(post + edge_var[b + i] * L, hn::Add(t, r), frozen);
        }
      } else {
        const V neg1 = hn::Neg(mag1), neg2 = hn::Neg(mag2);
        for (std::uint32_t i = 0; i < deg; ++i, index = hn::Add(index, one_i)) {
          const V t = hn::Load(d, t_store + i * L);
          const auto own = hn::RebindMask(d, hn::Eq(at, index));
          // (IfNegativeThenElse would be one operation less but is wrong on SSSE3 in Highway
          // 1.0.3 for int8 lanes.)
          const V r =
              hn::IfThenElse(hn::Lt(hn::Xor(parity, t), hn::Zero(d)),
                             hn::IfThenElse(own, neg2, neg1), hn::IfThenElse(own, mag2, mag1));
          const V p = hn::Min(hn::Max(hn::SaturatedAdd(t, r), p_lo), p_hi);
          hn::Store(r, d, msg + (b + i) * L);
          Keep<kFrozen>(post + edge_var[b + i] * L, p, frozen);
        }
      }
    }
  }

  // Sum-product by the tanh rule written with one exponential per edge: with e = exp(-|t|),
  // tanh(|t|/2) = (1 - e) / (1 + e); the others' product is N/D with N, D the products of
  // numerators and denominators (prefix times suffix), and 2 atanh(N/D) = log((D + N)/(D - N)),
  // capped at log(2^24) (the float32 resolution of a product near 1; messages near +-16.6).
  template <bool kFlood, bool kFrozen>
  HWY_INLINE void SumProductCheck(std::uint32_t b, std::uint32_t deg, hn::Mask<D> frozen) const {
    const D d;
    const V one = hn::Set(d, T(1)), cap = hn::Set(d, T(1 << 24));
    const V sign_bit = hn::Set(d, T(-0.0));
    T* const t_store = scratch;
    T* const num = scratch + max_degree * L;
    T* const den = num + max_degree * L;
    T* const fwd_num = den + max_degree * L;
    T* const fwd_den = fwd_num + max_degree * L;
    V run_num = one, run_den = one, parity = hn::Zero(d);
    for (std::uint32_t i = 0; i < deg; ++i) {
      const V t = Extrinsic<kFlood>(b + i);
      hn::Store(t, d, t_store + i * L);
      parity = hn::Xor(parity, t);
      const V e = ExpNeg(d, hn::Abs(t));
      const V nu = hn::Sub(one, e), de = hn::Add(one, e);
      hn::Store(nu, d, num + i * L);
      hn::Store(de, d, den + i * L);
      hn::Store(run_num, d, fwd_num + i * L);
      hn::Store(run_den, d, fwd_den + i * L);
      run_num = hn::Mul(run_num, nu);
      run_den = hn::Mul(run_den, de);
    }
    parity = hn::And(parity, sign_bit);
    V back_num = one, back_den = one;
    for (std::uint32_t i = deg; i-- > 0;) {
      const V t = hn::Load(d, t_store + i * L);
      const V nu = hn::Mul(hn::Load(d, fwd_num + i * L), back_num);
      const V de = hn::Mul(hn::Load(d, fwd_den + i * L), back_den);
      back_num = hn::Mul(back_num, hn::Load(d, num + i * L));
      back_den = hn::Mul(back_den, hn::Load(d, den + i * L));
      const V ratio = hn::Min(hn::Div(hn::Add(de, nu), hn::Sub(de, nu)), cap);
      const V mag = deg == 1 ? init : LogAtLeastOne(d, ratio);
      const V r = hn::Xor(mag, hn::And(hn::Xor(parity, t), sign_bit));
      hn::Store(r, d, msg + (b + i) * L);
      if constexpr (!kFlood) Keep<kFrozen>(post + edge_var[b + i] * L, hn::Add(t, r), frozen);
    }
  }
};

template <class D>
void Layered(D d, const LayeredArgs<hn::TFromD<D>>& a) {
  using T = hn::TFromD<D>;
  using V = hn::Vec<D>;
  constexpr bool kFloat = std::is_floating_point_v<T>;
  const hn::RebindToSigned<D> di;
  using TI = hn::TFromD<decltype(di)>;
  using VI = hn::Vec<decltype(di)>;
  constexpr std::size_t L = Sweep<D>::L;
  HWY_DASSERT(a.lanes == L);
  const Sweep<D> sweep(a);
  const std::size_t n = a.n, m = a.m;
  const std::uint32_t* const check_start = a.check_start;
  const std::uint32_t* const edge_var = a.edge_var;
  T* const post = a.posterior;
  T* const msg = a.messages;
  const int iterations = a.iterations;
  const VI zero_i = hn::Zero(di);

  // Flooding is offered for float lanes (the fixed-point definition is layered).
  const bool flooding = kFloat && a.flooding;
  T* const v2c = a.v2c;
  for (std::size_t i = 0; i < n * L; i += L) hn::Store(hn::Load(d, a.channel + i), d, post + i);
  const std::size_t edges = check_start[m];
  for (std::size_t i = 0; i < edges * L; i += L) hn::Store(hn::Zero(d), d, msg + i);
  if (flooding) {
    for (std::size_t e = 0; e < edges; ++e)
      hn::Store(hn::Load(d, a.channel + edge_var[e] * L), d, v2c + e * L);
  }
  for (std::size_t l = 0; l < L; ++l) a.iterations_used[l] = iterations;

  // Sign bit of the XOR of a check's posteriors = parity of its negative ones, per lane.
  auto parity_of = [&](std::size_t c) {
    VI par = zero_i;
    for (std::uint32_t e = check_start[c]; e < check_start[c + 1]; ++e) {
      par = hn::Xor(par, hn::BitCast(di, hn::Load(d, post + edge_var[e] * L)));
    }
    return par;
  };
  VI done = zero_i;  // lanes that met the early-stop rule
  for (int it = 1; it <= iterations; ++it) {
    const auto frozen = hn::MaskFromVec(hn::BitCast(d, done));
    const bool any_frozen = !hn::AllTrue(di, hn::Eq(done, zero_i));
    if (flooding) {
      any_frozen ? sweep.template Checks<true, true>(frozen)
                 : sweep.template Checks<true, false>(frozen);
      // Variables: posterior = channel + all check messages; each edge gets the others' sum.
      for (std::size_t v = 0; v < n; ++v) {
        V total = hn::Load(d, a.channel + v * L);
        for (std::uint32_t k = a.var_start[v]; k < a.var_start[v + 1]; ++k) {
          total = hn::Add(total, hn::Load(d, msg + a.var_edge[k] * L));
        }
        sweep.template Keep<true>(post + v * L, total, frozen);
        for (std::uint32_t k = a.var_start[v]; k < a.var_start[v + 1]; ++k) {
          const std::size_t e = a.var_edge[k];
          hn::Store(hn::Sub(total, hn::Load(d, msg + e * L)), d, v2c + e * L);
        }
      }
    } else {
      any_frozen ? sweep.template Checks<false, true>(frozen)
                 : sweep.template Checks<false, false>(frozen);
    }
    if (!a.early_stop) continue;
    // Vectorised syndrome: a lane is satisfied when every check has even parity of negatives.
    VI unsatisfied = zero_i;
    for (std::size_t c = 0; c < m; ++c) unsatisfied = hn::Or(unsatisfied, parity_of(c));
    const VI newly = hn::AndNot(
        done, hn::AndNot(hn::VecFromMask(di, hn::Lt(unsatisfied, zero_i)), hn::Set(di, TI(-1))));
    if (!hn::AllTrue(di, hn::Eq(newly, zero_i))) {
      alignas(64) TI flags[hn::MaxLanes(di)];
      hn::Store(newly, di, flags);
      for (std::size_t l = 0; l < L; ++l) {
        if (flags[l]) a.iterations_used[l] = it;
      }
      done = hn::Or(done, newly);
    }
    if (hn::AllTrue(di, hn::Lt(done, zero_i))) break;
  }
  // Syndrome weight per lane at exit.
  alignas(64) TI par_lanes[hn::MaxLanes(di)];
  for (std::size_t l = 0; l < L; ++l) a.syndrome_weight[l] = 0;
  for (std::size_t c = 0; c < m; ++c) {
    const VI par = parity_of(c);
    if (hn::AllFalse(di, hn::Lt(par, zero_i))) continue;
    hn::Store(par, di, par_lanes);
    for (std::size_t l = 0; l < L; ++l) a.syndrome_weight[l] += par_lanes[l] < 0;
  }
}

// Channel values from LLRs in lane layout (count a multiple of the double vector length):
// float32 clipped at +-clip, or fixed point round(llr * scale) (ties to even) saturated at
// +-clip, the rule of LlrQuantizer.
template <class T>
void Channel(const double* llr, std::size_t count, double scale, double clip, T* out) {
  const hn::ScalableTag<double> dd;
  const hn::Rebind<T, decltype(dd)> dt;
  const auto lo = hn::Set(dd, -clip), hi = hn::Set(dd, clip), s = hn::Set(dd, scale);
  for (std::size_t i = 0; i < count; i += hn::Lanes(dd)) {
    auto x = hn::Min(hn::Max(hn::Mul(hn::LoadU(dd, llr + i), s), lo), hi);
    if constexpr (std::is_floating_point_v<T>) {
      hn::StoreU(hn::DemoteTo(dt, x), dt, out + i);
    } else {
      const hn::Rebind<std::int32_t, decltype(dd)> d32;
      const auto q = hn::DemoteTo(d32, hn::Round(x));
      if constexpr (sizeof(T) == 4) {
        hn::StoreU(q, dt, out + i);
      } else {
        hn::StoreU(hn::DemoteTo(dt, q), dt, out + i);
      }
    }
  }
}

// Bit l of masks[v] set where lane l of posterior v is negative.
template <class T>
void SignMasks(const T* post, std::size_t n, std::uint64_t* masks) {
  const hn::ScalableTag<T> d;
  constexpr std::size_t L = hn::MaxLanes(d);
  for (std::size_t v = 0; v < n; ++v) {
    std::uint8_t bits[8] = {};
    hn::StoreMaskBits(d, hn::Lt(hn::Load(d, post + v * L), hn::Zero(d)), bits);
    std::uint64_t mask = 0;
    for (std::size_t b = 0; b < (L + 7) / 8; ++b) mask |= std::uint64_t{bits[b]} << (8 * b);
    masks[v] = mask;
  }
}

std::size_t FloatLanes() {
  return hn::Lanes(hn::ScalableTag<float>());
}
std::size_t Int16Lanes() {
  return hn::Lanes(hn::ScalableTag<std::int16_t>());
}
std::size_t Int8Lanes() {
  return hn::Lanes(hn::ScalableTag<std::int8_t>());
}
void LayeredFloat(const LayeredArgs<float>& a) {
  Layered(hn::ScalableTag<float>(), a);
}
void LayeredInt16(const LayeredArgs<std::int16_t>& a) {
  Layered(hn::ScalableTag<std::int16_t>(), a);
}
void LayeredInt8(const LayeredArgs<std::int8_t>& a) {
  Layered(hn::ScalableTag<std::int8_t>(), a);
}
void ChannelFloat(const double* llr, std::size_t count, double scale, double clip, float* out) {
  Channel(llr, count, scale, clip, out);
}
void ChannelInt16(const double* llr, std::size_t count, double scale, double clip,
                  std::int16_t* out) {
  Channel(llr, count, scale, clip, out);
}
void ChannelInt8(const double* llr, std::size_t count, double scale, double clip,
                 std::int8_t* out) {
  Channel(llr, count, scale, clip, out);
}
void SignMasksFloat(const float* post, std::size_t n, std::uint64_t* masks) {
  SignMasks(post, n, masks);
}
void SignMasksInt16(const std::int16_t* post, std::size_t n, std::uint64_t* masks) {
  SignMasks(post, n, masks);
}
void SignMasksInt8(const std::int8_t* post, std::size_t n, std::uint64_t* masks) {
  SignMasks(post, n, masks);
}

}  // namespace tannery::detail::HWY_NAMESPACE
HWY_AFTER_NAMESPACE();

#if HWY_ONCE
namespace tannery::detail {

HWY_EXPORT(FloatLanes);
HWY_EXPORT(Int16Lanes);
HWY_EXPORT(Int8Lanes);
HWY_EXPORT(LayeredFloat);
HWY_EXPORT(LayeredInt16);
HWY_EXPORT(LayeredInt8);
HWY_EXPORT(ChannelFloat);
HWY_EXPORT(ChannelInt16);
HWY_EXPORT(ChannelInt8);
HWY_EXPORT(SignMasksFloat);
HWY_EXPORT(SignMasksInt16);
HWY_EXPORT(SignMasksInt8);

std::size_t float_lanes() {
  return HWY_DYNAMIC_DISPATCH(FloatLanes)();
}
std::size_t int16_lanes() {
  return HWY_DYNAMIC_DISPATCH(Int16Lanes)();
}
std::size_t int8_lanes() {
  return HWY_DYNAMIC_DISPATCH(Int8Lanes)();
}
void layered_float(const LayeredArgs<float>& a) {
  HWY_DYNAMIC_DISPATCH(LayeredFloat)(a);
}
void layered_int16(const LayeredArgs<std::int16_t>& a) {
  HWY_DYNAMIC_DISPATCH(LayeredInt16)(a);
}
void layered_int8(const LayeredArgs<std::int8_t>& a) {
  HWY_DYNAMIC_DISPATCH(LayeredInt8)(a);
}
void channel_values(const double* llr, std::size_t count, double scale, double clip, float* out) {
  HWY_DYNAMIC_DISPATCH(ChannelFloat)(llr, count, scale, clip, out);
}
void channel_values(const double* llr, std::size_t count, double scale, double clip,
                    std::int16_t* out) {
  HWY_DYNAMIC_DISPATCH(ChannelInt16)(llr, count, scale, clip, out);
}
void channel_values(const double* llr, std::size_t count, double scale, double clip,
                    std::int8_t* out) {
  HWY_DYNAMIC_DISPATCH(ChannelInt8)(llr, count, scale, clip, out);
}
void sign_masks(const float* post, std::size_t n, std::uint64_t* masks) {
  HWY_DYNAMIC_DISPATCH(SignMasksFloat)(post, n, masks);
}
void sign_masks(const std::int16_t* post, std::size_t n, std::uint64_t* masks) {
  HWY_DYNAMIC_DISPATCH(SignMasksInt16)(post, n, masks);
}
void sign_masks(const std::int8_t* post, std::size_t n, std::uint64_t* masks) {
  HWY_DYNAMIC_DISPATCH(SignMasksInt8)(post, n, masks);
}

// In this file HWY_TARGETS lists every target compiled for the kernels above.
std::vector<std::string> kernel_targets() {
  std::vector<std::string> names;
  for (std::int64_t t : hwy::SupportedAndGeneratedTargets()) names.emplace_back(hwy::TargetName(t));
  return names;
}

bool force_kernel_target(const std::string& name) {
  hwy::SetSupportedTargetsForTest(0);
  if (!name.empty()) {
    std::int64_t chosen = 0;
    for (std::int64_t t : hwy::SupportedAndGeneratedTargets()) {
      if (name == hwy::TargetName(t)) chosen = t;
    }
    if (chosen == 0) return false;
    hwy::SetSupportedTargetsForTest(chosen);
  }
  hwy::GetChosenTarget().Update(hwy::SupportedTargets());
  return true;
}

}  // namespace tannery::detail
#endif
