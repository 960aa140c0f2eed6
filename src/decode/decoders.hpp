// Constructors of the concrete reference decoders (private to the library).
#pragma once

#include <memory>

#include "tannery/decode/decoder.hpp"

namespace tannery::detail {

std::unique_ptr<Decoder> make_belief_propagation(const Code& code, const DecoderSettings& settings);
std::unique_ptr<Decoder> make_bit_flip(const Code& code, const DecoderSettings& settings);
std::unique_ptr<Decoder> make_ml(const Code& code, const DecoderSettings& settings);

inline double clip_llr(double x) {
  return x > kLlrLimit ? kLlrLimit : (x < -kLlrLimit ? -kLlrLimit : x);
}

}  // namespace tannery::detail
