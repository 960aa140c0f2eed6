#include "tannery/channel/link.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <limits>

#include "demap_kernels.hpp"
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
  binary_ = spec_.kind != ChannelKind::rayleigh && spec_.modulation == Modulation{} &&
            spec_.interleaver == Interleaver{};
  const std::size_t dims = constellation_.complex() ? 2 : 1;
  noise_values_ = binary_ ? n : dims * symbols_;
  if (spec_.kind == ChannelKind::rayleigh)
    noise_values_ += 2 * ((symbols_ + spec_.fading_block - 1) / spec_.fading_block);
}

namespace {

// Punctured positions of `values` (stride values each) set to 0, shortened ones to `known`.
template <class T>
void fill_unsent(const PunctureMap& map, std::span<T> values, std::size_t stride, T known) {
  for (std::size_t i = 0; i < map.state.size(); ++i) {
    if (map.state[i] == PunctureMap::sent) continue;
    std::fill_n(values.begin() + static_cast<std::ptrdiff_t>(i * stride), stride,
                map.state[i] == PunctureMap::shortened ? known : T{0});
  }
}

}  // namespace

void Link::mark_unsent(std::span<double> llr, std::size_t stride) const {
  if (sent_.size() != n()) fill_unsent(map_, llr, stride, std::numeric_limits<double>::infinity());
}
void Link::mark_unsent(std::span<std::int8_t> values, std::size_t stride,
                       std::int8_t saturated) const {
  if (sent_.size() != n()) fill_unsent(map_, values, stride, saturated);
}
void Link::mark_unsent(std::span<std::int16_t> values, std::size_t stride,
                       std::int16_t saturated) const {
  if (sent_.size() != n()) fill_unsent(map_, values, stride, saturated);
}

double Link::snr_rate(std::size_t information_bits) const {
  return static_cast<double>(information_bits - std::min(information_bits, shortened_)) /
         static_cast<double>(symbols_);
}

namespace {

// labels[s] from the label bits of symbol s, bits[s * Bits + b], first bit most significant.
template <unsigned Bits>
void pack_labels(const std::uint8_t* bits, std::size_t symbols, std::uint32_t* labels) {
  for (std::size_t s = 0; s < symbols; ++s) {
    std::uint32_t label = 0;
    for (unsigned b = 0; b < Bits; ++b) label = (label << 1) | bits[s * Bits + b];
    labels[s] = label;
  }
}

}  // namespace

void Link::labels(std::span<const std::uint8_t> codeword, LinkBuffers& buffers) const {
  // The label bits slot by slot (a gather from the codeword with a 0 appended for padding
  // slots, which point at position n), then packed per symbol.
  const std::size_t slots = slot_position_.size(), n = codeword.size();
  buffers.label_bits.resize(slots + n + 1);
  std::uint8_t* padded = buffers.label_bits.data() + slots;
  std::copy(codeword.begin(), codeword.end(), padded);
  padded[n] = 0;
  for (std::size_t j = 0; j < slots; ++j) buffers.label_bits[j] = padded[slot_position_[j]] & 1u;
  buffers.labels.resize(symbols_);
  const std::uint8_t* bits = buffers.label_bits.data();
  std::uint32_t* labels = buffers.labels.data();
  switch (constellation_.bits()) {
    case 1:
      return pack_labels<1>(bits, symbols_, labels);
    case 2:
      return pack_labels<2>(bits, symbols_, labels);
    case 3:
      return pack_labels<3>(bits, symbols_, labels);
    case 4:
      return pack_labels<4>(bits, symbols_, labels);
    case 5:
      return pack_labels<5>(bits, symbols_, labels);
    case 6:
      return pack_labels<6>(bits, symbols_, labels);
    case 7:
      return pack_labels<7>(bits, symbols_, labels);
    default:
      return pack_labels<8>(bits, symbols_, labels);
  }
}

void Link::modulate(std::span<const std::uint8_t> codeword,
                    std::span<std::complex<double>> symbols) const {
  if (codeword.size() != n() || symbols.size() != symbols_)
    throw Error("modulate: the codeword or the symbols do not match the link in size");
  LinkBuffers buffers;
  labels(codeword, buffers);
  for (std::size_t s = 0; s < symbols_; ++s) symbols[s] = constellation_.point(buffers.labels[s]);
}

