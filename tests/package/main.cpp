// find_package(tannery) smoke test: a program that embeds the library decodes one frame.
#include <cstdio>
#include <tannery/code/construct.hpp>
#include <tannery/code/gf2.hpp>
#include <tannery/decode/decoder.hpp>
int main() {
  const tannery::Code code = tannery::construct_hamming(3);
  const tannery::Encoder enc(code);
  std::vector<double> llr{1, 1, 1, 1, 1, 1, -0.5};
  std::vector<std::uint8_t> hard(7);
  std::vector<tannery::FrameOutcome> out(1);
  tannery::make_decoder(code, tannery::DecoderSettings{})->decode(llr, hard, {}, out);
  std::printf("k=%zu converged=%d\n", enc.k(), out[0].converged);
  return enc.k() == 4 && out[0].converged && hard[6] == 0 ? 0 : 1;
}
