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

template <class D>
void Layered(D d, const LayeredArgs<hn::TFromD<D>>& a) {
  using T = hn::TFromD<D>;
  using V = hn::Vec<D>;
  constexpr bool kFloat = std::is_floating_point_v<T>;
  const hn::RebindToSigned<D> di;
  using VI = hn::Vec<decltype(di)>;
  const std::size_t L = a.lanes;
  HWY_DASSERT(L == hn::Lanes(d));

  for (std::size_t i = 0; i < a.n * L; i += L) hn::Store(hn::Load(d, a.channel + i), d, a.posterior + i);
  const std::size_t edges = a.check_start[a.m];
  for (std::size_t i = 0; i < edges * L; i += L) hn::Store(hn::Zero(d), d, a.messages + i);
  for (std::size_t l = 0; l < L; ++l) a.iterations_used[l] = a.iterations;

  T* t_store = a.scratch;                      // extrinsic inputs of the check, per edge
  T* fwd = a.scratch + a.max_degree * L;       // sum-product prefix products
  VI done = hn::Zero(di);                      // lanes that met the early-stop rule
  const V zero = hn::Zero(d);
  for (int it = 1; it <= a.iterations; ++it) {
    const auto frozen = hn::MaskFromVec(hn::BitCast(d, done));
    for (std::size_t c = 0; c < a.m; ++c) {
      const std::uint32_t b = a.check_start[c], deg = a.check_start[c + 1] - b;
      if (deg == 0) continue;
      // Extrinsic values t = P - R_old.
      for (std::uint32_t i = 0; i < deg; ++i) {
        const std::size_t v = a.edge_var[b + i];
        const V p = hn::Load(d, a.posterior + v * L), r_old = hn::Load(d, a.messages + (b + i) * L);
        V t;
        if constexpr (kFloat) {
          t = hn::Sub(p, r_old);
        } else {
          // Saturating: with full-width messages P - R can leave the lane's range.
          t = clamp_to(d, hn::SaturatedSub(p, r_old), a.message_limit);
        }
        hn::Store(t, d, t_store + i * L);
      }
      if constexpr (kFloat) {
        if (a.rule == CheckRule::sum_product) {
          // tanh rule with prefix/suffix products; |product| kept below 1 - 2^-23 so atanh is finite.
          const V half = hn::Set(d, T(0.5)), two = hn::Set(d, T(2)), cap = hn::Set(d, T(1 - 1.0 / (1 << 23)));
          V running = hn::Set(d, T(1));
          for (std::uint32_t i = 0; i < deg; ++i) {
            hn::Store(running, d, fwd + i * L);
            const V th = hn::Tanh(d, hn::Mul(half, hn::Load(d, t_store + i * L)));
            hn::Store(th, d, t_store + i * L);  // t_store now holds tanh(t/2)
            running = hn::Mul(running, th);
          }
          V backward = hn::Set(d, T(1));
          for (std::uint32_t i = deg; i-- > 0;) {
            const V th = hn::Load(d, t_store + i * L);
            V prod = hn::Mul(hn::Load(d, fwd + i * L), backward);
            backward = hn::Mul(backward, th);
            prod = hn::Min(hn::Max(prod, hn::Neg(cap)), cap);
            V r = deg == 1 ? hn::Set(d, T(1e5)) : hn::Mul(two, hn::Atanh(d, prod));
            const std::size_t v = a.edge_var[b + i];
            // Recover t from tanh(t/2) would lose precision: recompute t = P - R_old instead.
            const V t = hn::Sub(hn::Load(d, a.posterior + v * L), hn::Load(d, a.messages + (b + i) * L));
            const V r_old = hn::Load(d, a.messages + (b + i) * L);
            const V p_old = hn::Load(d, a.posterior + v * L);
            hn::Store(hn::IfThenElse(frozen, r_old, r), d, a.messages + (b + i) * L);
            hn::Store(hn::IfThenElse(frozen, p_old, hn::Add(t, r)), d, a.posterior + v * L);
          }
          continue;
        }
      }
      // Min-sum family: two smallest magnitudes, the position of the smallest, sign parity.
      const T init = kFloat ? T(1e5) : static_cast<T>(a.message_limit);
      V min1 = hn::Set(d, init), min2 = min1;
      VI at = hn::Zero(di), parity = hn::Zero(di);
      for (std::uint32_t i = 0; i < deg; ++i) {
        const V t = hn::Load(d, t_store + i * L);
        const V mag = hn::Abs(t);
        const auto lt1 = hn::Lt(mag, min1);
        min2 = hn::IfThenElse(lt1, min1, hn::Min(min2, mag));
        min1 = hn::IfThenElse(lt1, mag, min1);
        at = hn::IfThenElse(hn::RebindMask(di, lt1), hn::Set(di, static_cast<hn::TFromD<decltype(di)>>(i)), at);
        parity = hn::Xor(parity, hn::VecFromMask(di, hn::RebindMask(di, hn::Lt(t, zero))));
      }
      for (std::uint32_t i = 0; i < deg; ++i) {
        const V t = hn::Load(d, t_store + i * L);
        const auto is_min = hn::RebindMask(d, hn::Eq(at, hn::Set(di, static_cast<hn::TFromD<decltype(di)>>(i))));
        V mag = deg == 1 ? hn::Set(d, init) : hn::IfThenElse(is_min, min2, min1);
        if constexpr (kFloat) {
          if (a.rule == CheckRule::normalized) mag = hn::Mul(mag, hn::Set(d, a.alpha));
          if (a.rule == CheckRule::offset) mag = hn::Max(hn::Sub(mag, hn::Set(d, a.beta)), zero);
        } else {
          if (a.rule == CheckRule::normalized) mag = hn::Sub(mag, times_eighths(d, mag, 8 - a.alpha_eighths));
          if (a.rule == CheckRule::offset) mag = hn::Max(hn::Sub(mag, hn::Set(d, static_cast<T>(a.beta_lsb))), zero);
        }
        const VI sign = hn::Xor(parity, hn::VecFromMask(di, hn::RebindMask(di, hn::Lt(t, zero))));
        const V r = hn::IfThenElse(hn::RebindMask(d, hn::Lt(sign, hn::Zero(di))), hn::Neg(mag), mag);
        const std::size_t v = a.edge_var[b + i];
        V p;
        if constexpr (kFloat) {
          p = hn::Add(t, r);
        } else {
          p = clamp_to(d, hn::SaturatedAdd(t, r), a.posterior_limit);
        }
        hn::Store(hn::IfThenElse(frozen, hn::Load(d, a.messages + (b + i) * L), r), d, a.messages + (b + i) * L);
        hn::Store(hn::IfThenElse(frozen, hn::Load(d, a.posterior + v * L), p), d, a.posterior + v * L);
      }
    }
    if (!a.early_stop) continue;
    // Vectorised syndrome: a lane is satisfied when every check has even parity of negatives.
    VI unsatisfied = hn::Zero(di);
    for (std::size_t c = 0; c < a.m; ++c) {
      VI par = hn::Zero(di);
      for (std::uint32_t e = a.check_start[c]; e < a.check_start[c + 1]; ++e) {
        par = hn::Xor(par, hn::VecFromMask(di, hn::RebindMask(di, hn::Lt(hn::Load(d, a.posterior + a.edge_var[e] * L), zero))));
      }
      unsatisfied = hn::Or(unsatisfied, par);
    }
    const VI newly = hn::AndNot(done, hn::VecFromMask(di, hn::Eq(unsatisfied, hn::Zero(di))));
    if (!hn::AllTrue(di, hn::Eq(newly, hn::Zero(di)))) {
      alignas(64) hn::TFromD<decltype(di)> flags[hn::MaxLanes(di)];
      hn::Store(newly, di, flags);
      for (std::size_t l = 0; l < L; ++l) {
        if (flags[l]) a.iterations_used[l] = it;
      }
      done = hn::Or(done, newly);
    }
    if (hn::AllTrue(di, hn::Lt(done, hn::Zero(di)))) break;
  }
}

