// Philox4x32-10 and the Box-Muller transform in SIMD, compiled for every Highway target. The
// arithmetic is IEEE add, subtract, multiply, fused multiply-add, divide and square root in a
// fixed order (this file is compiled without floating-point contraction; targets without an FMA
// instruction use the C library's correctly rounded fma), plus integer and bit operations, so
// every target gives the same bits, and a frame's samples do not depend on how frames are
// batched.
#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "src/sim/noise_kernels.cpp"
#include <hwy/foreach_target.h>  // IWYU pragma: keep

#include <hwy/highway.h>
#include <cmath>
#include <cstring>

#include "src/base/fixed_order_math-inl.h"
#include "src/sim/noise_kernels.hpp"

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {

namespace hn = hwy::HWY_NAMESPACE;

using DU = hn::ScalableTag<std::uint64_t>;
using DD = hn::Rebind<double, DU>;
using VU = hn::Vec<DU>;
using VD = hn::Vec<DD>;

// Every step below works on K independent vectors at a time, so the long dependency chains of
// Philox and of the polynomials overlap (the arithmetic of each lane is unchanged). K = 2: 1.2x
// the samples/s of K = 1 in tests/bench/pipeline_bench; K = 3 or 4 run out of registers and
// halve it.
constexpr std::size_t K = 2;

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

// A double in [1, 2) whose 52 fraction bits are the top 52 bits of x.
HWY_INLINE VD OneToTwo(VU x) {
  return hn::BitCast(DD(), hn::Or(hn::ShiftRight<12>(x), hn::Set(DU(), 0x3FF0000000000000ull)));
}

// Taylor coefficient of a^i in sin (odd i) or cos (even i): (-1)^(i/2) / i!.
constexpr double TaylorCoefficient(int i) {
  double c = 1;
  for (int j = 2; j <= i; ++j) c /= j;
  return (i / 2) % 2 ? -c : c;
}

// sin a and cos a for a in [0, pi/4] by their Taylor series to a^17 and a^18 (truncation below
// 1e-16).
HWY_INLINE void SinCos(const VD (&a)[K], VD (&sin_a)[K], VD (&cos_a)[K]) {
  const DD dd;
  VD z[K];
  for (std::size_t j = 0; j < K; ++j) {
    z[j] = hn::Mul(a[j], a[j]);
    sin_a[j] = hn::Set(dd, TaylorCoefficient(17));
    cos_a[j] = hn::Set(dd, TaylorCoefficient(18));
  }
  for (int i = 16; i >= 2; i -= 2) {
    for (std::size_t j = 0; j < K; ++j) {
      sin_a[j] = Fma(sin_a[j], z[j], hn::Set(dd, TaylorCoefficient(i - 1)));
      cos_a[j] = Fma(cos_a[j], z[j], hn::Set(dd, TaylorCoefficient(i)));
    }
  }
  for (std::size_t j = 0; j < K; ++j) {
    sin_a[j] = hn::Mul(sin_a[j], a[j]);
    cos_a[j] = Fma(cos_a[j], z[j], hn::Set(dd, TaylorCoefficient(0)));
  }
}

// Two standard normal samples per lane from one Philox output r: radius from the first 64 bits,
// angle from the second (three bits pick the octant, 52 the position inside it).
HWY_INLINE void BoxMuller(const VU (&r)[4][K], VD (&g0)[K], VD (&g1)[K]) {
  const DU du;
  const DD dd;
  VD radius[K], angle[K], s[K], c[K];
  VU octant[K];
  for (std::size_t j = 0; j < K; ++j) {
    const VU a = hn::Or(hn::ShiftLeft<32>(r[0][j]), r[1][j]);
    const VU b = hn::Or(hn::ShiftLeft<32>(r[2][j]), r[3][j]);
    radius[j] = hn::Sub(hn::Set(dd, 2.0), OneToTwo(a));  // 1 - u in (0, 1], exact
    octant[j] = hn::ShiftRight<61>(b);
    const VD frac = hn::Sub(OneToTwo(hn::ShiftLeft<3>(b)), hn::Set(dd, 1.0));  // exact
    const auto odd = hn::RebindMask(dd, hn::Ne(hn::And(octant[j], hn::Set(du, 1)), hn::Zero(du)));
    const VD x = hn::IfThenElse(odd, hn::Sub(hn::Set(dd, 1.0), frac), frac);
    angle[j] = hn::Mul(x, hn::Set(dd, 0.78539816339744830962));
  }
  Ln(radius);
  SinCos(angle, s, c);
  for (std::size_t j = 0; j < K; ++j) {
    radius[j] = hn::Sqrt(hn::Mul(hn::Set(dd, -2.0), radius[j]));
    // Octant q: angle q pi/4 + x pi/4 (q even) or (q + 1) pi/4 - x pi/4 (q odd).
    const auto swap = hn::RebindMask(
        dd, hn::Ne(hn::And(hn::Add(octant[j], hn::Set(du, 1)), hn::Set(du, 2)), hn::Zero(du)));
    const VU cos_sign =
        hn::ShiftLeft<61>(hn::And(hn::Add(octant[j], hn::Set(du, 2)), hn::Set(du, 4)));
    const VU sin_sign = hn::ShiftLeft<61>(hn::And(octant[j], hn::Set(du, 4)));
    const VD cos_t = hn::Xor(hn::IfThenElse(swap, s[j], c[j]), hn::BitCast(dd, cos_sign));
    const VD sin_t = hn::Xor(hn::IfThenElse(swap, c[j], s[j]), hn::BitCast(dd, sin_sign));
    g0[j] = hn::Mul(radius[j], cos_t);
    g1[j] = hn::Mul(radius[j], sin_t);
  }
}

HWY_INLINE VU Splat32(std::uint64_t x) {
  return hn::Set(DU(), x & 0xFFFFFFFFull);
}

void GaussiansOfFrame(std::uint64_t seed, std::uint32_t point, std::uint64_t frame,
                      std::size_t count, double* out) {
  const DU du;
  const DD dd;
  constexpr std::size_t N = hn::MaxLanes(DU());
  alignas(64) double a[K][N], b[K][N];
  for (std::size_t block = 0; 2 * block < count; block += K * N) {
    VU r[4][K];
    VD g0[K], g1[K];
    for (std::size_t j = 0; j < K; ++j) {
      r[0][j] = hn::Iota(du, block + j * N);
      r[1][j] = Splat32(frame);
      r[2][j] = Splat32(frame >> 32);
      r[3][j] = Splat32(point * 2ull + 1);
    }
    Philox(r, seed);
    BoxMuller(r, g0, g1);
    if (2 * (block + K * N) <= count) {  // a whole block: the pairs stored interleaved
      for (std::size_t j = 0; j < K; ++j)
        hn::StoreInterleaved2(g0[j], g1[j], dd, out + 2 * (block + j * N));
      continue;
    }
    for (std::size_t j = 0; j < K; ++j) {
      hn::Store(g0[j], dd, a[j]);
      hn::Store(g1[j], dd, b[j]);
    }
    for (std::size_t i = 0; i < K * N && 2 * (block + i) < count; ++i) {
      out[2 * (block + i)] = a[i / N][i % N];
      if (2 * (block + i) + 1 < count) out[2 * (block + i) + 1] = b[i / N][i % N];
    }
  }
}

// Samples of frames first..first+lanes-1 in lane layout, each passed through out(row, lane
// offset, lanes mask unused, value vector) before it is stored: identity for the noise itself,
// the BPSK/AWGN channel for LLRs.
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

// Values of stream 1 for frames first..first+lanes-1 in lane layout: Gaussian samples, or the
// uniforms of frame_uniforms (kUniform), each passed through transform(position, first lane,
// value) before it is stored.
template <bool kUniform, class Transform>
HWY_INLINE void OfGroup(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                        std::size_t lanes, std::size_t count, double* out,
                        const Transform& transform) {
  const DU du;
  const DD dd;
  constexpr std::size_t N = hn::MaxLanes(DU());
  const VU low = hn::Set(du, 0xFFFFFFFFull);
  alignas(64) double a[N], b[N];
  for (std::size_t l0 = 0; l0 < lanes; l0 += N) {
    const VU frame = hn::Iota(du, first + l0);
    const std::size_t width = std::min(N, lanes - l0);
    for (std::size_t block = 0; 2 * block < count; block += K) {
      VU r[4][K];
      VD g0[K], g1[K];
      for (std::size_t j = 0; j < K; ++j) {
        r[0][j] = hn::Set(du, block + j);
        r[1][j] = hn::And(frame, low);
        r[2][j] = hn::ShiftRight<32>(frame);
        r[3][j] = Splat32(point * 2ull + 1);
      }
      Philox(r, seed);
      if constexpr (kUniform) {
        for (std::size_t j = 0; j < K; ++j) {
          g0[j] = Uniform53(r[0][j], r[1][j]);
          g1[j] = Uniform53(r[2][j], r[3][j]);
        }
      } else {
        BoxMuller(r, g0, g1);
      }
      for (std::size_t j = 0; j < K && 2 * (block + j) < count; ++j) {
        const std::size_t row = 2 * (block + j);
        double* row0 = out + row * lanes + l0;
        double* row1 = row0 + lanes;
        const bool second = row + 1 < count;
        const VD x0 = transform(row, l0, g0[j]);
        const VD x1 = second ? transform(row + 1, l0, g1[j]) : g1[j];
        if (width == N) {
          hn::StoreU(x0, dd, row0);
          if (second) hn::StoreU(x1, dd, row1);
        } else {
          hn::Store(x0, dd, a);
          hn::Store(x1, dd, b);
          std::memcpy(row0, a, width * sizeof(double));
          if (second) std::memcpy(row1, b, width * sizeof(double));
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

}  // namespace tannery::detail
#endif
