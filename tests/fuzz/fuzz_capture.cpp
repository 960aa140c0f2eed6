// Any bytes as a soft-bit capture in every encoding, and as hard-bit frames.
#include <cstdint>
#include <sstream>
#include <string>
#include <vector>

#include "tannery/io/capture.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string bytes(reinterpret_cast<const char*>(data), size);
  for (auto f : {tannery::SampleFormat::f32, tannery::SampleFormat::f64, tannery::SampleFormat::i8,
                 tannery::SampleFormat::i16, tannery::SampleFormat::text}) {
    std::istringstream in(bytes);
    tannery::CaptureReader reader(in, "fuzz", f, 0.5, 7);
    std::vector<double> out;
    while (reader.read(3, out) > 0) {
    }
  }
  for (auto f : {tannery::BitFormat::text, tannery::BitFormat::packed, tannery::BitFormat::bytes}) {
    std::istringstream in(bytes);
    tannery::BitFrameReader reader(in, "fuzz", f, 5);
    std::vector<std::uint8_t> out;
    while (reader.read(3, out) > 0) {
    }
  }
  return 0;
}