std::size_t FloatLanes() { return hn::Lanes(hn::ScalableTag<float>()); }
std::size_t Int16Lanes() { return hn::Lanes(hn::ScalableTag<std::int16_t>()); }
std::size_t Int8Lanes() { return hn::Lanes(hn::ScalableTag<std::int8_t>()); }
void LayeredFloat(const LayeredArgs<float>& a) { Layered(hn::ScalableTag<float>(), a); }
void LayeredInt16(const LayeredArgs<std::int16_t>& a) { Layered(hn::ScalableTag<std::int16_t>(), a); }
void LayeredInt8(const LayeredArgs<std::int8_t>& a) { Layered(hn::ScalableTag<std::int8_t>(), a); }

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

std::size_t float_lanes() { return HWY_DYNAMIC_DISPATCH(FloatLanes)(); }
std::size_t int16_lanes() { return HWY_DYNAMIC_DISPATCH(Int16Lanes)(); }
std::size_t int8_lanes() { return HWY_DYNAMIC_DISPATCH(Int8Lanes)(); }
void layered_float(const LayeredArgs<float>& a) { HWY_DYNAMIC_DISPATCH(LayeredFloat)(a); }
void layered_int16(const LayeredArgs<std::int16_t>& a) { HWY_DYNAMIC_DISPATCH(LayeredInt16)(a); }
void layered_int8(const LayeredArgs<std::int8_t>& a) { HWY_DYNAMIC_DISPATCH(LayeredInt8)(a); }

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
