// The batched kernels of simd_kernels-inl.h for int16 lanes, compiled for every Highway target.
#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "src/decode/simd_kernels_int16.cpp"
#include <hwy/foreach_target.h>  // IWYU pragma: keep

#include "src/decode/simd_kernels-inl.h"

HWY_BEFORE_NAMESPACE();
namespace tannery::detail::HWY_NAMESPACE {
TANNERY_TARGET_KERNELS(std::int16_t, Int16)
}  // namespace tannery::detail::HWY_NAMESPACE
HWY_AFTER_NAMESPACE();

#if HWY_ONCE
namespace tannery::detail {

TANNERY_DISPATCH_KERNELS(std::int16_t, Int16)
}  // namespace tannery::detail
#endif
