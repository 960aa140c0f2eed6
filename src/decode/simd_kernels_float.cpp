// The batched kernels of simd_kernels-inl.h for float lanes, compiled for every Highway target.
#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "src/decode/simd_kernels_float.cpp"
#include <hwy/foreach_target.h>  // IWYU pragma: keep

#include "src/decode/simd_kernels-inl.h"

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {
TANNERY_TARGET_KERNELS(float, Float)
}  // namespace tannery::detail::HWY_NAMESPACE
HWY_AFTER_NAMESPACE();

#if HWY_ONCE
#include <string>
#include <vector>

namespace tannery::detail {

TANNERY_DISPATCH_KERNELS(float, Float)

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
