// Controls of the batched SIMD kernels for tests, benchmarks and reproducing a figure; not part
// of the public API (decoders choose for themselves).
#pragma once

#include <cstddef>
#include <string>

namespace tannery {

// Restricts dispatch to one of simd_targets() (for tests and for reproducing a figure); an
// empty name restores the automatic choice. Throws Error for a name not in the list.
void force_simd_target(const std::string& name);

// The SIMD kernels keep layered min-sum check state compressed (per check the two magnitudes
// it sends, per edge two bits of each lane: smallest input, negative message; the same
// results) when one message per edge would take more than this many bytes: less memory
// traffic where the messages outgrow the caches, a few more operations per edge where they
// fit. Measured on (3,6)-regular codes, one thread, 32 MiB L3 (decoder_bench): one message per
// edge faster up to 3 MB of them, even at 6 MB, compressed 40-60% faster at 12 MB; 4 MiB leaves
// room for a second thread sharing the L3. Applies to decoders made afterwards; the default
// restores kCompressAboveBytes (for tests and for reproducing a figure).
inline constexpr std::size_t kCompressAboveBytes = std::size_t{4} << 20;
void compress_simd_checks_above(std::size_t bytes = kCompressAboveBytes);

}  // namespace tannery
