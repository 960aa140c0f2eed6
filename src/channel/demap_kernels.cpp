// The demapper in SIMD, compiled for every Highway target: per symbol the metrics
// t_x = (2 a y.x - a^2 |x|^2) / (2 sigma^2) of every point (multiplies and adds in a fixed order,
// no contraction), then per bit the largest metric of each bit value (max-log) or
// log(sum_0 e^(t - t_max) / sum_1 e^(t - t_max)) with each term clamped at e^-700 (exact), with the
// fixed-order exp and log of src/base/fixed_order_math-inl.h: the same bits on every target.
#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "src/channel/demap_kernels.cpp"
#include <hwy/foreach_target.h>  // IWYU pragma: keep

#include <hwy/highway.h>
#include <algorithm>
#include <cstring>

#include "src/base/fixed_order_math-inl.h"
#include "src/channel/demap_kernels.hpp"

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {

namespace hn = hwy::HWY_NAMESPACE;

using DD = hn::ScalableTag<double>;
using VD = hn::Vec<DD>;

constexpr std::size_t kMaxPoints = 256;

// One vector of symbols at offset c (all lanes valid).
HWY_INLINE void DemapVector(const DemapTable& t, bool exact, const double* yi, const double* yq,
                            const double* amplitude, double inv_n0, double two_level_factor,
                            std::size_t count, std::size_t c, double* out) {
  const DD dd;
  const std::size_t points = std::size_t{1} << t.bits;
  const VD a = amplitude ? hn::LoadU(dd, amplitude + c) : hn::Set(dd, 1.0);
  const VD ui = hn::Mul(a, hn::LoadU(dd, yi + c));
  if (points == 2 && yq == nullptr) {
    // Two levels +-x0: both demappers give (x0 - x1) a y / sigma^2.
    hn::StoreU(hn::Mul(hn::Set(dd, two_level_factor), ui), dd, out + c);
    return;
  }
  const VD uq = yq ? hn::Mul(a, hn::LoadU(dd, yq + c)) : hn::Zero(dd);
  const VD aa = hn::Mul(a, a);
  const VD scale = hn::Set(dd, inv_n0);
  HWY_ALIGN double metric_store[kMaxPoints * hn::MaxLanes(DD())];
  constexpr std::size_t N = hn::MaxLanes(DD());
  VD top = hn::Set(dd, -HUGE_VAL);
  for (std::size_t x = 0; x < points; ++x) {
    const double pi = t.in_phase[x], pq = yq ? t.quadrature[x] : 0.0;
    VD dot = hn::Mul(hn::Set(dd, 2 * pi), ui);
    if (yq) dot = hn::Add(dot, hn::Mul(hn::Set(dd, 2 * pq), uq));
    const VD metric = hn::Mul(hn::Sub(dot, hn::Mul(aa, hn::Set(dd, pi * pi + pq * pq))), scale);
    hn::Store(metric, dd, metric_store + x * N);
    top = hn::Max(top, metric);
  }
  if (exact) {
    const VD floor = hn::Set(dd, -700.0);
    for (std::size_t x = 0; x < points; ++x) {
      const VD m = hn::Load(dd, metric_store + x * N);
      hn::Store(Exp(hn::Max(hn::Sub(m, top), floor)), dd, metric_store + x * N);
    }
  }
  for (unsigned b = 0; b < t.bits; ++b) {
    const unsigned shift = t.bits - 1 - b;
    VD zero = exact ? hn::Zero(dd) : hn::Set(dd, -HUGE_VAL), one = zero;
    for (std::size_t x = 0; x < points; ++x) {
      const VD v = hn::Load(dd, metric_store + x * N);
      VD& sum = (x >> shift) & 1 ? one : zero;
      sum = exact ? hn::Add(sum, v) : hn::Max(sum, v);
    }
    const VD llr = exact ? Ln(hn::Div(zero, one)) : hn::Sub(zero, one);
    hn::StoreU(llr, dd, out + b * count + c);
  }
}

void DemapSymbols(const DemapTable& t, bool exact, std::size_t count, const double* yi,
                  const double* yq, const double* amplitude, double noise_variance, double* out) {
  constexpr std::size_t N = hn::MaxLanes(DD());
  const double inv_n0 = 1 / (2 * noise_variance);
  const double two_level_factor = (t.in_phase[0] - t.in_phase[1]) / noise_variance;
  std::size_t c = 0;
  for (; c + N <= count; c += N)
    DemapVector(t, exact, yi, yq, amplitude, inv_n0, two_level_factor, count, c, out);
  if (c == count) return;
  // The last partial vector through padded copies (received 0, amplitude 1).
  HWY_ALIGN double pi[N] = {}, pq[N] = {}, pa[N], po[32 * N];
  std::fill(pa, pa + N, 1.0);
  const std::size_t rest = count - c;
  std::memcpy(pi, yi + c, rest * sizeof(double));
  if (yq) std::memcpy(pq, yq + c, rest * sizeof(double));
  if (amplitude) std::memcpy(pa, amplitude + c, rest * sizeof(double));
  DemapVector(t, exact, pi, yq ? pq : nullptr, pa, inv_n0, two_level_factor, N, 0, po);
  for (unsigned b = 0; b < t.bits; ++b)
    std::memcpy(out + b * count + c, po + b * N, rest * sizeof(double));
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