void Link::demodulate(std::span<const double> in_phase, std::span<const double> quadrature,
                      std::span<const double> amplitude, double noise_variance,
                      std::span<double> llr, LinkBuffers& buffers) const {
  if (llr.size() != n() || in_phase.size() != symbols_)
    throw Error("demodulate: the symbols or the LLRs do not match the link in size");
  const unsigned bits = constellation_.bits();
  buffers.slots.resize(symbols_ * bits);
  detail::demap_planes(constellation_, spec_.demapper, in_phase, quadrature, amplitude,
                       noise_variance, buffers.slots.data());
  if (sent_.size() < n()) {
    for (std::size_t i = 0; i < n(); ++i) {
      llr[i] =
          map_.state[i] == PunctureMap::shortened ? std::numeric_limits<double>::infinity() : 0;
    }
  }
  // Slot j = s * bits + b is bit plane b of symbol s; padding slots carry position n.
  for (unsigned b = 0; b < bits; ++b) {
    const double* plane = buffers.slots.data() + b * symbols_;
    for (std::size_t s = 0; s < symbols_; ++s) {
      const std::uint32_t position = slot_position_[s * bits + b];
      if (position < llr.size()) llr[position] = plane[s];
    }
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
  buffers.in_phase.resize(symbols_);
  buffers.quadrature.resize(complex ? symbols_ : 0);
  buffers.amplitude.resize(faded ? symbols_ : 0);
  const double sigma = point.value();
  const double* fading = noise.data() + dims * symbols_;
  if (codeword.size() != n()) throw Error("receive: the codeword does not match the link");
  labels(codeword, buffers);
  const std::complex<double>* points = constellation_.points().data();
  for (std::size_t s = 0; s < symbols_; ++s) {
    const std::complex<double> x = points[buffers.labels[s]];
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

void Link::transmit_lanes(const ChannelPoint& point, std::span<const std::uint64_t> codewords,
                          std::size_t lanes, std::span<const double> noise, std::span<double> llr,
                          LinkBuffers& buffers) const {
  if (binary_ || !snr_swept(point.kind()))
    throw Error("transmit_lanes: a modulated link on the awgn or rayleigh channel only");
  if (lanes == 0 || lanes > 64 || codewords.size() != n() || llr.size() != n() * lanes ||
      noise.size() < noise_values_ * lanes) {
    throw Error("transmit_lanes: the codewords, noise and LLRs do not match the link in size");
  }
  mark_unsent(llr, lanes);
  const unsigned bits = constellation_.bits();
  const bool complex = constellation_.complex();
  const std::size_t dims = complex ? 2 : 1;
  const bool faded = point.kind() == ChannelKind::rayleigh;
  const bool known = faded && !spec_.ignore_fading;
  const double sigma = point.value(), assumed = point.assumed_value();
  const std::complex<double>* points = constellation_.points().data();
  const double* fading = noise.data() + dims * symbols_ * lanes;
  // A block of symbols at a time, [symbol][lane] in the buffers: the same operations on each
  // value as receive() and demodulate() do frame by frame, so the same bits.
  constexpr std::size_t kBlock = 16;
  buffers.labels.resize(kBlock * lanes);
  for (std::size_t s0 = 0; s0 < symbols_; s0 += kBlock) {
    const std::size_t block = std::min(kBlock, symbols_ - s0), count = block * lanes;
    buffers.in_phase.resize(count);
    buffers.quadrature.resize(complex ? count : 0);
    buffers.amplitude.resize(known ? count : 0);
    std::fill_n(buffers.labels.begin(), count, 0u);
    for (std::size_t s = 0; s < block; ++s) {
      std::uint32_t* label = buffers.labels.data() + s * lanes;
      for (unsigned b = 0; b < bits; ++b) {
        const std::uint32_t position = slot_position_[(s0 + s) * bits + b];
        const std::uint64_t mask = position < codewords.size() ? codewords[position] : 0;
        for (std::size_t l = 0; l < lanes; ++l)
          label[l] = (label[l] << 1) | static_cast<std::uint32_t>((mask >> l) & 1u);
      }
      const double* z = noise.data() + dims * (s0 + s) * lanes;
      const double* g = fading + 2 * ((s0 + s) / spec_.fading_block) * lanes;
      for (std::size_t l = 0; l < lanes; ++l) {
        const std::complex<double> x = points[label[l]];
        double a = 1;
        if (faded) a = std::sqrt((g[l] * g[l] + g[lanes + l] * g[lanes + l]) / 2);
        if (known) buffers.amplitude[s * lanes + l] = a;
        buffers.in_phase[s * lanes + l] = a * x.real() + sigma * z[l];
        if (complex) buffers.quadrature[s * lanes + l] = a * x.imag() + sigma * z[lanes + l];
      }
    }
    buffers.slots.resize(count * bits);
    detail::demap_planes(constellation_, spec_.demapper, buffers.in_phase, buffers.quadrature,
                         buffers.amplitude, assumed * assumed, buffers.slots.data());
    for (std::size_t s = 0; s < block; ++s) {
      for (unsigned b = 0; b < bits; ++b) {
        const std::uint32_t position = slot_position_[(s0 + s) * bits + b];
        if (position >= n()) continue;
        std::copy_n(buffers.slots.data() + b * count + s * lanes, lanes,
                    llr.data() + std::size_t{position} * lanes);
      }
    }
  }
}

void Link::transmit(const ChannelPoint& point, std::span<const std::uint8_t> codeword,
                    std::span<const double> noise, std::span<double> llr,
                    LinkBuffers& buffers) const {
  if (binary_) {
    tannery::transmit(point, codeword, noise, llr);
    return mark_unsent(llr, 1);
  }
  receive(point, codeword, noise, buffers);
  const double assumed = point.assumed_value();
  const bool known = point.kind() == ChannelKind::rayleigh && !spec_.ignore_fading;
  demodulate(buffers.in_phase, buffers.quadrature,
             known ? std::span<const double>(buffers.amplitude) : std::span<const double>(),
             assumed * assumed, llr, buffers);
}

SymbolDemodulator::SymbolDemodulator(Link link, std::optional<double> noise_variance)
    : link_(std::move(link)), variance_(noise_variance) {
  if (variance_ && !(*variance_ > 0 && std::isfinite(1 / *variance_)))
    throw Error(fmt::format("noise_variance must be a positive number, got {}", *variance_));
}

void SymbolDemodulator::convert(std::span<const double> values, std::span<const double> amplitudes,
                                std::span<double> llr) {
  const std::size_t symbols = link_.symbols(), n = link_.n();
  const std::size_t frames = values.size() / received();
  if (values.size() != frames * received() || llr.size() != frames * n ||
      (!amplitudes.empty() && amplitudes.size() != frames * symbols)) {
    throw Error("convert: the values, amplitudes and LLRs do not hold the same frames");
  }
  const Constellation& c = link_.constellation();
  if (!variance_ && frames > 0) {
    // Maximum likelihood for a Gaussian mixture with known centres and equal weights, by
    // expectation-maximisation: sigma^2 <- mean over symbols of E[|y - a x|^2 | y] / dims, the
    // expectation under the points' posteriors at the current sigma^2. Started from the
    // nearest-point estimate (which alone is biased low once symbol errors are common).
    const std::size_t count = std::min<std::size_t>(frames * symbols, 1 << 13);
    const double dims = c.complex() ? 2 : 1;
    std::vector<double> distance(c.size());
    auto step = [&](std::optional<double> variance) {
      double sum = 0;
      for (std::size_t s = 0; s < count; ++s) {
        const std::complex<double> y(values[2 * s], c.complex() ? values[2 * s + 1] : 0.0);
        const double a = amplitudes.empty() ? 1.0 : amplitudes[s];
        double nearest = std::numeric_limits<double>::infinity();
        for (std::size_t i = 0; i < c.size(); ++i) {
          distance[i] = std::norm(y - a * c.points()[i]);
          nearest = std::min(nearest, distance[i]);
        }
        if (!variance) {
          sum += nearest;
          continue;
        }
        double weights = 0, weighted = 0;
        for (double d : distance) {
          const double w = std::exp(-(d - nearest) / (2 * *variance));
          weights += w;
          weighted += w * d;
        }
        sum += weighted / weights;
      }
      return sum / (static_cast<double>(count) * dims);
    };
    double variance = step(std::nullopt);
    for (int i = 0; i < 200 && variance > 0; ++i) {
      const double next = step(variance);
      const bool settled = std::abs(next - variance) <= 1e-6 * variance;
      variance = next;
      if (settled) break;
    }
    estimated_from_ = count;
    variance_ = variance;
    if (!(*variance_ > 0 && std::isfinite(1 / *variance_))) {
      throw Error(fmt::format(
          "the noise variance estimated from the capture is {:g}: give --noise-variance",
          *variance_));
    }
  }
  buffers_.in_phase.resize(symbols);
  buffers_.quadrature.resize(c.complex() ? symbols : 0);
  for (std::size_t f = 0; f < frames; ++f) {
    for (std::size_t s = 0; s < symbols; ++s) {
      buffers_.in_phase[s] = values[(f * symbols + s) * 2];
      if (c.complex()) buffers_.quadrature[s] = values[(f * symbols + s) * 2 + 1];
    }
    link_.demodulate(buffers_.in_phase, buffers_.quadrature,
                     amplitudes.empty() ? amplitudes : amplitudes.subspan(f * symbols, symbols),
                     *variance_, llr.subspan(f * n, n), buffers_);
  }
}

}  // namespace tannery
