// The demapper in SIMD, compiled for every Highway target. Two-level one-dimensional tables
// (BPSK) in double precision: (x0 - x1) a y / sigma^2, the binary channel's LLR bit for bit.
// Larger tables in single precision, a vector of floats at a time: per symbol the metrics
// t_x = (2 a y.x - a^2 |x|^2) / (2 sigma^2) of every point (multiplies and adds in a fixed order,
// no contraction), then per bit the largest metric of each bit value (max-log) or
// log(sum_0 e^(t - t_max) / sum_1 e^(t - t_max)) with each term clamped at e^-80 (exact), with the
// fixed-order exp and log of src/base/fixed_order_math-inl.h: the same bits on every target.
#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "src/channel/demap_kernels.cpp"
#include <hwy/foreach_target.h>  // IWYU pragma: keep

#include <hwy/highway.h>
#include <algorithm>

#include "src/base/fixed_order_math-inl.h"
#include "src/channel/demap_kernels.hpp"

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {

namespace hn = hwy::HWY_NAMESPACE;

using DD = hn::ScalableTag<double>;
using DF = hn::ScalableTag<float>;
using VF = hn::Vec<DF>;

constexpr std::size_t kMaxPoints = 256;

// One vector of symbols in single precision: received values, amplitudes and the bits' LLRs
// (out[b * NF + lane]). P is the number of points when it is small enough for the metrics to stay
// in registers (4, 8, 16: the PAMs of 16-, 64- and 256-QAM), else kMaxPoints (any table).
// The table in single precision: 2 x_i, 2 x_q and |x|^2 per point.
struct FloatTable {
  unsigned bits = 1;
  float two_i[kMaxPoints], two_q[kMaxPoints], energy[kMaxPoints];
};

template <std::size_t P>
HWY_INLINE void DemapVector(const FloatTable& t, bool exact, const float* yi, const float* yq,
                            const float* amplitude, float inv_n0, float* out) {
  const DF df;
  const std::size_t points = P < kMaxPoints ? P : std::size_t{1} << t.bits;
  const VF a = hn::Load(df, amplitude);
  const VF ui = hn::Mul(a, hn::Load(df, yi));
  const VF uq = yq ? hn::Mul(a, hn::Load(df, yq)) : hn::Zero(df);  // yq: t two-dimensional
  const VF aa = hn::Mul(a, a);
  const VF scale = hn::Set(df, inv_n0);
  VF metric[P];
  VF top = hn::Set(df, -HUGE_VALF);
  for (std::size_t x = 0; x < points; ++x) {
    VF dot = hn::Mul(hn::Set(df, t.two_i[x]), ui);
    if (yq) dot = hn::Add(dot, hn::Mul(hn::Set(df, t.two_q[x]), uq));
    metric[x] = hn::Mul(hn::Sub(dot, hn::Mul(aa, hn::Set(df, t.energy[x]))), scale);
    top = hn::Max(top, metric[x]);
  }
  if (exact) {
    const VF floor = hn::Set(df, -80.0f);
    for (std::size_t x = 0; x < points; ++x)
      metric[x] = Exp(hn::Max(hn::Sub(metric[x], top), floor));
  }
  constexpr std::size_t N = hn::MaxLanes(DF());
  for (unsigned b = 0; b < t.bits; ++b) {
    const unsigned shift = t.bits - 1 - b;
    VF zero = exact ? hn::Zero(df) : hn::Set(df, -HUGE_VALF), one = zero;
    for (std::size_t x = 0; x < points; ++x) {
      VF& sum = (x >> shift) & 1 ? one : zero;
      sum = exact ? hn::Add(sum, metric[x]) : hn::Max(sum, metric[x]);
    }
    hn::Store(exact ? LnRatio(zero, one) : hn::Sub(zero, one), df, out + b * N);
  }
}

void DemapSymbols(const DemapTable& t, bool exact, std::size_t count, const double* yi,
                  const double* yq, const double* amplitude, double noise_variance, double* out) {
  if (t.in_phase.size() == 2 && yq == nullptr) {
    // Two levels +-x0: both demappers give (x0 - x1) a y / sigma^2.
    const double factor = (t.in_phase[0] - t.in_phase[1]) / noise_variance;
    for (std::size_t c = 0; c < count; ++c)
      out[c] = factor * ((amplitude ? amplitude[c] : 1.0) * yi[c]);
    return;
  }
  constexpr std::size_t N = hn::MaxLanes(DF());
  const auto inv_n0 = static_cast<float>(1 / (2 * noise_variance));
  const std::size_t points = std::size_t{1} << t.bits;
  FloatTable table;
  table.bits = t.bits;
  for (std::size_t x = 0; x < points; ++x) {
    const auto pi = static_cast<float>(t.in_phase[x]);
    const auto pq = yq ? static_cast<float>(t.quadrature[x]) : 0.0f;
    table.two_i[x] = 2 * pi;
    table.two_q[x] = 2 * pq;
    table.energy[x] = pi * pi + pq * pq;
  }
  auto* const vector = points == 4    ? &DemapVector<4>
                       : points == 8  ? &DemapVector<8>
                       : points == 16 ? &DemapVector<16>
                                      : &DemapVector<kMaxPoints>;
  HWY_ALIGN float fi[N], fq[N], fa[N], fo[32 * N];
  // In single precision a vector of symbols at a time; past the end received 0, amplitude 1.
  auto convert = [&](const double* from, std::size_t c, std::size_t here, float fill, float* to) {
    if (!from) return std::fill(to, to + N, fill);
    if (here == N) {
      for (std::size_t i = 0; i < N; ++i) to[i] = static_cast<float>(from[c + i]);
    } else {
      for (std::size_t i = 0; i < N; ++i) to[i] = i < here ? static_cast<float>(from[c + i]) : fill;
    }
  };
  for (std::size_t c = 0; c < count; c += N) {
    const std::size_t here = std::min(N, count - c);
    convert(yi, c, here, 0.0f, fi);
    convert(yq, c, here, 0.0f, fq);
    convert(amplitude, c, here, 1.0f, fa);
    vector(table, exact, fi, yq ? fq : nullptr, fa, inv_n0, fo);
    for (unsigned b = 0; b < t.bits; ++b) {
      double* to = out + b * count + c;
      const float* from = fo + b * N;
      if (here == N) {
        for (std::size_t i = 0; i < N; ++i) to[i] = from[i];
      } else {
        for (std::size_t i = 0; i < here; ++i) to[i] = from[i];
      }
    }
  }
}

}  // namespace tannery::detail::HWY_NAMESPACE
HWY_AFTER_NAMESPACE();

#if HWY_ONCE
namespace tannery::detail {

HWY_EXPORT(DemapSymbols);

void demap_symbols(const DemapTable& table, bool exact, std::size_t count, const double* in_phase,
                   const double* quadrature, const double* amplitude, double noise_variance,
                   double* out) {
  HWY_DYNAMIC_DISPATCH(DemapSymbols)
  (table, exact, count, in_phase, quadrature, amplitude, noise_variance, out);
}

}  // namespace tannery::detail
#endif
