// Batched layered decoders, one frame per SIMD lane (inter-frame), compiled for every Highway
// target and dispatched at run time; included by simd_kernels_{float,int16,int8}.cpp, one
// translation unit per lane type so that they compile in parallel. The arithmetic mirrors the
// scalar references exactly: src/decode/fixed_point.cpp for integer lanes (bit-exact) and the
// min-sum/sum-product rules of src/decode/belief_propagation.cpp in float32 for float lanes.
// Per-target include guard (Highway's convention for code included once per target).
#if defined(TANNERY_DECODE_SIMD_KERNELS_INL_H_) == defined(HWY_TARGET_TOGGLE)
#ifdef TANNERY_DECODE_SIMD_KERNELS_INL_H_
#undef TANNERY_DECODE_SIMD_KERNELS_INL_H_
#else
#define TANNERY_DECODE_SIMD_KERNELS_INL_H_
#endif

#include <hwy/cache_control.h>
#include <hwy/highway.h>
#include <bit>
#include <cstring>
#include <type_traits>

#include "src/decode/simd_kernels.hpp"

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {

namespace hn = hwy::HWY_NAMESPACE;

// floor(m * k / 8) for 0 <= m, 0 <= k <= 8 without overflow: (m >> 3) * k + ((m & 7) * k) >> 3,
// or one shift when k is a power of two (alpha = 1/2, 3/4, 7/8).
template <class D, class V>
V times_eighths(D d, V m, int k) {
  if (k == 0) return hn::Zero(d);
  if ((k & (k - 1)) == 0)
    return hn::ShiftRightSame(m, 3 - std::countr_zero(static_cast<unsigned>(k)));
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
// near-minimax): 2^f on [-1/2, 1/2] to 9.7e-8 relative, log(1 + x)/x on [sqrt(1/2) - 1,
// sqrt(2) - 1] giving log(1 + x) to 4.0e-8 absolute, both evaluated in float32.
constexpr float kExp2[] = {1.000000001e+00f, 6.931472056e-01f, 2.402264661e-01f, 5.550328998e-02f,
                           9.618519534e-03f, 1.339986036e-03f, 1.533757683e-04f};
constexpr float kLog1pOverX[] = {9.999998726e-01f,  -4.999999026e-01f, 3.333506891e-01f,
                                 -2.500224336e-01f, 1.993680720e-01f,  -1.655133726e-01f,
                                 1.510158800e-01f,  -1.447619129e-01f, 8.491146385e-02f};

template <class D, std::size_t kTerms>
HWY_INLINE hn::Vec<D> Horner(D d, const float (&c)[kTerms], hn::Vec<D> x) {
  hn::Vec<D> r = hn::Set(d, c[kTerms - 1]);
  for (std::size_t i = kTerms - 1; i-- > 0;) r = hn::MulAdd(r, x, hn::Set(d, c[i]));
  return r;
}

// The smallest e^-|t| the sum-product check uses: 2^-60, so its messages stay below 60 ln 2 (a
// certainty: an error probability under 1e-18) and its products of such terms stay normal
// float32 numbers (no slow subnormal arithmetic).
constexpr float kExpFloorLog2 = -60.0f;
constexpr float kMessageCap = static_cast<float>(-double{kExpFloorLog2} * 0.6931471805599453);

// e^-x for float x >= 0 as 2^k 2^f, k = round(-x log2 e) (at least kExpFloorLog2) and f in
// [-1/2, 1/2].
template <class D>
HWY_INLINE hn::Vec<D> ExpNeg(D d, hn::Vec<D> x) {
  const hn::RebindToSigned<D> di;
  const auto y = hn::Max(hn::Mul(x, hn::Set(d, -1.44269504088896341f)), hn::Set(d, kExpFloorLog2));
  const auto k = hn::Round(y);
  const auto p = Horner(d, kExp2, hn::Sub(y, k));
  return hn::BitCast(d, hn::Add(hn::BitCast(di, p), hn::ShiftLeft<23>(hn::ConvertTo(di, k))));
}

// Natural log of a normal float x >= 1: x = 2^k m with m in [sqrt(1/2), sqrt(2)), k and m read off
// the bits of x / sqrt(1/2) (0x3F3504F3 is sqrt(1/2) in float32).
template <class D>
HWY_INLINE hn::Vec<D> LogAtLeastOne(D d, hn::Vec<D> x) {
  const hn::RebindToSigned<D> di;
  const auto bits = hn::BitCast(di, x);
  const auto k = hn::ShiftRight<23>(hn::Sub(bits, hn::Set(di, 0x3F3504F3)));
  const auto u = hn::Sub(hn::BitCast(d, hn::Sub(bits, hn::ShiftLeft<23>(k))), hn::Set(d, 1.0f));
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
  static constexpr std::size_t kMaskBytes = mask_bytes(L);

  explicit Sweep(const LayeredArgs<T>& a)
      : m(a.m),
        check_start(a.check_start),
        edges(a.check_start[a.m]),
        edge_row(a.edge_row),
        post(a.posterior),
        msg(a.messages),
        mags(a.check_magnitudes),
        marks(a.edge_marks),
        v2c(a.v2c),
        scratch(a.scratch),
        max_degree(a.max_degree),
        rule(a.rule),
        shrink(8 - a.alpha_eighths),
        init(hn::Set(D(), kFloat ? T(1e5) : static_cast<T>(a.message_limit))),
        p_lo(hn::Set(D(), static_cast<T>(-a.posterior_limit))),
        p_hi(hn::Set(D(), static_cast<T>(a.posterior_limit))),
        alpha(hn::Set(D(), static_cast<T>(a.alpha))),
        beta(hn::Set(D(), kFloat ? static_cast<T>(a.beta) : static_cast<T>(a.beta_lsb))) {}

  const std::size_t m;
  const std::uint32_t* const check_start;
  const std::uint32_t edges;
  const std::uint32_t* const edge_row;
  T* const post;
  T* const msg;
  T* const mags;
  std::uint8_t* const marks;
  T* const v2c;
  T* const scratch;
  const std::size_t max_degree;
  const CheckRule rule;
  const int shrink;
  const V init, p_lo, p_hi, alpha, beta;

  // The posterior row of edge e's variable.
  HWY_INLINE T* RowOf(std::size_t e) const { return post + edge_row[e]; }

  // The check's input on edge e from a message kept per edge: the extrinsic P - R (layered) or
  // the variable-to-check message (flooding). With kMasked, lanes outside `stale` hold a new
  // frame whose messages count as zero. row: the posterior row of the edge's variable.
  template <bool kFlood, bool kMasked, bool kNarrow = true>
  HWY_INLINE V Extrinsic(std::size_t e, const T* row, hn::Mask<D> stale) const {
    const D d;
    if constexpr (kFlood) {
      if constexpr (kMasked) {
        return hn::IfThenElse(stale, hn::Load(d, v2c + e * L), hn::Load(d, row));
      }
      return hn::Load(d, v2c + e * L);
    } else {
      const V r = kMasked ? hn::MaskedLoad(stale, d, msg + e * L) : hn::Load(d, msg + e * L);
      return Minus<kNarrow>(hn::Load(d, row), r);
    }
  }

  // P - R; fixed point: at posterior width (P - R can leave the lane's range).
  template <bool kNarrow>
  HWY_INLINE V Minus(V p, V r) const {
    if constexpr (kFloat) {
      return hn::Sub(p, r);
    } else {
      return Posterior<kNarrow>(hn::SaturatedSub(p, r));
    }
  }

  // A min-sum check's last message on edge e from its compressed state (old1, old2: what it
  // sent to an edge with a positive input); zero in lanes outside `stale` (kMasked).
  template <bool kMasked>
  HWY_INLINE V Compressed(std::size_t e, V old1, V old2, hn::Mask<D> stale) const {
    const D d;
    const std::uint8_t* mark = marks + e * 2 * kMaskBytes;
    const V mag = hn::IfThenElse(hn::LoadMaskBits(d, mark), old2, old1);
    const V r = hn::IfThenElse(hn::LoadMaskBits(d, mark + kMaskBytes), hn::Neg(mag), mag);
    return kMasked ? hn::IfThenElseZero(stale, r) : r;
  }

  // Lanes whose sign bit is set (also for -0.0).
  HWY_INLINE hn::Mask<D> Negative(V x) const {
    const DI di;
    return hn::RebindMask(D(), hn::Lt(hn::BitCast(di, x), hn::Zero(di)));
  }

  // Stores a posterior, keeping the lanes that already stopped when some have. (Their messages
  // may go on changing: only posteriors are read out of a lane.)
  template <bool kMasked>
  HWY_INLINE void Keep(T* where, V value, hn::Mask<D> frozen) const {
    const D d;
    hn::Store(kMasked ? hn::IfThenElse(frozen, hn::Load(d, where), value) : value, d, where);
  }

  // A fixed-point value (already saturated to the lane type) saturated to the posterior width;
  // kNarrow: that width is below the lane's (otherwise only -128 / -32768 needs lifting).
  template <bool kNarrow>
  HWY_INLINE V Posterior(V x) const {
    x = hn::Max(x, p_lo);
    return kNarrow ? hn::Min(x, p_hi) : x;
  }

  // The magnitudes a min-sum check sends: rule applied to the two smallest inputs.
  HWY_INLINE V Shape(V x) const {
    const D d;
    if (rule == CheckRule::normalized) {
      if constexpr (kFloat) {
        return hn::Mul(x, alpha);
      } else {
        return hn::Sub(x, times_eighths(d, x, shrink));
      }
    }
    if (rule == CheckRule::offset) return hn::Max(hn::Sub(x, beta), hn::Zero(d));
    return x;
  }

  // One pass over all checks: new check-to-variable messages and (layered) posteriors.
  // A layered pass: with or without new frames (masked), the check state kept per edge or
  // compressed.
  template <bool kNarrow>
  void Layered(bool masked, bool compressed, hn::Mask<D> stale, hn::Mask<D> frozen) const {
    if (compressed) {
      masked ? Checks<false, true, kNarrow, true>(stale, frozen)
             : Checks<false, false, kNarrow, true>(stale, frozen);
    } else {
      masked ? Checks<false, true, kNarrow>(stale, frozen)
             : Checks<false, false, kNarrow>(stale, frozen);
    }
  }

  // kCompressed: layered min-sum with compressed check state (LayeredArgs).
  template <bool kFlood, bool kMasked, bool kNarrow, bool kCompressed = false>
  void Checks(hn::Mask<D> stale, hn::Mask<D> frozen) const {
    // A local copy: vector stores may alias any object in memory, this one never (the calls
    // below are inlined), so its fields stay in registers.
    const Sweep self = *this;
    self.template ChecksOf<kFlood, kMasked, kNarrow, kCompressed>(stale, frozen);
  }

  template <bool kFlood, bool kMasked, bool kNarrow, bool kCompressed>
  HWY_INLINE void ChecksOf(hn::Mask<D> stale, hn::Mask<D> frozen) const {
    for (std::size_t c = 0; c < m; ++c) {
      const std::size_t b = check_start[c];
      const std::uint32_t deg = check_start[c + 1] - check_start[c];
      if (deg == 0) continue;
      // Checks of the common degrees are compiled for their degree.
      switch (deg) {
#define TANNERY_DEGREE(k)                                                 \
  case k:                                                                 \
    Check<kFlood, kMasked, kNarrow, kCompressed, k>(c, b, stale, frozen); \
    break;
        TANNERY_DEGREE(2)
        TANNERY_DEGREE(3)
        TANNERY_DEGREE(4)
        TANNERY_DEGREE(5)
        TANNERY_DEGREE(6)
        TANNERY_DEGREE(7)
        TANNERY_DEGREE(8)
        TANNERY_DEGREE(9)
        TANNERY_DEGREE(10)
        TANNERY_DEGREE(11)
        TANNERY_DEGREE(12)
        TANNERY_DEGREE(13)
        TANNERY_DEGREE(14)
        TANNERY_DEGREE(15)
        TANNERY_DEGREE(16)
#undef TANNERY_DEGREE
        default:
          Check<kFlood, kMasked, kNarrow, kCompressed, 0>(c, b, stale, frozen, deg);
      }
    }
  }

  template <bool kFlood, bool kMasked, bool kNarrow, bool kCompressed, std::uint32_t kDeg>
  HWY_INLINE void Check(std::size_t c, std::size_t b, hn::Mask<D> stale, hn::Mask<D> frozen,
                        std::uint32_t deg = kDeg) const {
    // Layered: the next check's posteriors are scattered rows; ask for them while this one
    // works: the rows of the next deg edges, which are the next check's when the degrees agree
    // (as along a layer of a quasi-cyclic code).
    if constexpr (!kFlood) {
      if (b + 2 * deg <= edges) {
#pragma GCC unroll 16
        for (std::size_t i = 0; i < deg; ++i) hwy::Prefetch(RowOf(b + deg + i));
      }
    }
    if constexpr (kFloat && !kCompressed) {
      if (rule == CheckRule::sum_product) {
        SumProductCheck<kFlood, kMasked, kDeg>(b, stale, frozen, deg);
        return;
      }
    }
    MinSumCheck<kFlood, kMasked, kNarrow, kCompressed, kDeg>(c, b, stale, frozen, deg);
  }

  // A per-edge value of one check (edge i, under name `slot`): in registers (`held`) when the
  // check's degree kDeg is known at compile time, else in the scratch rows (kDeg = 0). Likewise
  // the edge's posterior row in pass 2: kept from pass 1, or looked up again.
  template <std::uint32_t kDeg>
  HWY_INLINE void Put(V (&held)[kDeg ? kDeg : 1], int slot, std::uint32_t i, V x) const {
    if constexpr (kDeg != 0) {
      held[i] = x;
    } else {
      hn::Store(x, D(), scratch + (slot * max_degree + i) * L);
    }
  }
  template <std::uint32_t kDeg>
  HWY_INLINE V Get(const V (&held)[kDeg ? kDeg : 1], int slot, std::uint32_t i) const {
    if constexpr (kDeg != 0) {
      return held[i];
    } else {
      return hn::Load(D(), scratch + (slot * max_degree + i) * L);
    }
  }
  template <std::uint32_t kDeg>
  HWY_INLINE T* Row(T* const (&rows)[kDeg ? kDeg : 1], std::size_t b, std::uint32_t i) const {
    if constexpr (kDeg != 0) {
      return rows[i];
    } else {
      return RowOf(b + i);
    }
  }

  // The smallest and second smallest of x (a multiset) and `bound`, each at most `bound`, by a
  // tree: pairs ordered, then merged (the two smallest of two pairs are their smaller lows and
  // the smallest of the larger low and the two highs), fewer operations and a shorter chain than
  // a scan.
  template <std::size_t N>
  HWY_INLINE void TwoSmallest(const V (&x)[N], V bound, V& min1, V& min2) const {
    V lo[(N + 1) / 2], hi[(N + 1) / 2];
    std::size_t count = 0;
#pragma GCC unroll 16
    for (std::size_t i = 0; i + 1 < N; i += 2, ++count) {
      lo[count] = hn::Min(x[i], x[i + 1]);
      hi[count] = hn::Max(x[i], x[i + 1]);
    }
    if constexpr (N % 2 != 0) {
      lo[count] = x[N - 1];
      hi[count++] = bound;
    }
#pragma GCC unroll 16
    while (count > 1) {
      std::size_t j = 0;
#pragma GCC unroll 16
      for (std::size_t i = 0; i + 1 < count; i += 2, ++j) {
        const V low = hn::Min(lo[i], lo[i + 1]);
        hi[j] = hn::Min(hn::Max(lo[i], lo[i + 1]), hn::Min(hi[i], hi[i + 1]));
        lo[j] = low;
      }
      if (count % 2 != 0) {
        lo[j] = lo[count - 1];
        hi[j++] = hi[count - 1];
      }
      count = j;
    }
    min1 = hn::Min(bound, lo[0]);
    min2 = hn::Min(bound, hi[0]);
  }

  // Min-sum check c starting at edge b, of degree kDeg known at compile time (its extrinsics
  // and magnitudes stay in registers) or, with kDeg = 0, of degree deg; its messages kept one
  // per edge or (kCompressed, layered) compressed.
  template <bool kFlood, bool kMasked, bool kNarrow, bool kCompressed, std::uint32_t kDeg>
  HWY_INLINE void MinSumCheck(std::size_t c, std::size_t b, hn::Mask<D> stale, hn::Mask<D> frozen,
                              std::uint32_t deg = kDeg) const {
    const D d;
    constexpr std::uint32_t kHeld = kDeg ? kDeg : 1;
    V held_t[kHeld], held_mag[kHeld];
    T* rows[kHeld];
    // Pass 1: extrinsic t, the two smallest |t|, the parity of the signs (in the sign bit).
    // Fixed point: the reference saturates |t| to the message width first; starting both
    // minima at that limit gives the same minima, and where the unsaturated |t| differs from
    // the saturated one (both at least the limit) the minima are equal, so pass 2's choice
    // between them cannot change.
    V min1 = init, min2 = init, parity = hn::Zero(d);
    T* sent = nullptr;  // compressed: check c's q1 and q2 (pass 2) of last time, and of now
    V old1 = hn::Zero(d), old2 = hn::Zero(d);
    if constexpr (kCompressed) {
      sent = mags + 2 * c * L;
      old1 = hn::Load(d, sent);
      old2 = hn::Load(d, sent + L);
    }
#pragma GCC unroll 16
    for (std::uint32_t i = 0; i < deg; ++i) {
      T* const row = RowOf(b + i);
      V t;
      if constexpr (kCompressed) {
        t = Minus<kNarrow>(hn::Load(d, row), Compressed<kMasked>(b + i, old1, old2, stale));
      } else {
        t = Extrinsic<kFlood, kMasked, kNarrow>(b + i, row, stale);
      }
      const V mag = hn::Abs(t);
      rows[kDeg ? i : 0] = row;
      Put<kDeg>(held_t, 0, i, t);
      Put<kDeg>(held_mag, 1, i, mag);
      if constexpr (kDeg == 0) {
        min2 = hn::Min(min2, hn::Max(min1, mag));
        min1 = hn::Min(min1, mag);
      }
      parity = hn::Xor(parity, t);
    }
    if constexpr (kDeg != 0) TwoSmallest(held_mag, init, min1, min2);
    // Pass 2: each edge gets the other edges' smallest magnitude with the sign of the others.
    // The edge holding the smallest gets the second smallest; when several hold it the two are
    // equal, so no position needs tracking. The sign of all inputs' parity is applied once per
    // check (q1, q2: the messages of an edge whose own input is positive); an edge with a
    // negative input gets -q. Fixed point: its new posterior t + r is then sign(t) (|t| + q),
    // which saturates where t + r does (|t| + q >= -message_limit never reaches the lower one).
    if (deg == 1) min1 = min2 = init;  // a check with one edge sends the saturation value
    V q1 = Shape(min1), q2 = Shape(min2);
    const V sign_bit = hn::Set(d, T(-0.0));  // (float)
    if constexpr (kFloat) {
      q1 = hn::Xor(q1, hn::And(parity, sign_bit));
      q2 = hn::Xor(q2, hn::And(parity, sign_bit));
    } else {
      const auto odd = Negative(parity);
      q1 = hn::IfThenElse(odd, hn::Neg(q1), q1);
      q2 = hn::IfThenElse(odd, hn::Neg(q2), q2);
    }
    if constexpr (kCompressed) {
      hn::Store(q1, d, sent);
      hn::Store(q2, d, sent + L);
    }
#pragma GCC unroll 16
    for (std::uint32_t i = 0; i < deg; ++i) {
      const V t = Get<kDeg>(held_t, 0, i), mag = Get<kDeg>(held_mag, 1, i);
      const auto lowest = hn::Eq(mag, min1);
      const V q = hn::IfThenElse(lowest, q2, q1);
      const std::size_t e = b + i;
      if constexpr (kFloat && !kCompressed) {
        const V r = hn::Xor(q, hn::And(t, sign_bit));
        hn::Store(r, d, msg + e * L);
        if constexpr (!kFlood) Keep<kMasked>(Row<kDeg>(rows, b, i), hn::Add(t, r), frozen);
        continue;
      }
      // (IfNegativeThenElse would be one operation less but is wrong on SSSE3 in Highway 1.0.3
      // for int8 lanes.)
      const auto negative = Negative(t);
      const V r = hn::IfThenElse(negative, hn::Neg(q), q);  // (unused: fixed point, compressed)
      if constexpr (!kFlood) {
        V sum;
        if constexpr (kFloat) {
          sum = hn::Add(t, r);
        } else {
          sum = hn::SaturatedAdd(mag, q);
          if constexpr (kNarrow) sum = hn::Min(sum, p_hi);
          sum = hn::IfThenElse(negative, hn::Neg(sum), sum);
        }
        Keep<kMasked>(Row<kDeg>(rows, b, i), sum, frozen);
      }
      if constexpr (kCompressed) {
        std::uint8_t* const mark = marks + e * 2 * kMaskBytes;
        hn::StoreMaskBits(d, lowest, mark);
        hn::StoreMaskBits(d, negative, mark + kMaskBytes);
      } else {
        hn::Store(r, d, msg + e * L);
      }
    }
  }

  // Sum-product by the tanh rule written with one exponential per edge: with e = exp(-|t|),
  // tanh(|t|/2) = (1 - e) / (1 + e), and for the other edges of a check, with P and M the
  // products of their (1 + e) and (1 - e), 2 atanh(M / P) = log((P + M) / (P - M)). P - M is
  // never formed by subtraction (which loses every digit once the inputs are large): the sums
  // S = P + M and differences D = P - M are carried instead, S' = S + e D and D' = D + e S, and
  // the earlier (f) and later (b) edges combine as (P + M) / (P - M) = (Sf Sb + Df Db) /
  // (Sf Db + Df Sb), sums of non-negative terms, so the message keeps float32's relative
  // precision up to kMessageCap. As in exact arithmetic, an input of exactly 0 (e = 1, so S = D
  // from then on) makes the check send exactly 0 on its other edges (the two sums then add the
  // same rounded terms), and a check of degree 2 passes each input on to the other edge
  // unchanged (capped the same way), so opposite inputs still cancel to exactly 0 (an undecided
  // bit).
  template <bool kFlood, bool kMasked, std::uint32_t kDeg>
  HWY_INLINE void SumProductCheck(std::size_t b, hn::Mask<D> stale, hn::Mask<D> frozen,
                                  std::uint32_t deg = kDeg) const {
    const D d;
    if constexpr (kDeg == 2) {
      const V limit = hn::Set(d, T(kMessageCap));
      T* const row[2] = {RowOf(b), RowOf(b + 1)};
      const V t[2] = {Extrinsic<kFlood, kMasked>(b, row[0], stale),
                      Extrinsic<kFlood, kMasked>(b + 1, row[1], stale)};
      for (std::uint32_t i = 0; i < 2; ++i) {
        const V r = hn::Min(hn::Max(t[1 - i], hn::Neg(limit)), limit);
        hn::Store(r, d, msg + (b + i) * L);
        if constexpr (!kFlood) Keep<kMasked>(row[i], hn::Add(t[i], r), frozen);
      }
      return;
    }
    const V sign_bit = hn::Set(d, T(-0.0));
    // Per edge: t, e and the earlier edges' S and D.
    constexpr std::uint32_t kHeld = kDeg ? kDeg : 1;
    enum { kT, kE, kFwdS, kFwdD };
    V held[4][kHeld];
    T* rows[kHeld];
    const auto put = [&](int slot, std::uint32_t i, V x)
                         HWY_ATTR { Put<kDeg>(held[slot], slot, i, x); };
    const auto get = [&](int slot, std::uint32_t i)
                         HWY_ATTR { return Get<kDeg>(held[slot], slot, i); };
    // Adds an edge's e to a running S and D.
    const auto include = [](V e, V& sum, V& diff) HWY_ATTR {
      const V next_sum = hn::MulAdd(e, diff, sum);
      diff = hn::MulAdd(e, sum, diff);
      sum = next_sum;
    };
    V sum = hn::Set(d, T(2)), diff = hn::Zero(d), parity = hn::Zero(d);
#pragma GCC unroll 16
    for (std::uint32_t i = 0; i < deg; ++i) {
      T* const row = RowOf(b + i);
      rows[kDeg ? i : 0] = row;
      const V t = Extrinsic<kFlood, kMasked>(b + i, row, stale);
      put(kT, i, t);
      parity = hn::Xor(parity, t);
      const V e = ExpNeg(d, hn::Abs(t));
      put(kE, i, e);
      put(kFwdS, i, sum);
      put(kFwdD, i, diff);
      include(e, sum, diff);
    }
    parity = hn::And(parity, sign_bit);
    V back_sum = hn::Set(d, T(2)), back_diff = hn::Zero(d);
#pragma GCC unroll 16
    for (std::uint32_t j = 0; j < deg; ++j) {
      const std::uint32_t i = deg - 1 - j;
      const V t = get(kT, i), fwd_sum = get(kFwdS, i), fwd_diff = get(kFwdD, i);
      // Plain products and sums (no fused ones): with Sf = Df or Sb = Db both add the same two
      // rounded terms.
      const V num = hn::Add(hn::Mul(fwd_sum, back_sum), hn::Mul(fwd_diff, back_diff));
      const V den = hn::Add(hn::Mul(fwd_sum, back_diff), hn::Mul(fwd_diff, back_sum));
      include(get(kE, i), back_sum, back_diff);
      const V mag = deg == 1 ? init : LogAtLeastOne(d, hn::Div(num, den));
      const V r = hn::Xor(mag, hn::And(hn::Xor(parity, t), sign_bit));
      hn::Store(r, d, msg + (b + i) * L);
      if constexpr (!kFlood) Keep<kMasked>(Row<kDeg>(rows, b, i), hn::Add(t, r), frozen);
    }
  }
};

// A new batch: posteriors from the channel values, messages zero.
template <class D>
void Start(D d, const LayeredArgs<hn::TFromD<D>>& a) {
  constexpr std::size_t L = Sweep<D>::L;
  HWY_DASSERT(a.lanes == L);
  const std::size_t edges = a.check_start[a.m];
  for (std::size_t i = 0; i < a.n * L; i += L)
    hn::Store(hn::Load(d, a.channel + i), d, a.posterior + i);
  if (a.messages) {
    for (std::size_t i = 0; i < edges * L; i += L) hn::Store(hn::Zero(d), d, a.messages + i);
  }
  if (a.check_magnitudes) {
    for (std::size_t i = 0; i < 2 * a.m * L; i += L)
      hn::Store(hn::Zero(d), d, a.check_magnitudes + i);
    std::memset(a.edge_marks, 0, edges * 2 * mask_bytes(L));
  }
  if (std::is_floating_point_v<hn::TFromD<D>> && a.flooding) {
    for (std::size_t e = 0; e < edges; ++e)
      hn::Store(hn::Load(d, a.channel + a.edge_row[e]), d, a.v2c + e * L);
  }
}

// One iteration. Lanes in `fresh` were just given a new frame (posterior = channel, their
// messages count as zero); lanes in `frozen` keep their posteriors.
template <class D>
void Iterate(D d, const LayeredArgs<hn::TFromD<D>>& a, std::uint64_t fresh,
             std::uint64_t frozen_lanes) {
  using T = hn::TFromD<D>;
  using V = hn::Vec<D>;
  constexpr std::size_t L = Sweep<D>::L;
  const Sweep<D> sweep(a);
  std::uint8_t bytes[8];
  std::memcpy(bytes, &fresh, 8);
  const auto stale = hn::Not(hn::LoadMaskBits(d, bytes));
  std::memcpy(bytes, &frozen_lanes, 8);
  const auto frozen = hn::LoadMaskBits(d, bytes);
  const bool masked = (fresh | frozen_lanes) != 0;
  if (!(std::is_floating_point_v<T> && a.flooding)) {
    const bool compressed = a.check_magnitudes != nullptr;
    // Posteriors as wide as the lane need no upper clamp (float has none).
    if constexpr (!std::is_floating_point_v<T>) {
      if (a.posterior_limit < hwy::LimitsMax<T>()) {
        sweep.template Layered<true>(masked, compressed, stale, frozen);
        return;
      }
    }
    sweep.template Layered<false>(masked, compressed, stale, frozen);
    return;
  }
  masked ? sweep.template Checks<true, true, false>(stale, frozen)
         : sweep.template Checks<true, false, false>(stale, frozen);
  // Variables: posterior = channel + all check messages; each edge gets the others' sum.
  for (std::size_t v = 0; v < a.n; ++v) {
    V total = hn::Load(d, a.channel + v * L);
    for (std::uint32_t k = a.var_start[v]; k < a.var_start[v + 1]; ++k)
      total = hn::Add(total, hn::Load(d, a.messages + a.var_edge[k] * L));
    sweep.template Keep<true>(a.posterior + v * L, total, frozen);
    for (std::uint32_t k = a.var_start[v]; k < a.var_start[v + 1]; ++k) {
      const std::size_t e = a.var_edge[k];
      hn::Store(hn::Sub(total, hn::Load(d, a.messages + e * L)), d, a.v2c + e * L);
    }
  }
}

// New frames: for each k < count, the lanes in lanes[k] take their posteriors (and, for flooding,
// channel values) from rows[k] (n x L, the same layout); the other lanes are untouched. One pass
// over the posteriors for all of them. Layered decoding never reads the channel values after the
// start, so they are not copied there.
template <class D>
void Refill(D d, const LayeredArgs<hn::TFromD<D>>& a, const hn::TFromD<D>* const* rows,
            const std::uint64_t* lanes, std::size_t count) {
  using M = hn::Mask<D>;
  constexpr std::size_t L = Sweep<D>::L;
  constexpr std::size_t kMax = 64;
  HWY_DASSERT(count >= 1 && count <= kMax);
  M take[kMax];
  std::uint64_t all = 0;
  for (std::size_t k = 0; k < count; ++k) {
    std::uint8_t bytes[8];
    std::memcpy(bytes, &lanes[k], 8);
    take[k] = hn::LoadMaskBits(d, bytes);
    all |= lanes[k];
  }
  std::uint8_t bytes[8];
  std::memcpy(bytes, &all, 8);
  const M any = hn::LoadMaskBits(d, bytes);
  const bool channel = std::is_floating_point_v<hn::TFromD<D>> && a.flooding;
  for (std::size_t i = 0; i < a.n * L; i += L) {
    // The groups are far (a chunk's channel values outgrow the core's caches): ask for their
    // rows some way ahead (prefetching past the end is harmless).
    for (std::size_t k = 0; k < count; ++k) hwy::Prefetch(rows[k] + i + 32 * L);
    auto x = hn::LoadU(d, rows[0] + i);
    for (std::size_t k = 1; k < count; ++k)
      x = hn::IfThenElse(take[k], hn::LoadU(d, rows[k] + i), x);
    hn::BlendedStore(x, any, d, a.posterior + i);
    if (channel) hn::BlendedStore(x, any, d, a.channel + i);
  }
}

// Hard decisions: bit l of masks[v] set where lane l of posterior v is negative, of zeros[v]
// where it is zero (undecided; -0.0 too). Returns the lanes with a zero posterior (the OR of
// zeros).
template <class D>
std::uint64_t SignMasks(D d, const LayeredArgs<hn::TFromD<D>>& a, std::uint64_t* masks,
                        std::uint64_t* zeros) {
  constexpr std::size_t L = Sweep<D>::L;
  std::uint64_t any_zero = 0;
  for (std::size_t v = 0; v < a.n; ++v) {
    const auto x = hn::Load(d, a.posterior + v * L);
    std::uint8_t bytes[8] = {};
    hn::StoreMaskBits(d, hn::Lt(x, hn::Zero(d)), bytes);
    std::memcpy(&masks[v], bytes, 8);
    std::uint8_t zero_bytes[8] = {};
    hn::StoreMaskBits(d, hn::Eq(x, hn::Zero(d)), zero_bytes);
    std::memcpy(&zeros[v], zero_bytes, 8);
    any_zero |= zeros[v];
  }
  return any_zero;
}

// Channel values from LLRs in lane layout (count a multiple of the double vector length):
// float32 clipped at +-clip, or fixed point round(llr * scale) (ties to even) saturated at
// +-clip, the rule of LlrQuantizer. False when an LLR is NaN (the output is then meaningless).
template <class T>
bool Channel(const double* llr, std::size_t count, double scale, double clip, T* out) {
  const hn::ScalableTag<double> dd;
  const hn::Rebind<T, decltype(dd)> dt;
  const auto lo = hn::Set(dd, -clip), hi = hn::Set(dd, clip), s = hn::Set(dd, scale);
  auto nan = hn::FirstN(dd, 0);
  for (std::size_t i = 0; i < count; i += hn::Lanes(dd)) {
    const auto in = hn::LoadU(dd, llr + i);
    nan = hn::Or(nan, hn::IsNaN(in));
    auto x = hn::Min(hn::Max(hn::Mul(in, s), lo), hi);
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
  return hn::AllFalse(dd, nan);
}

// Plain entry points per lane type for HWY_EXPORT, named Step##Type.
#define TANNERY_TARGET_KERNELS(T, Type)                                                         \
  std::size_t Lanes##Type() {                                                                   \
    return hn::Lanes(hn::ScalableTag<T>());                                                     \
  }                                                                                             \
  void Start##Type(const LayeredArgs<T>& a) {                                                   \
    Start(hn::ScalableTag<T>(), a);                                                             \
  }                                                                                             \
  void Iterate##Type(const LayeredArgs<T>& a, std::uint64_t fresh, std::uint64_t frozen) {      \
    Iterate(hn::ScalableTag<T>(), a, fresh, frozen);                                            \
  }                                                                                             \
  void Refill##Type(const LayeredArgs<T>& a, const T* const* rows, const std::uint64_t* lanes,  \
                    std::size_t count) {                                                        \
    Refill(hn::ScalableTag<T>(), a, rows, lanes, count);                                        \
  }                                                                                             \
  std::uint64_t SignMasks##Type(const LayeredArgs<T>& a, std::uint64_t* masks,                  \
                                std::uint64_t* zeros) {                                         \
    return SignMasks(hn::ScalableTag<T>(), a, masks, zeros);                                    \
  }                                                                                             \
  bool Channel##Type(const double* llr, std::size_t count, double scale, double clip, T* out) { \
    return Channel(llr, count, scale, clip, out);                                               \
  }
}  // namespace tannery::detail::HWY_NAMESPACE
HWY_AFTER_NAMESPACE();

