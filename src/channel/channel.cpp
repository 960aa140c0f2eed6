#include "tannery/channel/channel.hpp"

#include <fmt/format.h>
#include <cmath>
#include <limits>

#include "tannery/error.hpp"
#include "tannery/parse.hpp"

namespace tannery {

double awgn_sigma(double snr_db, SnrMeasure measure, double rate) {
  const double linear = std::pow(10.0, snr_db / 10.0);
  return std::sqrt(1.0 / (2.0 * (measure == SnrMeasure::ebn0 ? rate : 1.0) * linear));
}

double esn0_db_from_ebn0(double ebn0_db, double rate) {
  return ebn0_db + 10.0 * std::log10(rate);
}

std::optional<std::pair<ChannelKind, std::uint32_t>> parse_channel_model(std::string_view text) {
  if (text == "rayleigh:fast") return std::pair{ChannelKind::rayleigh, 1u};
  if (text.starts_with("rayleigh:block:")) {
    const auto block = parse_count(text.substr(15));
    if (!block || *block == 0 || *block > UINT32_MAX) return std::nullopt;
    return std::pair{ChannelKind::rayleigh, static_cast<std::uint32_t>(*block)};
  }
  const auto kind = from_name<ChannelKind>(text);
  if (!kind) return std::nullopt;
  return std::pair{*kind, 1u};
}

std::string channel_model(const ChannelSpec& spec) {
  if (spec.kind != ChannelKind::rayleigh) return std::string(name_of(spec.kind));
  return spec.fading_block == 1 ? "rayleigh:fast"
                                : fmt::format("rayleigh:block:{}", spec.fading_block);
}

std::string describe(const ChannelSpec& spec) {
  std::string text = channel_model(spec);
  const bool plain_bpsk =
      spec.modulation == Modulation{} && spec.interleaver == Interleaver{} && !spec.ignore_fading;
  if (snr_swept(spec.kind) && !plain_bpsk) {
    text += fmt::format(", {} ({} demapper{}{})", SettingText<Modulation>::format(spec.modulation),
                        name_of(spec.demapper),
                        spec.interleaver == Interleaver{}
                            ? ""
                            : ", interleaver " + SettingText<Interleaver>::format(spec.interleaver),
                        spec.ignore_fading ? ", fading ignored" : "");
  }
  if (!spec.puncture.empty()) text += ", puncture map " + spec.puncture;
  return text;
}

void check_channel_parameter(ChannelKind kind, double parameter) {
  if (!std::isfinite(parameter))
    throw Error(fmt::format("channel parameter {} is not finite", parameter));
  if (kind == ChannelKind::bec && (parameter < 0 || parameter > 1)) {
    throw Error(fmt::format("bec erasure probability must be in [0, 1], got {}", parameter));
  }
  // A BSC with p > 1/2 is the BSC with 1 - p and its outputs inverted: refused as a likely slip.
  if (kind == ChannelKind::bsc && (parameter < 0 || parameter > 0.5)) {
    throw Error(fmt::format("bsc crossover probability must be in [0, 0.5], got {}", parameter));
  }
}

ChannelPoint ChannelPoint::awgn(double sigma, std::optional<double> assumed_sigma) {
  // The noise and the LLR scale 2 / sigma^2 the decoder assumes must be representable.
  for (double s : {sigma, assumed_sigma.value_or(sigma)}) {
    const double scale = 2 / (s * s);
    if (!(s > 0 && std::isfinite(s) && scale > 0 && std::isfinite(scale))) {
      throw Error(fmt::format(
          "a noise standard deviation of {:g} is outside what a simulation can represent", s));
    }
  }
  return {ChannelKind::awgn, sigma, assumed_sigma.value_or(sigma)};
}

ChannelPoint ChannelPoint::rayleigh(double sigma, std::optional<double> assumed_sigma) {
  const ChannelPoint p = awgn(sigma, assumed_sigma);
  return {ChannelKind::rayleigh, p.value_, p.assumed_};
}

ChannelPoint ChannelPoint::bsc(double p, std::optional<double> assumed_p) {
  check_channel_parameter(ChannelKind::bsc, p);
  if (assumed_p && !(*assumed_p >= 0 && *assumed_p <= 0.5)) {
    throw Error(fmt::format("the assumed bsc crossover probability must be in [0, 0.5], got {}",
                            *assumed_p));
  }
  return {ChannelKind::bsc, p, assumed_p.value_or(p)};
}

ChannelPoint ChannelPoint::bec(double epsilon) {
  check_channel_parameter(ChannelKind::bec, epsilon);
  return {ChannelKind::bec, epsilon, epsilon};
}

void validate(const ChannelSpec& c) {
  const bool snr = snr_swept(c.kind);
  if (!snr && (c.snr_offset_db != 0 || c.design_rate || c.measure != SnrMeasure::ebn0))
    throw Error("snr, design_rate and snr_offset_db apply to the awgn and rayleigh channels only");
  if (c.kind != ChannelKind::bsc && c.assumed_crossover)
    throw Error("assumed_crossover applies to the bsc channel only");
  if (!snr && !(c.modulation == Modulation{})) {
    throw Error(
        fmt::format("modulation {} needs the awgn or rayleigh channel (bsc and bec are "
                    "binary)",
                    SettingText<Modulation>::format(c.modulation)));
  }
  if (!snr && !(c.interleaver == Interleaver{}))
    throw Error("interleaver applies to the awgn and rayleigh channels only");
  if (c.kind != ChannelKind::rayleigh && (c.fading_block != 1 || c.ignore_fading))
    throw Error("fading_block and ignore_fading apply to the rayleigh channel only");
  if (c.fading_block == 0) throw Error("fading_block must be at least 1 symbol");
  if (!std::isfinite(c.snr_offset_db))
    throw Error(fmt::format("snr_offset_db must be a finite number, got {}", c.snr_offset_db));
}

ChannelPoint channel_point(const ChannelSpec& spec, double parameter, double rate) {
  validate(spec);
  switch (spec.kind) {
    case ChannelKind::awgn:
    case ChannelKind::rayleigh: {
      check_channel_parameter(spec.kind, parameter);
      const double sigma = awgn_sigma(parameter, spec.measure, rate);
      const double assumed = awgn_sigma(parameter + spec.snr_offset_db, spec.measure, rate);
      try {
        return spec.kind == ChannelKind::awgn ? ChannelPoint::awgn(sigma, assumed)
                                              : ChannelPoint::rayleigh(sigma, assumed);
      } catch (const Error&) {
        throw Error(fmt::format(
            "sweep point {} dB (with SNR offset {} dB) gives a noise standard deviation of {:g}: "
            "outside what a simulation can represent",
            parameter, spec.snr_offset_db,
            (sigma > 0 && std::isfinite(2 / (sigma * sigma))) ? assumed : sigma));
      }
    }
    case ChannelKind::bsc:
      return ChannelPoint::bsc(parameter, spec.assumed_crossover);
    case ChannelKind::bec:
      return ChannelPoint::bec(parameter);
  }
  throw Error("unknown channel");
}

double llr_magnitude(const ChannelPoint& channel) {
  switch (channel.kind()) {
    case ChannelKind::awgn:
    case ChannelKind::rayleigh:
      return 2.0 / (channel.assumed_value() * channel.assumed_value());
    case ChannelKind::bsc: {
      const double p = channel.assumed_value();
      // p = 0 gives certainty; p = 1/2 gives no information; p > 1/2 flips the sign as it should.
      return p == 0 ? std::numeric_limits<double>::infinity()
                    : (p == 1 ? -std::numeric_limits<double>::infinity() : std::log((1 - p) / p));
    }
    case ChannelKind::bec:
      return std::numeric_limits<double>::infinity();
  }
  return 0;
}

void transmit(const ChannelPoint& channel, std::span<const std::uint8_t> codeword,
              std::span<const double> noise, std::span<double> llr) {
  const std::size_t n = codeword.size();
  const double magnitude = llr_magnitude(channel);
  switch (channel.kind()) {
    case ChannelKind::awgn:
      for (std::size_t i = 0; i < n; ++i) {
        const double y = (codeword[i] ? -1.0 : 1.0) + channel.value() * noise[i];
        llr[i] = magnitude * y;
      }
      return;
    case ChannelKind::bsc:
      for (std::size_t i = 0; i < n; ++i) {
        const std::uint8_t received = codeword[i] ^ (noise[i] < channel.value() ? 1 : 0);
        llr[i] = received ? -magnitude : magnitude;
      }
      return;
    case ChannelKind::bec:
      for (std::size_t i = 0; i < n; ++i)
        llr[i] = noise[i] < channel.value() ? 0.0 : (codeword[i] ? -magnitude : magnitude);
      return;
    case ChannelKind::rayleigh:
      break;
  }
  throw Error("transmit: a faded channel is transmitted by a Link");
}

}  // namespace tannery
