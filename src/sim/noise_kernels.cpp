// Philox4x32-10 and the Box-Muller transform in SIMD, compiled for every Highway target. The
// arithmetic is IEEE add, subtract, multiply, fused multiply-add, divide and square root in a
// fixed order (this file is compiled without floating-point contraction; targets without an FMA
// instruction use the C library's correctly rounded fma), conversions of integers below 2^31 to
// floats rounded to nearest, and integer and bit operations, so every target gives the same
// bits, and a frame's samples do not depend on how frames are batched.
#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "src/sim/noise_kernels.cpp"
#include <hwy/foreach_target.h>  // IWYU pragma: keep

#include <hwy/highway.h>
#include <algorithm>
#include <cmath>
#include <cstring>

#include "src/base/fixed_order_math-inl.h"
#include "src/decode/decoders.hpp"
#include "src/sim/noise_kernels.hpp"

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {

namespace hn = hwy::HWY_NAMESPACE;

using DU = hn::ScalableTag<std::uint64_t>;
using DD = hn::Rebind<double, DU>;
using VU = hn::Vec<DU>;
using VD = hn::Vec<DD>;

// Every step below works on K independent vectors of 64-bit lanes at a time, so the long
// dependency chains of Philox and of the polynomials overlap (the arithmetic of each lane is
// unchanged). tests/bench/pipeline_bench, group of 64 frames: K = 4 gives 1.64 G samples/s,
// K = 2 1.46 G, K = 6 1.55 G and K = 8 1.35 G.
constexpr std::size_t K = 4;

// The 64-bit product of the low 32 bits of each lane and m (the high 32 bits are ignored).
template <std::uint64_t m>
HWY_INLINE VU Mul32(VU x) {
  const DU du;
#if HWY_TARGET == HWY_SCALAR
  return hn::Set(du, (hn::GetLane(x) & 0xFFFFFFFFull) * m);
#else
  const hn::Repartition<std::uint32_t, DU> d32;
  return hn::MulEven(hn::BitCast(d32, x), hn::BitCast(d32, hn::Set(du, m)));
#endif
}

// Philox4x32 with 10 rounds (Random123's constants) on counters c[0..3] (the four words, in the
// low halves of 64-bit lanes), the key the same for every lane; the output replaces c. Between
// rounds the high halves hold leftovers (the products' high words), which nothing reads: the
// multiplications take the low halves, and the output is masked once at the end.
HWY_INLINE void Philox(VU (&c)[4][K], std::uint64_t seed) {
  const DU du;
  std::uint32_t k0 = static_cast<std::uint32_t>(seed), k1 = static_cast<std::uint32_t>(seed >> 32);
  for (int round = 0; round < 10; ++round) {
    if (round > 0) k0 += 0x9E3779B9u, k1 += 0xBB67AE85u;
    const VU key0 = hn::Set(du, k0), key1 = hn::Set(du, k1);
    for (std::size_t j = 0; j < K; ++j) {
      const VU p0 = Mul32<0xD2511F53ull>(c[0][j]);
      const VU p1 = Mul32<0xCD9E8D57ull>(c[2][j]);
      c[0][j] = hn::Xor3(hn::ShiftRight<32>(p1), c[1][j], key0);
      c[2][j] = hn::Xor3(hn::ShiftRight<32>(p0), c[3][j], key1);
      c[1][j] = p1;
      c[3][j] = p0;
    }
  }
  const VU low = hn::Set(du, 0xFFFFFFFFull);
  for (auto& word : c) {
    for (VU& v : word) v = hn::And(v, low);
  }
}

// The Gaussians are computed in float32, twice as many lanes as the 64-bit Philox lanes: the
// low words of the K = 2 Philox vectors packed into KF float vectors (one on SIMD targets, whose
// lanes 0..N-1 come from Philox vector 0 and N..2N-1 from vector 1; two of one lane on the scalar
// target).
#if HWY_TARGET == HWY_SCALAR
constexpr std::size_t KF = K;
using DF = hn::Rebind<float, DU>;
#else
constexpr std::size_t KF = K / 2;
using DF = hn::Repartition<float, DU>;
#endif
using DF32 = hn::RebindToUnsigned<DF>;
using DI32 = hn::RebindToSigned<DF>;
using VF = hn::Vec<DF>;
using VF32 = hn::Vec<DF32>;

// The low 32 bits of the lanes of w[0..K-1], packed.
HWY_INLINE void Pack(const VU (&w)[K], VF32 (&out)[KF]) {
  const DF32 d32;
#if HWY_TARGET == HWY_SCALAR
  for (std::size_t j = 0; j < K; ++j) out[j] = hn::TruncateTo(d32, w[j]);
#else
  for (std::size_t f = 0; f < KF; ++f)
    out[f] = hn::ConcatEven(d32, hn::BitCast(d32, w[2 * f + 1]), hn::BitCast(d32, w[2 * f]));
#endif
}

// The lanes of Philox vector j (0..K-1) in g, as doubles (exact).
HWY_INLINE VD Widen(const VF (&g)[KF], std::size_t j) {
  const DD dd;
#if HWY_TARGET == HWY_SCALAR
  return hn::PromoteTo(dd, g[j]);
#else
  return j % 2 == 0 ? hn::PromoteTo(dd, hn::LowerHalf(g[j / 2]))
                    : hn::PromoteTo(dd, hn::UpperHalf(hn::Half<DF>(), g[j / 2]));
#endif
}

// Non-negative integers below 2^31 as floats, rounded to nearest (exact below 2^24).
HWY_INLINE VF ToFloat(VF32 x) {
  return hn::ConvertTo(DF(), hn::BitCast(DI32(), x));
}

// Taylor coefficient of a^i in sin (odd i) or cos (even i): (-1)^(i/2) / i!.
constexpr float TaylorCoefficient(int i) {
  double c = 1;
  for (int j = 2; j <= i; ++j) c /= j;
  return static_cast<float>((i / 2) % 2 ? -c : c);
}

// sin a and cos a for a in [0, pi/4] by their Taylor series to a^9 and a^10 (truncation below
// 2e-9, under float32's 6e-8).
HWY_INLINE void SinCos(VF a, VF& sin_a, VF& cos_a) {
  const DF df;
  const VF z = hn::Mul(a, a);
  sin_a = hn::Set(df, TaylorCoefficient(9));
  cos_a = hn::Set(df, TaylorCoefficient(10));
  for (int i = 8; i >= 2; i -= 2) {
    sin_a = Fma(sin_a, z, hn::Set(df, TaylorCoefficient(i - 1)));
    cos_a = Fma(cos_a, z, hn::Set(df, TaylorCoefficient(i)));
  }
  sin_a = hn::Mul(sin_a, a);
  cos_a = Fma(cos_a, z, hn::Set(df, TaylorCoefficient(0)));
}

HWY_INLINE VU Splat32(std::uint64_t x) {
  return hn::Set(DU(), x & 0xFFFFFFFFull);
}

// Four standard normal samples per lane from the Philox output of each counter (its words w0..w3;
// the counters' first words are below 2^31): two Box-Muller pairs, radius from w0 (w2) and angle
// from w1 (w3), computed in float32: out[t][f] holds sample t of the counters of Philox vectors
// 2f and 2f + 1 as Pack lays them out. Radius sqrt(-2 ln u) with u = (v + 1/2) 2^-30, v = w0 >> 2;
// where v < 2^7 (probability 2^-23) the uniform is refined with 23 more bits e from the Philox
// output of the same counter with bit 31 of its first word set, u = (v 2^23 + e + 1/2) 2^-53, so u
// >= 2^-54 and |sample| < 8.65. Angle: three bits pick the octant, the next 23 the position x = (p
// + 1/2) 2^-23 inside it.
HWY_INLINE void BoxMullerFloat(const VU (&counter)[4][K], std::uint64_t seed, VF (&out)[4][KF]) {
  const DF df;
  const DF32 du;
  VU r[4][K];
  for (std::size_t i = 0; i < 4; ++i) {
    for (std::size_t j = 0; j < K; ++j) r[i][j] = counter[i][j];
  }
  Philox(r, seed);
  VF32 w[4][KF];
  for (std::size_t i = 0; i < 4; ++i) Pack(r[i], w[i]);
  for (std::size_t pair = 0; pair < 2; ++pair) {
    for (std::size_t f = 0; f < KF; ++f) {
      const VF32 v = hn::ShiftRight<2>(w[2 * pair][f]);
      VF u = hn::Mul(ToFloat(hn::Add(hn::Add(v, v), hn::Set(du, 1u))), hn::Set(df, 0x1p-31f));
      const auto deep = hn::Lt(v, hn::Set(du, 1u << 7));
      if (HWY_UNLIKELY(!hn::AllFalse(du, deep))) {
        VU x[4][K];
        for (std::size_t i = 0; i < 4; ++i) {
          for (std::size_t j = 0; j < K; ++j) x[i][j] = counter[i][j];
        }
        for (std::size_t j = 0; j < K; ++j) x[0][j] = hn::Or(x[0][j], hn::Set(DU(), 1ull << 31));
        Philox(x, seed);
        VF32 e[KF];
        Pack(x[pair], e);
        const VF32 fine = hn::Or(hn::ShiftLeft<23>(v), hn::And(e[f], hn::Set(du, 0x7FFFFFu)));
        const VF deep_u =
            hn::Mul(ToFloat(hn::Add(hn::Add(fine, fine), hn::Set(du, 1u))), hn::Set(df, 0x1p-54f));
        u = hn::IfThenElse(hn::RebindMask(df, deep), deep_u, u);
      }
      const VF radius = hn::Sqrt(hn::Mul(hn::Set(df, -2.0f), Ln(u)));
      const VF32 b = w[2 * pair + 1][f];
      const VF32 octant = hn::ShiftRight<29>(b);
      const VF32 position = hn::And(hn::ShiftRight<5>(b), hn::Set(du, 0xFFFFFEu));
      const VF frac = hn::Mul(ToFloat(hn::Or(position, hn::Set(du, 1u))), hn::Set(df, 0x1p-24f));
      const auto odd = hn::RebindMask(df, hn::Ne(hn::And(octant, hn::Set(du, 1u)), hn::Zero(du)));
      const VF x = hn::IfThenElse(odd, hn::Sub(hn::Set(df, 1.0f), frac), frac);  // exact
      VF s, c;
      SinCos(hn::Mul(x, hn::Set(df, 0.785398163f)), s, c);
      // Octant q: angle q pi/4 + x pi/4 (q even) or (q + 1) pi/4 - x pi/4 (q odd).
      const auto swap = hn::RebindMask(
          df, hn::Ne(hn::And(hn::Add(octant, hn::Set(du, 1u)), hn::Set(du, 2u)), hn::Zero(du)));
      const VF32 cos_sign =
          hn::ShiftLeft<29>(hn::And(hn::Add(octant, hn::Set(du, 2u)), hn::Set(du, 4u)));
      const VF32 sin_sign = hn::ShiftLeft<29>(hn::And(octant, hn::Set(du, 4u)));
      const VF cos_t = hn::Xor(hn::IfThenElse(swap, s, c), hn::BitCast(df, cos_sign));
      const VF sin_t = hn::Xor(hn::IfThenElse(swap, c, s), hn::BitCast(df, sin_sign));
      out[2 * pair][f] = hn::Mul(radius, cos_t);
      out[2 * pair + 1][f] = hn::Mul(radius, sin_t);
    }
  }
}

// The same samples as doubles (exact): g[t][j] is sample t of the counters in Philox vector j.
HWY_INLINE void BoxMuller(const VU (&counter)[4][K], std::uint64_t seed, VD (&g)[4][K]) {
  VF out[4][KF];
  BoxMullerFloat(counter, seed, out);
  for (std::size_t t = 0; t < 4; ++t) {
    for (std::size_t j = 0; j < K; ++j) g[t][j] = Widen(out[t], j);
  }
}

void GaussiansOfFrame(std::uint64_t seed, std::uint32_t point, std::uint64_t frame,
                      std::size_t count, double* out) {
  const DU du;
  const DD dd;
  constexpr std::size_t N = hn::MaxLanes(DU());
  alignas(64) double a[4][K * N];
  for (std::size_t block = 0; 4 * block < count; block += K * N) {
    VU r[4][K];
    VD g[4][K];
    for (std::size_t j = 0; j < K; ++j) {
      r[0][j] = hn::Iota(du, block + j * N);
      r[1][j] = Splat32(frame);
      r[2][j] = Splat32(frame >> 32);
      r[3][j] = Splat32(point * 2ull + 1);
    }
    BoxMuller(r, seed, g);
    if (4 * (block + K * N) <= count) {  // a whole block: the four samples stored interleaved
      for (std::size_t j = 0; j < K; ++j)
        hn::StoreInterleaved4(g[0][j], g[1][j], g[2][j], g[3][j], dd, out + 4 * (block + j * N));
      continue;
    }
    for (std::size_t t = 0; t < 4; ++t) {
      for (std::size_t j = 0; j < K; ++j) hn::Store(g[t][j], dd, a[t] + j * N);
    }
    for (std::size_t i = 4 * block; i < count; ++i) out[i] = a[i % 4][i / 4 - block];
  }
}

// A double in [0, 1) from the top 53 bits of (hi << 32 | lo), exactly: the two halves of the
// 53-bit integer converted by the 2^52 trick, recombined without rounding.
HWY_INLINE VD Uniform53(VU hi, VU lo) {
  const DU du;
  const DD dd;
  const VU v = hn::ShiftRight<11>(hn::Or(hn::ShiftLeft<32>(hi), lo));
  const VU magic = hn::Set(du, 0x4330000000000000ull);
  const VD two52 = hn::Set(dd, 4503599627370496.0);
  const VD high = hn::Sub(hn::BitCast(dd, hn::Or(hn::ShiftRight<32>(v), magic)), two52);
  const VD low =
      hn::Sub(hn::BitCast(dd, hn::Or(hn::And(v, hn::Set(du, 0xFFFFFFFFull)), magic)), two52);
  return hn::Mul(hn::Add(hn::Mul(high, hn::Set(dd, 4294967296.0)), low),
                 hn::Set(dd, 1.1102230246251565e-16));  // 2^-53
}

// The first `width` lanes of v at out (all of them when width is the vector's length).
template <class D>
HWY_INLINE void StoreFirst(D d, hn::Vec<D> v, std::size_t width, hn::TFromD<D>* out) {
  if (width == hn::Lanes(d)) {
    hn::StoreU(v, d, out);
    return;
  }
  alignas(64) hn::TFromD<D> a[hn::MaxLanes(D())];
  hn::Store(v, d, a);
  std::memcpy(out, a, width * sizeof(hn::TFromD<D>));
}

// Values of stream 1 for frames first..first+lanes-1 in lane layout: Gaussian samples (four per
// Philox output), or the uniforms of frame_uniforms (kUniform, two per output), each passed
// through transform(position, first lane, value) before it is stored.
template <bool kUniform, class Transform>
HWY_INLINE void OfGroup(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                        std::size_t lanes, std::size_t count, double* out,
                        const Transform& transform) {
  constexpr std::size_t P = kUniform ? 2 : 4;
  const DU du;
  const DD dd;
  constexpr std::size_t N = hn::MaxLanes(DU());
  const VU low = hn::Set(du, 0xFFFFFFFFull);
  for (std::size_t l0 = 0; l0 < lanes; l0 += N) {
    const VU frame = hn::Iota(du, first + l0);
    const std::size_t width = std::min(N, lanes - l0);
    for (std::size_t block = 0; P * block < count; block += K) {
      VU r[4][K];
      VD g[P][K];
      for (std::size_t j = 0; j < K; ++j) {
        r[0][j] = hn::Set(du, block + j);
        r[1][j] = hn::And(frame, low);
        r[2][j] = hn::ShiftRight<32>(frame);
        r[3][j] = Splat32(point * 2ull + 1);
      }
      if constexpr (kUniform) {
        Philox(r, seed);
        for (std::size_t j = 0; j < K; ++j) {
          g[0][j] = Uniform53(r[0][j], r[1][j]);
          g[1][j] = Uniform53(r[2][j], r[3][j]);
        }
      } else {
        BoxMuller(r, seed, g);
      }
      for (std::size_t j = 0; j < K; ++j) {
        for (std::size_t t = 0; t < P; ++t) {
          const std::size_t row = P * (block + j) + t;
          if (row >= count) break;
          StoreFirst(dd, transform(row, l0, g[t][j]), width, out + row * lanes + l0);
        }
      }
    }
  }
}

void GaussiansOfGroup(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                      std::size_t lanes, std::size_t count, double* out) {
  OfGroup<false>(seed, point, first, lanes, count, out,
                 [](std::size_t, std::size_t, VD x) { return x; });
}

// The channel LLRs of transmit(), lane by lane: AWGN scale ((1 - 2 c) + value x) (multiply then
// add, no fusing); BSC +-magnitude with the bit flipped where the uniform is below value; BEC 0
// where the uniform is below value, else +-magnitude.
void ChannelOfGroup(std::uint64_t seed, std::uint32_t point, std::uint64_t first, std::size_t lanes,
                    std::size_t count, const std::uint64_t* codeword, ChannelKind kind,
                    double value, double magnitude, double* out) {
  const DD dd;
  const VD v = hn::Set(dd, value), k = hn::Set(dd, magnitude);
  const VD plus = hn::Set(dd, 1.0), minus = hn::Set(dd, -1.0);
  auto sent = [&](std::size_t row, std::size_t l0) {
    std::uint8_t bytes[8] = {};
    const std::uint64_t bits = codeword[row] >> l0;
    std::memcpy(bytes, &bits, 8);
    return hn::LoadMaskBits(dd, bytes);
  };
  if (kind == ChannelKind::awgn) {
    OfGroup<false>(seed, point, first, lanes, count, out,
                   [&](std::size_t row, std::size_t l0, VD x) {
                     const VD sign = hn::IfThenElse(sent(row, l0), minus, plus);
                     return hn::Mul(k, hn::Add(sign, hn::Mul(v, x)));
                   });
    return;
  }
  const VD negative = hn::Neg(k), zero = hn::Zero(dd);
  OfGroup<true>(seed, point, first, lanes, count, out, [&](std::size_t row, std::size_t l0, VD u) {
    const auto one = sent(row, l0), hit = hn::Lt(u, v);
    if (kind == ChannelKind::bsc) {
      const auto received =
          hn::MaskFromVec(hn::Xor(hn::VecFromMask(dd, one), hn::VecFromMask(dd, hit)));
      return hn::IfThenElse(received, negative, k);
    }
    return hn::IfThenElse(hit, zero, hn::IfThenElse(one, negative, k));
  });
}

// The values the quantized decoders make of ChannelOfGroup's AWGN LLRs (Channel in
// src/decode/simd_kernels-inl.h, LlrQuantizer): round(llr * scale) to nearest, ties to even,
// saturated at +-limit (scale a power of two, limit an integer), straight from the float samples
// x. y = B x -+ A in float32, with A = magnitude * scale and B = A * value rounded to float, is
// within 3 * 2^-24 (A + |B x|) of the exact real value and the double path within 3 * 2^-53 of
// it, so within 2^-21 (A + 8.7 |B|) of the double y (|x| < 8.66). A vector with a lane that
// close to a half-integer, where the two could round apart, is computed again from the double
// LLRs lane by lane; every value is the double path's. Frames go to lanes so that a float
// vector holds consecutive frames of one position: Philox vector j takes frames
// l0 + j N .. l0 + j N + N - 1, all at the same counter.
template <class T>
void FixedChannelOfGroup(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                         std::size_t lanes, std::size_t count, const std::uint64_t* codeword,
                         double value, double magnitude, double scale, double limit, T* out) {
  const DU du;
  const DF df;
  const DI32 di;
  const hn::Rebind<T, DI32> dt;
  constexpr std::size_t N = hn::MaxLanes(DU());  // frames per Philox vector
  constexpr std::size_t F = hn::MaxLanes(DF());  // frames per float vector
  const LlrQuantizer quantize(scale, limit);
  const double a = magnitude * scale, b = a * value;
  const VF plus = hn::Set(df, static_cast<float>(a)), minus = hn::Neg(plus);
  const VF slope = hn::Set(df, static_cast<float>(b)), half = hn::Set(df, 0.5f);
  const VF close = hn::Set(df, static_cast<float>(0x1p-21 * (a + 8.7 * std::abs(b))));
  const VF high = hn::Set(df, static_cast<float>(limit)), low = hn::Neg(high);
  alignas(64) float x[F];
  alignas(64) std::int32_t q[F];
  for (std::size_t l0 = 0; l0 < lanes; l0 += K * N) {
    VU frame_low[K], frame_high[K];
    for (std::size_t j = 0; j < K; ++j) {
      const VU frame = hn::Iota(du, first + l0 + j * N);
      frame_low[j] = hn::And(frame, hn::Set(du, 0xFFFFFFFFull));
      frame_high[j] = hn::ShiftRight<32>(frame);
    }
    for (std::size_t block = 0; 4 * block < count; ++block) {
      VU r[4][K];
      for (std::size_t j = 0; j < K; ++j) {
        r[0][j] = hn::Set(du, block);
        r[1][j] = frame_low[j];
        r[2][j] = frame_high[j];
        r[3][j] = Splat32(point * 2ull + 1);
      }
      VF g[4][KF];
      BoxMullerFloat(r, seed, g);
      for (std::size_t t = 0; t < 4 && 4 * block + t < count; ++t) {
        const std::size_t row = 4 * block + t;
        for (std::size_t f = 0; f < KF && l0 + f * F < lanes; ++f) {
          const std::size_t l = l0 + f * F, width = std::min(F, lanes - l);
          const std::uint64_t bits = codeword[row] >> l;
          std::uint8_t bytes[8];
          std::memcpy(bytes, &bits, 8);
          const VF y = hn::Add(hn::Mul(slope, g[t][f]),
                               hn::IfThenElse(hn::LoadMaskBits(df, bytes), minus, plus));
          const VF rounded = hn::Round(y);
          auto q32 = hn::ConvertTo(di, hn::Min(hn::Max(rounded, low), high));
          const auto tie = hn::Le(hn::Sub(half, hn::Abs(hn::Sub(y, rounded))), close);
          if (HWY_UNLIKELY(!hn::AllFalse(df, tie))) {
            hn::Store(g[t][f], df, x);
            for (std::size_t i = 0; i < width; ++i) {
              const double sign = (bits >> i) & 1u ? -1.0 : 1.0;
              q[i] = quantize(magnitude * (sign + value * static_cast<double>(x[i])));
            }
            q32 = hn::Load(di, q);
          }
          StoreFirst(dt, hn::DemoteTo(dt, q32), width, out + row * lanes + l);
        }
      }
    }
  }
}

void FixedChannelOfGroup8(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                          std::size_t lanes, std::size_t count, const std::uint64_t* codeword,
                          double value, double magnitude, double scale, double limit,
                          std::int8_t* out) {
  FixedChannelOfGroup(seed, point, first, lanes, count, codeword, value, magnitude, scale, limit,
                      out);
}
void FixedChannelOfGroup16(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                           std::size_t lanes, std::size_t count, const std::uint64_t* codeword,
                           double value, double magnitude, double scale, double limit,
                           std::int16_t* out) {
  FixedChannelOfGroup(seed, point, first, lanes, count, codeword, value, magnitude, scale, limit,
                      out);
}

void BitsOfGroup(std::uint64_t seed, std::uint32_t point, std::uint64_t first, std::size_t lanes,
                 std::size_t count, std::uint64_t* masks) {
  const DU du;
  constexpr std::size_t N = hn::MaxLanes(DU());
  const VU c3 = Splat32(point * 2ull), low = hn::Set(du, 0xFFFFFFFFull), one = hn::Set(du, 1);
  for (std::size_t i = 0; i < count; ++i) masks[i] = 0;
  for (std::size_t l0 = 0; l0 < lanes; l0 += N) {
    const VU frame = hn::Iota(du, first + l0);
    const VU c1 = hn::And(frame, low), c2 = hn::ShiftRight<32>(frame);
    const std::uint64_t keep = lanes - l0 >= 64 ? ~0ull : (1ull << (lanes - l0)) - 1;
    for (std::size_t first_block = 0; 128 * first_block < count; first_block += K) {
      VU r[4][K];
      for (std::size_t j = 0; j < K; ++j) {
        r[0][j] = hn::Set(du, first_block + j);
        r[1][j] = c1;
        r[2][j] = c2;
        r[3][j] = c3;
      }
      Philox(r, seed);
      for (std::size_t i = 128 * first_block; i < 128 * (first_block + K) && i < count; ++i) {
        const std::size_t j = i / 128 - first_block, bit_index = i % 128;
        const VU bit = hn::And(
            hn::ShiftRightSame(r[bit_index / 32][j], static_cast<int>(bit_index % 32)), one);
        std::uint8_t bytes[8] = {};
        hn::StoreMaskBits(du, hn::Ne(bit, hn::Zero(du)), bytes);
        std::uint64_t m = 0;
        for (std::size_t k = 0; k < (N + 7) / 8; ++k) m |= std::uint64_t{bytes[k]} << (8 * k);
        masks[i] |= (m & keep) << l0;
      }
    }
  }
}

}  // namespace tannery::detail::HWY_NAMESPACE
HWY_AFTER_NAMESPACE();