#endif  // per-target include guard

#ifndef TANNERY_DECODE_SIMD_KERNELS_DISPATCH_
#define TANNERY_DECODE_SIMD_KERNELS_DISPATCH_
// The dispatching functions of simd_kernels.hpp for one lane type.
#define TANNERY_DISPATCH_KERNELS(T, Type)                                                         \
  HWY_EXPORT(Lanes##Type);                                                                        \
  HWY_EXPORT(Start##Type);                                                                        \
  HWY_EXPORT(Iterate##Type);                                                                      \
  HWY_EXPORT(Refill##Type);                                                                       \
  HWY_EXPORT(SignMasks##Type);                                                                    \
  HWY_EXPORT(Channel##Type);                                                                      \
  std::size_t lane_count(T) {                                                                     \
    return HWY_DYNAMIC_DISPATCH(Lanes##Type)();                                                   \
  }                                                                                               \
  void start(const LayeredArgs<T>& a) {                                                           \
    HWY_DYNAMIC_DISPATCH(Start##Type)(a);                                                         \
  }                                                                                               \
  void iterate(const LayeredArgs<T>& a, std::uint64_t fresh, std::uint64_t frozen) {              \
    HWY_DYNAMIC_DISPATCH(Iterate##Type)(a, fresh, frozen);                                        \
  }                                                                                               \
  void refill(const LayeredArgs<T>& a, const T* const* rows, const std::uint64_t* lanes,          \
              std::size_t count) {                                                                \
    HWY_DYNAMIC_DISPATCH(Refill##Type)(a, rows, lanes, count);                                    \
  }                                                                                               \
  std::uint64_t sign_masks(const LayeredArgs<T>& a, std::uint64_t* masks, std::uint64_t* zeros) { \
    return HWY_DYNAMIC_DISPATCH(SignMasks##Type)(a, masks, zeros);                                \
  }                                                                                               \
  bool channel_values(const double* llr, std::size_t count, double scale, double clip, T* out) {  \
    return HWY_DYNAMIC_DISPATCH(Channel##Type)(llr, count, scale, clip, out);                     \
  }
#endif
