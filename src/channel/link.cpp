#include "tannery/channel/link.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <limits>

#include "tannery/error.hpp"

namespace tannery {

Link::Link(const ChannelSpec& spec, PunctureMap map)
    : spec_(spec), map_(std::move(map)), constellation_(Constellation::of(spec.modulation)) {
  validate(spec_);
  const std::size_t n = map_.state.size();
  for (std::size_t i = 0; i < n; ++i) {
    if (map_.state[i] == PunctureMap::sent) sent_.push_back(static_cast<std::uint32_t>(i));
    shortened_ += map_.state[i] == PunctureMap::shortened;
  }
  if (sent_.empty()) throw Error("the puncture map leaves no code bit to send");
  const unsigned bits = constellation_.bits();
  symbols_ = (sent_.size() + bits - 1) / bits;
  const std::vector<std::uint32_t> order = interleaver_order(spec_.interleaver, sent_.size());
  slot_position_.assign(symbols_ * bits, static_cast<std::uint32_t>(n));
  for (std::size_t j = 0; j < order.size(); ++j) slot_position_[j] = sent_[order[j]];
  const std::size_t dims = constellation_.complex() ? 2 : 1;
  noise_values_ = dims * symbols_;
  if (spec_.kind == ChannelKind::rayleigh)
    noise_values_ += 2 * ((symbols_ + spec_.fading_block - 1) / spec_.fading_block);
  binary_ = spec_.kind != ChannelKind::rayleigh && bits == 1 && sent_.size() == n &&
            spec_.modulation.kind == ModulationKind::bpsk && spec_.interleaver == Interleaver{};
}

double Link::snr_rate(std::size_t information_bits) const {
  return static_cast<double>(information_bits - std::min(information_bits, shortened_)) /
         static_cast<double>(symbols_);
}

void Link::modulate(std::span<const std::uint8_t> codeword,
                    std::span<std::complex<double>> symbols) const {
  if (codeword.size() != n() || symbols.size() != symbols_)
    throw Error("modulate: the codeword or the symbols do not match the link in size");
  const unsigned bits = constellation_.bits();
  for (std::size_t s = 0; s < symbols_; ++s) {
    std::uint32_t label = 0;
    for (unsigned b = 0; b < bits; ++b) {
      const std::uint32_t position = slot_position_[s * bits + b];
      label = (label << 1) | (position < codeword.size() ? codeword[position] & 1u : 0u);
    }
    symbols[s] = constellation_.point(label);
  }
}

void Link::demodulate(std::span<const double> in_phase, std::span<const double> quadrature,
                      std::span<const double> amplitude, double noise_variance,
                      std::span<double> llr, LinkBuffers& buffers) const {
  if (llr.size() != n()) throw Error("demodulate: the LLRs do not match the code length");
  buffers.slots.resize(symbols_ * constellation_.bits());
  demap(constellation_, spec_.demapper, in_phase, quadrature, amplitude, noise_variance,
        buffers.slots);
  for (std::size_t i = 0; i < n(); ++i) {
    llr[i] = map_.state[i] == PunctureMap::shortened ? std::numeric_limits<double>::infinity() : 0;
  }
  for (std::size_t j = 0; j < slot_position_.size(); ++j) {
    if (slot_position_[j] < llr.size()) llr[slot_position_[j]] = buffers.slots[j];
  }
}

void Link::receive(const ChannelPoint& point, std::span<const std::uint8_t> codeword,
                   std::span<const double> noise, LinkBuffers& buffers) const {
  if (!snr_swept(point.kind()))
    throw Error("a punctured or modulated link needs the awgn or rayleigh channel");
  if (noise.size() < noise_values_) throw Error("receive: fewer noise values than the link takes");
  const bool complex = constellation_.complex();
  const std::size_t dims = complex ? 2 : 1;
  const bool faded = point.kind() == ChannelKind::rayleigh;
  buffers.symbols.resize(symbols_);
  modulate(codeword, buffers.symbols);
  buffers.in_phase.resize(symbols_);
  buffers.quadrature.resize(complex ? symbols_ : 0);
  buffers.amplitude.resize(faded ? symbols_ : 0);
  const double sigma = point.value();
  const double* fading = noise.data() + dims * symbols_;
  for (std::size_t s = 0; s < symbols_; ++s) {
    const std::complex<double> x = buffers.symbols[s];
    double a = 1;
    if (faded) {
      const double* g = fading + 2 * (s / spec_.fading_block);
      a = std::sqrt((g[0] * g[0] + g[1] * g[1]) / 2);
      buffers.amplitude[s] = a;
    }
    buffers.in_phase[s] = a * x.real() + sigma * noise[dims * s];
    if (complex) buffers.quadrature[s] = a * x.imag() + sigma * noise[dims * s + 1];
  }
}

void Link::transmit(const ChannelPoint& point, std::span<const std::uint8_t> codeword,
                    std::span<const double> noise, std::span<double> llr,
                    LinkBuffers& buffers) const {
  if (binary_) return tannery::transmit(point, codeword, noise, llr);
  receive(point, codeword, noise, buffers);
  const double assumed = point.assumed_value();
  const bool known = point.kind() == ChannelKind::rayleigh && !spec_.ignore_fading;
  demodulate(buffers.in_phase, buffers.quadrature,
             known ? std::span<const double>(buffers.amplitude) : std::span<const double>(),
             assumed * assumed, llr, buffers);
}

}  // namespace tannery
