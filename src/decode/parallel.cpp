#include "tannery/decode/parallel.hpp"

#include <fmt/format.h>
#include <algorithm>

#include "tannery/error.hpp"

namespace tannery {

ParallelDecoder::ParallelDecoder(std::shared_ptr<const Code> code, const DecoderSettings& settings,
                                 unsigned threads)
    : pool_(threads) {
  for (unsigned t = 0; t < pool_.size(); ++t) decoders_.push_back(make_decoder(code, settings));
}

void ParallelDecoder::decode(std::span<const double> llr, std::span<std::uint8_t> hard,
                             std::span<double> posterior, std::span<FrameOutcome> outcome,
                             std::size_t first_frame) {
  const std::size_t n = code().n(), frames = outcome.size();
  if (llr.size() != frames * n || hard.size() != frames * n ||
      !(posterior.empty() || posterior.size() == frames * n)) {
    throw Error(fmt::format(
        "decode: {} frames of n = {} take {} values each of channel LLRs and hard decisions "
        "(and posteriors, if wanted); given {}, {} and {}",
        frames, n, frames * n, llr.size(), hard.size(), posterior.size()));
  }
  const std::size_t slices = std::min<std::size_t>(pool_.size(), frames);
  if (slices == 0) return;
  const std::size_t per = (frames + slices - 1) / slices;
  pool_.run(slices, [&](std::size_t slice, unsigned worker) {
    const std::size_t a = slice * per, b = std::min(frames, a + per);
    if (a >= b) return;
    decoders_[worker]->decode(llr.subspan(a * n, (b - a) * n), hard.subspan(a * n, (b - a) * n),
                              posterior.empty() ? posterior : posterior.subspan(a * n, (b - a) * n),
                              outcome.subspan(a, b - a), first_frame + a);
  });
}

}  // namespace tannery
