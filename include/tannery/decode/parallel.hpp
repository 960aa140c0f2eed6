// Decoding batches of frames on several threads: one decoder per thread of a ThreadPool, each
// taking a contiguous slice of the batch. Results are in frame order and identical to one
// decoder's (frames are decoded independently).
#pragma once

#include <memory>
#include <span>
#include <vector>

#include "tannery/base/thread_pool.hpp"
#include "tannery/decode/decoder.hpp"

namespace tannery {

class ParallelDecoder {
 public:
  // threads = 0: one per core. Throws Error for impossible settings.
  ParallelDecoder(std::shared_ptr<const Code> code, const DecoderSettings& settings,
                  unsigned threads = 0);

  unsigned threads() const noexcept { return pool_.size(); }
  const Code& code() const noexcept { return decoders_.front()->code(); }
  // The settings decoding with (the kernel resolved: reference or simd).
  const DecoderSettings& settings() const noexcept { return decoders_.front()->settings(); }

  // As Decoder::decode: outcome.size() frames of n values each; posterior may be empty. Errors
  // (a NaN, wrong sizes) name the frame as first_frame + its index in the batch.
  void decode(std::span<const double> llr, std::span<std::uint8_t> hard,
              std::span<double> posterior, std::span<FrameOutcome> outcome,
              std::size_t first_frame = 0);

 private:
  ThreadPool pool_;
  std::vector<std::unique_ptr<Decoder>> decoders_;  // one per thread
};

}  // namespace tannery
