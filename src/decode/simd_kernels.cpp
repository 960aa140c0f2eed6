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
  using TI = hn::TFromD<decltype(di)>;
  using VI = hn::Vec<decltype(di)>;
  // Everything the loops use is copied to locals: int8 stores may alias any object, so fields
  // read through `a` would be reloaded after every store.
  const std::size_t L = a.lanes, n = a.n, m = a.m;
  const std::uint32_t* const check_start = a.check_start;
  const std::uint32_t* const edge_var = a.edge_var;
  T* const post = a.posterior;
  T* const msg = a.messages;
  T* const t_store = a.scratch;                 // extrinsic inputs of the check, per edge
  T* const fwd = a.scratch + a.max_degree * L;  // sum-product prefix products
  const int iterations = a.iterations;
  const bool early_stop = a.early_stop;
  const CheckRule rule = a.rule;
  const int shrink = 8 - a.alpha_eighths;
  HWY_DASSERT(L == hn::Lanes(d));

  const V zero = hn::Zero(d);
  const T init = kFloat ? T(1e5) : static_cast<T>(a.message_limit);
  const V v_init = hn::Set(d, init);
  const V m_hi = hn::Set(d, static_cast<T>(a.message_limit));
  const V p_lo = hn::Set(d, static_cast<T>(-a.posterior_limit)),
          p_hi = hn::Set(d, static_cast<T>(a.posterior_limit));
  const V v_alpha = hn::Set(d, static_cast<T>(a.alpha)),
          v_beta = hn::Set(d, static_cast<T>(a.beta));
  const V v_beta_lsb = hn::Set(d, static_cast<T>(a.beta_lsb));
  const VI one_i = hn::Set(di, TI(1)), zero_i = hn::Zero(di);

  // Flooding is offered for float lanes (the fixed-point definition is layered).
  const bool flooding = kFloat && a.flooding;
  T* const v2c = a.v2c;
  for (std::size_t i = 0; i < n * L; i += L) hn::Store(hn::Load(d, a.channel + i), d, post + i);
  const std::size_t edges = check_start[m];
  for (std::size_t i = 0; i < edges * L; i += L) hn::Store(zero, d, msg + i);
  if (flooding) {
    for (std::size_t e = 0; e < edges; ++e)
      hn::Store(hn::Load(d, a.channel + edge_var[e] * L), d, v2c + e * L);
  }
  // The check's input on edge e of variable v: the extrinsic P - R (layered) or the
  // variable-to-check message (flooding).
  auto extrinsic = [&](std::size_t e, std::size_t v) {
    return flooding ? hn::Load(d, v2c + e * L)
                    : hn::Sub(hn::Load(d, post + v * L), hn::Load(d, msg + e * L));
  };
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
    // Stores a new value, keeping lanes that already stopped (only when some have).
    auto keep = [&](T* where, V value) {
      hn::Store(any_frozen ? hn::IfThenElse(frozen, hn::Load(d, where), value) : value, d, where);
    };
    for (std::size_t c = 0; c < m; ++c) {
      const std::uint32_t b = check_start[c], deg = check_start[c + 1] - b;
      if (deg == 0) continue;
      if constexpr (kFloat) {
        if (rule == CheckRule::sum_product) {
          // tanh rule with prefix/suffix products; |product| kept below 1 - 2^-23 so atanh is
          // finite.
          const V half = hn::Set(d, T(0.5)), two = hn::Set(d, T(2)),
                  cap = hn::Set(d, T(1 - 1.0 / (1 << 23)));
          V running = hn::Set(d, T(1));
          for (std::uint32_t i = 0; i < deg; ++i) {
            const std::size_t v = edge_var[b + i];
            const V t = extrinsic(b + i, v);
            hn::Store(running, d, fwd + i * L);
            const V th = hn::Tanh(d, hn::Mul(half, t));
            hn::Store(th, d, t_store + i * L);
            running = hn::Mul(running, th);
          }
          V backward = hn::Set(d, T(1));
          for (std::uint32_t i = deg; i-- > 0;) {
            const V th = hn::Load(d, t_store + i * L);
            V prod = hn::Mul(hn::Load(d, fwd + i * L), backward);
            backward = hn::Mul(backward, th);
            prod = hn::Min(hn::Max(prod, hn::Neg(cap)), cap);
            const V r = deg == 1 ? v_init : hn::Mul(two, hn::Atanh(d, prod));
            const std::size_t v = edge_var[b + i];
            // Recovering t from tanh(t/2) would lose precision: recompute it.
            const V t = extrinsic(b + i, v);
            keep(msg + (b + i) * L, r);
            if (!flooding) keep(post + v * L, hn::Add(t, r));
          }
          continue;
        }
      }
      // Min-sum family, pass 1: extrinsic t = P - R_old, the two smallest |t|, the position of
      // the smallest (first occurrence wins ties), the parity of the signs.
      V min1 = v_init, min2 = v_init;
      VI at = zero_i, parity = zero_i, index = zero_i;
      for (std::uint32_t i = 0; i < deg; ++i, index = hn::Add(index, one_i)) {
        const std::size_t v = edge_var[b + i];
        V t;
        if constexpr (kFloat) {
          t = extrinsic(b + i, v);
        } else {
          const V p = hn::Load(d, post + v * L), r_old = hn::Load(d, msg + (b + i) * L);
          // At posterior width (saturating: P - R can leave the lane's range); the check sees
          // the magnitude saturated to the message width.
          t = hn::Min(hn::Max(hn::SaturatedSub(p, r_old), p_lo), p_hi);
        }
        hn::Store(t, d, t_store + i * L);
        V mag = hn::Abs(t);
        if constexpr (!kFloat) mag = hn::Min(mag, m_hi);
        const auto lt1 = hn::Lt(mag, min1);
        min2 = hn::IfThenElse(lt1, min1, hn::Min(min2, mag));
        min1 = hn::IfThenElse(lt1, mag, min1);
        at = hn::IfThenElse(hn::RebindMask(di, lt1), index, at);
        parity = hn::Xor(parity, hn::BitCast(di, t));
      }
      // Pass 2: the new messages and posteriors.
      if (deg == 1) min1 = min2 = v_init;  // a check with one edge sends the saturation value
      V mag1 = min1, mag2 = min2;
      if constexpr (kFloat) {
        if (rule == CheckRule::normalized)
          mag1 = hn::Mul(mag1, v_alpha), mag2 = hn::Mul(mag2, v_alpha);
        if (rule == CheckRule::offset) {
          mag1 = hn::Max(hn::Sub(mag1, v_beta), zero);
          mag2 = hn::Max(hn::Sub(mag2, v_beta), zero);
        }
      } else {
        if (rule == CheckRule::normalized) {
          mag1 = hn::Sub(mag1, times_eighths(d, mag1, shrink));
          mag2 = hn::Sub(mag2, times_eighths(d, mag2, shrink));
        }
        if (rule == CheckRule::offset) {
          mag1 = hn::Max(hn::Sub(mag1, v_beta_lsb), zero);
          mag2 = hn::Max(hn::Sub(mag2, v_beta_lsb), zero);
        }
      }
      index = zero_i;
      for (std::uint32_t i = 0; i < deg; ++i, index = hn::Add(index, one_i)) {
        const V t = hn::Load(d, t_store + i * L);
        const V mag = hn::IfThenElse(hn::RebindMask(d, hn::Eq(at, index)), mag2, mag1);
        // Sign of the other edges: parity of all signs with this edge's own removed.
        const VI sign = hn::Xor(parity, hn::BitCast(di, t));
        const V r = hn::IfThenElse(hn::RebindMask(d, hn::Lt(sign, zero_i)), hn::Neg(mag), mag);
        const std::size_t v = edge_var[b + i];
        V p;
        if constexpr (kFloat) {
          p = hn::Add(t, r);
        } else {
          p = hn::Min(hn::Max(hn::SaturatedAdd(t, r), p_lo), p_hi);
        }
        keep(msg + (b + i) * L, r);
        if (!flooding) keep(post + v * L, p);
      }
    }
    if (flooding) {
      // Variables: posterior = channel + all check messages; each edge gets the others' sum.
      for (std::size_t v = 0; v < n; ++v) {
        V total = hn::Load(d, a.channel + v * L);
        for (std::uint32_t k = a.var_start[v]; k < a.var_start[v + 1]; ++k) {
          total = hn::Add(total, hn::Load(d, msg + a.var_edge[k] * L));
        }
        keep(post + v * L, total);
        for (std::uint32_t k = a.var_start[v]; k < a.var_start[v + 1]; ++k) {
          const std::size_t e = a.var_edge[k];
          keep(v2c + e * L, hn::Sub(total, hn::Load(d, msg + e * L)));
        }
      }
    }
    if (!early_stop) continue;
    // Vectorised syndrome: a lane is satisfied when every check has even parity of negatives.
    VI unsatisfied = zero_i;
    for (std::size_t c = 0; c < m; ++c) unsatisfied = hn::Or(unsatisfied, parity_of(c));
    // The sign bit of the XOR of all posteriors of a check is the parity of its negatives.
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
