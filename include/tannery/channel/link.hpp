// A link: which code bits are sent (puncture map), in which order (interleaver), on which
// constellation, over which channel, and how received symbols become the code's LLRs.
//
//   Link link(spec, read_puncture_map("rate-2-3.punct", code.n()));  // or all_sent(n)
//   std::vector<std::complex<double>> symbols(link.symbols());
//   link.modulate(codeword, symbols);                   // what the transmitter sends
//   LinkBuffers buffers;
//   link.demodulate(in_phase, quadrature, {}, noise_variance, llr, buffers);  // receiver
//
// Frame layout: the sent positions of the code in increasing order are the sent bits 0 ..
// sent() - 1; label slot j (symbol j / bits, label bit j % bits, most significant first) carries
// sent bit order[j] of the interleaver; slots past the last sent bit are padding, label bit 0.
// Punctured positions get LLR 0, shortened ones +Inf (known 0).
#pragma once

#include <complex>
#include <cstdint>
#include <span>
#include <vector>

#include "tannery/channel/channel.hpp"
#include "tannery/channel/modulation.hpp"
#include "tannery/io/capture.hpp"

namespace tannery {

// Reusable work space of demodulate() and transmit() (one per thread).
struct LinkBuffers {
  std::vector<double> in_phase, quadrature, amplitude, slots;
  std::vector<double> noise;  // the caller's stream-1 values
  std::vector<std::uint8_t> label_bits;
  std::vector<std::uint32_t> labels;
};

class Link {
 public:
  // Error when the interleaver does not fit the sent bits or nothing is sent.
  Link(const ChannelSpec& spec, PunctureMap map);

  // BPSK on AWGN, BSC or BEC, no interleaver: transmit() of channel.hpp on every position (n
  // stream-1 values, one per position), then mark_unsent.
  bool binary() const noexcept { return binary_; }
  // Sets the LLRs of punctured positions to 0 and of shortened ones to +Inf, in a layout with
  // `stride` values per position (1: one frame; the lane count: a group in lane layout).
  void mark_unsent(std::span<double> llr, std::size_t stride) const;
  // The same for fixed-point channel values: punctured 0, shortened +saturated.
  void mark_unsent(std::span<std::int8_t> values, std::size_t stride, std::int8_t saturated) const;
  void mark_unsent(std::span<std::int16_t> values, std::size_t stride,
                   std::int16_t saturated) const;
  std::size_t n() const noexcept { return map_.state.size(); }
  std::size_t sent() const noexcept { return sent_.size(); }
  std::size_t shortened() const noexcept { return shortened_; }
  std::size_t symbols() const noexcept { return symbols_; }
  const Constellation& constellation() const noexcept { return constellation_; }
  const PunctureMap& puncture_map() const noexcept { return map_; }
  // Information bits per symbol, the rate in Eb/N0 = Es/N0 - 10 log10(rate): information bits
  // (k less the shortened positions) over the symbols sent, = k/n x bits per symbol when every
  // position is sent and fills whole symbols.
  double snr_rate(std::size_t information_bits) const;

  // Stream-1 values one simulated frame takes: binary links one per code position (a Gaussian
  // or, on the BSC and BEC, a uniform); others a standard Gaussian per real dimension of each
  // symbol (symbol s: values dims*s ..), then two per fading block (Rayleigh).
  std::size_t noise_values() const noexcept { return noise_values_; }

  // The symbols a codeword (n bits) is sent as.
  void modulate(std::span<const std::uint8_t> codeword,
                std::span<std::complex<double>> symbols) const;
  // The code's LLRs (n) from received symbols (in_phase and, for complex constellations,
  // quadrature: symbols() each), the fading amplitudes the receiver assumes (empty: 1) and the
  // noise variance per real dimension.
  void demodulate(std::span<const double> in_phase, std::span<const double> quadrature,
                  std::span<const double> amplitude, double noise_variance, std::span<double> llr,
                  LinkBuffers& buffers) const;
  // The channel output of one frame at an AWGN or Rayleigh point, in buffers.in_phase,
  // .quadrature (complex constellations) and .amplitude (Rayleigh): y = a x + sigma z from
  // noise_values() stream-1 values; a = |g| with g = (g1 + i g2) / sqrt(2) per fading block.
  void receive(const ChannelPoint& point, std::span<const std::uint8_t> codeword,
               std::span<const double> noise, LinkBuffers& buffers) const;
  // receive() then demodulate() with the noise the point assumes and the amplitudes unless
  // ignore_fading: one simulated frame's LLRs. Binary links pass to transmit() of channel.hpp
  // and mark_unsent.
  void transmit(const ChannelPoint& point, std::span<const std::uint8_t> codeword,
                std::span<const double> noise, std::span<double> llr, LinkBuffers& buffers) const;
  // transmit() of `lanes` frames side by side, bit for bit (a modulated link): bit l of
  // codewords[i] is position i of frame l, noise[i * lanes + l] its stream-1 value i (as
  // group_gaussians makes them), llr[i * lanes + l] its LLR at position i.
  void transmit_lanes(const ChannelPoint& point, std::span<const std::uint64_t> codewords,
                      std::size_t lanes, std::span<const double> noise, std::span<double> llr,
                      LinkBuffers& buffers) const;

 private:
  // The label of every symbol of a codeword, into buffers.labels.
  void labels(std::span<const std::uint8_t> codeword, LinkBuffers& buffers) const;

  ChannelSpec spec_;
  PunctureMap map_;
  Constellation constellation_;
  std::vector<std::uint32_t> sent_;           // code position of sent bit i
  std::vector<std::uint32_t> slot_position_;  // code position carried by label slot j (n: pad)
  std::size_t symbols_ = 0, noise_values_ = 0, shortened_ = 0;
  bool binary_ = false;
};

// Captured frames of received symbols to the code's LLRs: each frame is symbols() I/Q pairs
// (in-phase, quadrature; the quadrature value is ignored for real constellations), the fading
// amplitude of each symbol optional. Without a given noise variance it is estimated from the
// first frames converted (up to 8192 symbols): the maximum-likelihood variance of the Gaussian
// mixture the received values form around the (amplitude-scaled) points, all points equally
// likely, found by expectation-maximisation. It assumes the capture's symbols are
// uniformly distributed over the constellation (random data) and the noise white and Gaussian.
class SymbolDemodulator {
 public:
  SymbolDemodulator(Link link, std::optional<double> noise_variance);
  const Link& link() const noexcept { return link_; }
  std::size_t received() const noexcept { return 2 * link_.symbols(); }  // values per frame
  // values: frames x received(); amplitudes: frames x symbols() or empty; llr: frames x n.
  void convert(std::span<const double> values, std::span<const double> amplitudes,
               std::span<double> llr);
  // The noise variance used (nullopt before the first convert when estimated), and whether and
  // from how many symbols it was estimated.
  std::optional<double> noise_variance() const noexcept { return variance_; }
  std::size_t estimated_from() const noexcept { return estimated_from_; }

 private:
  Link link_;
  std::optional<double> variance_;
  std::size_t estimated_from_ = 0;
  LinkBuffers buffers_;
};

}  // namespace tannery