#if HWY_ONCE
namespace tannery::detail {

HWY_EXPORT(GaussiansOfFrame);
HWY_EXPORT(GaussiansOfGroup);
HWY_EXPORT(ChannelOfGroup);
HWY_EXPORT(BitsOfGroup);
HWY_EXPORT(FixedChannelOfGroup8);
HWY_EXPORT(FixedChannelOfGroup16);

void gaussians_of_frame(std::uint64_t seed, std::uint32_t point, std::uint64_t frame,
                        std::size_t count, double* out) {
  HWY_DYNAMIC_DISPATCH(GaussiansOfFrame)(seed, point, frame, count, out);
}
void gaussians_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                        std::size_t lanes, std::size_t count, double* out) {
  HWY_DYNAMIC_DISPATCH(GaussiansOfGroup)(seed, point, first, lanes, count, out);
}
void channel_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                      std::size_t lanes, std::size_t count, const std::uint64_t* codeword,
                      ChannelKind kind, double value, double magnitude, double* out) {
  HWY_DYNAMIC_DISPATCH(ChannelOfGroup)
  (seed, point, first, lanes, count, codeword, kind, value, magnitude, out);
}
void bits_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first, std::size_t lanes,
                   std::size_t count, std::uint64_t* masks) {
  HWY_DYNAMIC_DISPATCH(BitsOfGroup)(seed, point, first, lanes, count, masks);
}
void fixed_channel_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                            std::size_t lanes, std::size_t count, const std::uint64_t* codeword,
                            double value, double magnitude, double scale, double limit,
                            std::int8_t* out) {
  HWY_DYNAMIC_DISPATCH(FixedChannelOfGroup8)
  (seed, point, first, lanes, count, codeword, value, magnitude, scale, limit, out);
}
void fixed_channel_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                            std::size_t lanes, std::size_t count, const std::uint64_t* codeword,
                            double value, double magnitude, double scale, double limit,
                            std::int16_t* out) {
  HWY_DYNAMIC_DISPATCH(FixedChannelOfGroup16)
  (seed, point, first, lanes, count, codeword, value, magnitude, scale, limit, out);
}

}  // namespace tannery::detail
#endif
