// Embedding tannery: decode one received frame with a shipped LDPC code (the README's example).
#include <tannery/code/gf2.hpp>
#include <tannery/decode/decoder.hpp>
#include <tannery/io/code_lookup.hpp>

#include <cstdio>
#include <vector>

int main() {
  auto code = std::make_shared<const tannery::Code>(tannery::load_code("qc-rate-half-z54"));
  tannery::DecoderSettings settings;  // sum-product, flooding, 50 iterations, early stop
  settings.algorithm = tannery::Algorithm::normalized_min_sum;
  settings.alpha = 0.75;
  const auto decoder = tannery::make_decoder(code, settings);  // shares the code

  // A codeword of ones and zeros sent as BPSK (0 -> LLR +4, 1 -> -4), 31 positions flipped.
  std::vector<std::uint8_t> info(tannery::Encoder(*code).k(), 1), word(code->n());
  tannery::Encoder(*code).encode(info, word);
  std::vector<float> llr(code->n());
  for (std::size_t i = 0; i < llr.size(); ++i)
    llr[i] = (word[i] ? -4.0f : 4.0f) * (i % 21 ? 1 : -1);

  const tannery::DecodedFrame frame = decoder->decode(llr);
  std::printf("converged %d after %d iterations, %s\n", frame.outcome.converged,
              frame.outcome.iterations, frame.bits == word ? "codeword recovered" : "errors left");
  return frame.outcome.converged && frame.bits == word ? 0 : 1;
}
