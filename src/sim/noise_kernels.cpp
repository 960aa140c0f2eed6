// Philox4x32-10 and the Box-Muller transform in SIMD, compiled for every Highway target. The
// arithmetic is IEEE add, subtract, multiply, divide and square root in a fixed order (this file
// is compiled without floating-point contraction), plus integer and bit operations, so every
// target gives the same bits, and a frame's samples do not depend on how frames are batched.
#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "src/sim/noise_kernels.cpp"
#include <hwy/foreach_target.h>  // IWYU pragma: keep

#include <hwy/highway.h>
#include <cstring>

#include "src/sim/noise_kernels.hpp"

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {

namespace hn = hwy::HWY_NAMESPACE;

using DU = hn::ScalableTag<std::uint64_t>;
using DD = hn::Rebind<double, DU>;
using VU = hn::Vec<DU>;
using VD = hn::Vec<DD>;

struct Words {
  VU w[4];  // the four 32-bit output words, one per 64-bit lane
};

// Philox4x32 with 10 rounds (Random123's constants); counter words in the low halves of 64-bit
// lanes, the key the same for every lane.
// The 64-bit product of the 32-bit value in each lane and m.
template <std::uint64_t m>
HWY_INLINE VU Mul32(VU x) {
  const DU du;
#if HWY_TARGET == HWY_SCALAR
  return hn::Set(du, hn::GetLane(x) * m);
#else
  const hn::Repartition<std::uint32_t, DU> d32;
  return hn::MulEven(hn::BitCast(d32, x), hn::BitCast(d32, hn::Set(du, m)));
#endif
}

HWY_INLINE Words Philox(VU c0, VU c1, VU c2, VU c3, std::uint64_t seed) {
  const DU du;
  const VU low = hn::Set(du, 0xFFFFFFFFull);
  std::uint32_t k0 = static_cast<std::uint32_t>(seed), k1 = static_cast<std::uint32_t>(seed >> 32);
  for (int round = 0; round < 10; ++round) {
    if (round > 0) k0 += 0x9E3779B9u, k1 += 0xBB67AE85u;
    const VU p0 = Mul32<0xD2511F53ull>(c0);
    const VU p1 = Mul32<0xCD9E8D57ull>(c2);
    const VU n0 = hn::Xor(hn::Xor(hn::ShiftRight<32>(p1), c1), hn::Set(du, k0));
    const VU n2 = hn::Xor(hn::Xor(hn::ShiftRight<32>(p0), c3), hn::Set(du, k1));
    c1 = hn::And(p1, low);
    c3 = hn::And(p0, low);
    c0 = n0;
    c2 = n2;
  }
  return Words{{c0, c1, c2, c3}};
}

// A double in [1, 2) whose 52 fraction bits are the top 52 bits of x.
HWY_INLINE VD OneToTwo(VU x) {
  return hn::BitCast(DD(), hn::Or(hn::ShiftRight<12>(x), hn::Set(DU(), 0x3FF0000000000000ull)));
}

// Natural logarithm of x in (0, 1] (normal numbers): x = 2^k m with m in [sqrt(1/2), sqrt(2)),
// log m = 2 atanh(s), s = (m - 1)/(m + 1), |s| < 0.172, by its series to s^21 (truncation below
// 1e-18 relative); k log 2 with log 2 split in two (the fdlibm constants).
HWY_INLINE VD Ln(VD x) {
  const DU du;
  const DD dd;
  const VU bits = hn::BitCast(du, x);
  VD m = hn::BitCast(dd, hn::Or(hn::And(bits, hn::Set(du, 0x000FFFFFFFFFFFFFull)),
                                hn::Set(du, 0x3FF0000000000000ull)));
  // The biased exponent as a double, exactly: 2^52 + e read back, minus 2^52 + 1023.
  VD k =
      hn::Sub(hn::BitCast(dd, hn::Or(hn::ShiftRight<52>(bits), hn::Set(du, 0x4330000000000000ull))),
              hn::Set(dd, 4503599627371519.0));
  const auto big = hn::Gt(m, hn::Set(dd, 1.4142135623730951));
  m = hn::IfThenElse(big, hn::Mul(m, hn::Set(dd, 0.5)), m);
  k = hn::Add(k, hn::IfThenElseZero(big, hn::Set(dd, 1.0)));
  const VD s = hn::Div(hn::Sub(m, hn::Set(dd, 1.0)), hn::Add(m, hn::Set(dd, 1.0)));
  const VD z = hn::Mul(s, s);
  VD p = hn::Set(dd, 1.0 / 21);
  for (int j = 9; j >= 0; --j) p = hn::Add(hn::Mul(p, z), hn::Set(dd, 1.0 / (2 * j + 1)));
  const VD log_m = hn::Mul(hn::Add(s, s), p);
  return hn::Add(hn::Mul(k, hn::Set(dd, 6.93147180369123816490e-01)),
                 hn::Add(hn::Mul(k, hn::Set(dd, 1.90821492927058770002e-10)), log_m));
}

// Taylor coefficient of a^i in sin (odd i) or cos (even i): (-1)^(i/2) / i!.
constexpr double TaylorCoefficient(int i) {
  double c = 1;
  for (int j = 2; j <= i; ++j) c /= j;
  return (i / 2) % 2 ? -c : c;
}

// sin a and cos a for a in [0, pi/4] by their Taylor series to a^17 and a^18 (truncation below
// 1e-16).
HWY_INLINE void SinCos(VD a, VD& sin_a, VD& cos_a) {
  const DD dd;
  const VD z = hn::Mul(a, a);
  VD s = hn::Set(dd, TaylorCoefficient(17)), c = hn::Set(dd, TaylorCoefficient(18));
  for (int i = 15; i >= 1; i -= 2) s = hn::Add(hn::Mul(s, z), hn::Set(dd, TaylorCoefficient(i)));
  for (int i = 16; i >= 0; i -= 2) c = hn::Add(hn::Mul(c, z), hn::Set(dd, TaylorCoefficient(i)));
  sin_a = hn::Mul(s, a);
  cos_a = c;
}

// Two standard normal samples from one Philox output: radius from the first 64 bits, angle
// from the second (three bits pick the octant, 50 the position inside it).
HWY_INLINE void BoxMuller(const Words& r, VD& g0, VD& g1) {
  const DU du;
  const DD dd;
  const VU a = hn::Or(hn::ShiftLeft<32>(r.w[0]), r.w[1]);
  const VU b = hn::Or(hn::ShiftLeft<32>(r.w[2]), r.w[3]);
  const VD one_minus_u = hn::Sub(hn::Set(dd, 2.0), OneToTwo(a));  // in (0, 1], exact
  const VD radius = hn::Sqrt(hn::Mul(hn::Set(dd, -2.0), Ln(one_minus_u)));
  const VU octant = hn::ShiftRight<61>(b);
  const VD frac = hn::Sub(OneToTwo(hn::ShiftLeft<3>(b)), hn::Set(dd, 1.0));  // 50 bits, exact
  const auto odd = hn::RebindMask(dd, hn::Ne(hn::And(octant, hn::Set(du, 1)), hn::Zero(du)));
  const VD x = hn::IfThenElse(odd, hn::Sub(hn::Set(dd, 1.0), frac), frac);
  VD s, c;
  SinCos(hn::Mul(x, hn::Set(dd, 0.78539816339744830962)), s, c);
  // Octant q: angle q pi/4 + x pi/4 (q even) or (q + 1) pi/4 - x pi/4 (q odd).
  const auto swap = hn::RebindMask(
      dd, hn::Ne(hn::And(hn::Add(octant, hn::Set(du, 1)), hn::Set(du, 2)), hn::Zero(du)));
  const VU cos_sign = hn::ShiftLeft<61>(hn::And(hn::Add(octant, hn::Set(du, 2)), hn::Set(du, 4)));
  const VU sin_sign = hn::ShiftLeft<61>(hn::And(octant, hn::Set(du, 4)));
  const VD cos_t = hn::Xor(hn::IfThenElse(swap, s, c), hn::BitCast(dd, cos_sign));
  const VD sin_t = hn::Xor(hn::IfThenElse(swap, c, s), hn::BitCast(dd, sin_sign));
  g0 = hn::Mul(radius, cos_t);
  g1 = hn::Mul(radius, sin_t);
}

HWY_INLINE VU Splat32(std::uint64_t x) {
  return hn::Set(DU(), x & 0xFFFFFFFFull);
}

void GaussiansOfFrame(std::uint64_t seed, std::uint32_t point, std::uint64_t frame,
                      std::size_t count, double* out) {
  const DU du;
  const DD dd;
  constexpr std::size_t N = hn::MaxLanes(DU());
  const VU c1 = Splat32(frame), c2 = Splat32(frame >> 32), c3 = Splat32(point * 2ull + 1);
  alignas(64) double a[N], b[N];
  for (std::size_t block = 0; 2 * block < count; block += N) {
    const Words r = Philox(hn::Iota(du, block), c1, c2, c3, seed);
    VD g0, g1;
    BoxMuller(r, g0, g1);
    hn::Store(g0, dd, a);
    hn::Store(g1, dd, b);
    for (std::size_t i = 0; i < N && 2 * (block + i) < count; ++i) {
      out[2 * (block + i)] = a[i];
      if (2 * (block + i) + 1 < count) out[2 * (block + i) + 1] = b[i];
    }
  }
}

void GaussiansOfGroup(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                      std::size_t lanes, std::size_t count, double* out) {
  const DU du;
  const DD dd;
  constexpr std::size_t N = hn::MaxLanes(DU());
  const VU c3 = Splat32(point * 2ull + 1), low = hn::Set(du, 0xFFFFFFFFull);
  alignas(64) double a[N], b[N];
  for (std::size_t l0 = 0; l0 < lanes; l0 += N) {
    const VU frame = hn::Iota(du, first + l0);
    const VU c1 = hn::And(frame, low), c2 = hn::ShiftRight<32>(frame);
    const std::size_t width = std::min(N, lanes - l0);
    for (std::size_t block = 0; 2 * block < count; ++block) {
      const Words r = Philox(hn::Set(du, block), c1, c2, c3, seed);
      VD g0, g1;
      BoxMuller(r, g0, g1);
      double* row0 = out + 2 * block * lanes + l0;
      double* row1 = row0 + lanes;
      const bool second = 2 * block + 1 < count;
      if (width == N) {
        hn::StoreU(g0, dd, row0);
        if (second) hn::StoreU(g1, dd, row1);
      } else {
        hn::Store(g0, dd, a);
        hn::Store(g1, dd, b);
        std::memcpy(row0, a, width * sizeof(double));
        if (second) std::memcpy(row1, b, width * sizeof(double));
      }
    }
  }
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
    for (std::size_t block = 0; 128 * block < count; ++block) {
      const Words r = Philox(hn::Set(du, block), c1, c2, c3, seed);
      for (std::size_t j = 0; j < 128 && 128 * block + j < count; ++j) {
        const VU bit = hn::And(hn::ShiftRightSame(r.w[j / 32], static_cast<int>(j % 32)), one);
        std::uint8_t bytes[8] = {};
        hn::StoreMaskBits(du, hn::Ne(bit, hn::Zero(du)), bytes);
        std::uint64_t m = 0;
        for (std::size_t k = 0; k < (N + 7) / 8; ++k) m |= std::uint64_t{bytes[k]} << (8 * k);
        masks[128 * block + j] |= (m & keep) << l0;
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
HWY_EXPORT(BitsOfGroup);

void gaussians_of_frame(std::uint64_t seed, std::uint32_t point, std::uint64_t frame,
                        std::size_t count, double* out) {
  HWY_DYNAMIC_DISPATCH(GaussiansOfFrame)(seed, point, frame, count, out);
}
void gaussians_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                        std::size_t lanes, std::size_t count, double* out) {
  HWY_DYNAMIC_DISPATCH(GaussiansOfGroup)(seed, point, first, lanes, count, out);
}
void bits_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first, std::size_t lanes,
                   std::size_t count, std::uint64_t* masks) {
  HWY_DYNAMIC_DISPATCH(BitsOfGroup)(seed, point, first, lanes, count, masks);
}

}  // namespace tannery::detail
#endif
