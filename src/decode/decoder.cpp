#include "tannery/decode/decoder.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstdio>

#include "decoders.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/error.hpp"

namespace tannery {

namespace {

constexpr std::size_t kMaxSimdCheckDegree = 127;

}  // namespace

bool simd_supports(const DecoderSettings& s, const Code& code) {
  const bool algorithm_ok =
      s.algorithm == Algorithm::sum_product || s.algorithm == Algorithm::min_sum ||
      s.algorithm == Algorithm::normalized_min_sum || s.algorithm == Algorithm::offset_min_sum;
  return algorithm_ok && (!s.quantization || s.schedule == Schedule::layered) &&
         code.max_check_degree() <= kMaxSimdCheckDegree;
}

DecoderSettings resolve_kernel(DecoderSettings s, const Code& code) {
  if (s.kernel == Kernel::automatic)
    s.kernel = simd_supports(s, code) ? Kernel::simd : Kernel::reference;
  return s;
}

void validate(const DecoderSettings& s) {
  if (s.algorithm != Algorithm::ml && (s.iterations < 1 || s.iterations > 1'000'000)) {
    throw Error(fmt::format("iterations must be between 1 and 1000000, got {}", s.iterations));
  }
  if (s.schedule == Schedule::layered &&
      (s.algorithm == Algorithm::bit_flip || s.algorithm == Algorithm::ml)) {
    throw Error(
        fmt::format("{} has no layered schedule; use the flooding schedule", name_of(s.algorithm)));
  }
  if (!(s.alpha > 0 && s.alpha <= 1))
    throw Error(fmt::format("alpha must be in (0, 1], got {}", s.alpha));
  if (!(s.beta >= 0 && std::isfinite(s.beta)))
    throw Error(fmt::format("beta must be >= 0, got {}", s.beta));
  if (s.flip_threshold < 0) throw Error("flip threshold must be >= 0");
  const bool min_sum_family = s.algorithm == Algorithm::min_sum ||
                              s.algorithm == Algorithm::normalized_min_sum ||
                              s.algorithm == Algorithm::offset_min_sum;
  if (s.quantization) {
    const Quantization& q = *s.quantization;
    if (!min_sum_family)
      throw Error(
          "fixed-point decoding (quantize) covers min-sum, normalized-min-sum and "
          "offset-min-sum");
    if (!(q.channel_bits >= 2 && q.fraction_bits >= 0 && q.fraction_bits < q.channel_bits &&
          q.message_bits >= 2 && q.channel_bits <= q.posterior_bits &&
          q.message_bits <= q.posterior_bits && q.posterior_bits <= 16)) {
      throw Error(fmt::format(
          "impossible quantization {}: need 2 <= bits, fraction < channel bits, channel and "
          "message bits <= posterior bits <= 16",
          quantization_spec(q)));
    }
  }
  if (s.kernel == Kernel::simd || s.quantization) {
    if (s.schedule != Schedule::layered && s.quantization) {
      throw Error("fixed-point decoding is defined for the layered schedule, not flooding");
    }
    if (!min_sum_family && s.algorithm != Algorithm::sum_product) {
      throw Error(fmt::format("no SIMD kernel for {}", name_of(s.algorithm)));
    }
  }
}

void validate(const DecoderSettings& s, const Code& code) {
  validate(s);
  if (s.kernel == Kernel::simd) {
    const std::size_t max_degree = code.max_check_degree();
    if (max_degree > kMaxSimdCheckDegree)
      throw Error(
          fmt::format("the batched decoders handle check degrees up to {}, this code has {}",
                      kMaxSimdCheckDegree, max_degree));
  }
  if (s.algorithm == Algorithm::ml) {
    const std::size_t k = Encoder(code).k();
    if (k > 24) {
      throw Error(
          fmt::format("ml decoding enumerates all 2^k codewords and is limited to k <= 24; this "
                      "code has k = {}",
                      k));
    }
  }
}

std::optional<Quantization> parse_quantization(std::string_view spec) {
  // Exactly "B.F" or "B.F:M:P", every field a decimal number (nothing before, between or after).
  std::vector<int> fields;
  std::size_t at = 0;
  for (const char separator : {'.', ':', ':', '\0'}) {
    int value = 0;
    const auto [end, ec] = std::from_chars(spec.data() + at, spec.data() + spec.size(), value);
    if (ec != std::errc() || end == spec.data() + at) return std::nullopt;
    fields.push_back(value);
    at = static_cast<std::size_t>(end - spec.data());
    if (at == spec.size()) break;
    if (separator == '\0' || spec[at] != separator) return std::nullopt;
    ++at;
  }
  if (at != spec.size() || (fields.size() != 2 && fields.size() != 4)) return std::nullopt;
  Quantization q;
  q.channel_bits = fields[0];
  q.fraction_bits = fields[1];
  q.message_bits = fields.size() == 4 ? fields[2] : fields[0];
  q.posterior_bits = fields.size() == 4 ? fields[3] : fields[0] + 2;
  return q;
}

std::string quantization_spec(const Quantization& q) {
  return fmt::format("{}.{}:{}:{}", q.channel_bits, q.fraction_bits, q.message_bits,
                     q.posterior_bits);
}

std::string describe(const DecoderSettings& s) {
  std::string text(name_of(s.algorithm));
  if (s.algorithm == Algorithm::ml) return text + " (exhaustive block maximum likelihood)";
  if (s.algorithm == Algorithm::normalized_min_sum) text += fmt::format(" alpha={}", s.alpha);
  if (s.algorithm == Algorithm::offset_min_sum) text += fmt::format(" beta={}", s.beta);
  if (s.algorithm == Algorithm::bit_flip) {
    text += s.flip_threshold ? fmt::format(" threshold={}", s.flip_threshold)
                             : std::string(" threshold=majority");
  }
  if (s.quantization) text += fmt::format(" fixed-point {}", quantization_spec(*s.quantization));
  text += fmt::format(" ({} kernel)", name_of(s.kernel));
  return text + fmt::format(", {}, {} iterations{}", name_of(s.schedule), s.iterations,
                            s.early_stop ? ", early stop" : ", no early stop");
}

std::size_t changed_decisions(std::span<const std::uint8_t> hard, std::span<const double> llr) {
  std::size_t changed = 0;
  for (std::size_t i = 0; i < hard.size(); ++i) changed += hard[i] != decide(llr[i]);
  return changed;
}

FrameOutcome assess(const Code& code, std::span<const std::uint8_t> hard, int iterations) {
  FrameOutcome o;
  o.iterations = iterations;
  o.syndrome_weight = static_cast<std::uint32_t>(syndrome_weight(code, hard));
  for (std::uint8_t h : hard) o.undecided += h == kUndecided;
  o.converged = o.syndrome_weight == 0 && o.undecided == 0;
  return o;
}

void Decoder::decode(std::span<const double> llr, std::span<std::uint8_t> hard,
                     std::span<double> posterior, std::span<FrameOutcome> outcome,
                     std::size_t first_frame) {
  const std::size_t n = code_.n(), frames = outcome.size();
  if (llr.size() != frames * n || hard.size() != frames * n ||
      !(posterior.empty() || posterior.size() == frames * n)) {
    throw Error(fmt::format(
        "decode: {} frames of n = {} take {} values each of channel LLRs and hard decisions "
        "(and posteriors, if wanted); given {}, {} and {}",
        frames, n, frames * n, llr.size(), hard.size(), posterior.size()));
  }
  bool any_nan = false;  // a branch-free pass first (it vectorises), the search only on failure
  for (double x : llr) any_nan |= x != x;
  for (std::size_t i = 0; any_nan && i < llr.size(); ++i) {
    if (std::isnan(llr[i])) {
      throw Error(
          fmt::format("frame {}, position {}: channel LLR is NaN", first_frame + i / n, i % n));
    }
  }
  decode_batch(llr, hard, posterior, outcome);
}

DecodedFrame Decoder::decode(std::span<const double> llr) {
  DecodedFrame d;
  if (llr.size() != code_.n()) {
    throw Error(fmt::format("decode: a frame of this code has n = {} channel LLRs, given {}",
                            code_.n(), llr.size()));
  }
  d.bits.resize(code_.n());
  d.posterior.resize(code_.n());
  decode(llr, d.bits, d.posterior, std::span(&d.outcome, 1));
  return d;
}

DecodedFrame Decoder::decode(std::span<const float> llr) {
  const std::vector<double> wide(llr.begin(), llr.end());
  return decode(std::span<const double>(wide));
}

void Decoder::decode_batch(std::span<const double> llr, std::span<std::uint8_t> hard,
                           std::span<double> posterior, std::span<FrameOutcome> outcome) {
  const std::size_t n = code_.n();
  for (std::size_t f = 0; f < outcome.size(); ++f) {
    outcome[f] = decode_frame(llr.subspan(f * n, n), hard.subspan(f * n, n),
                              posterior.empty() ? posterior : posterior.subspan(f * n, n));
  }
}

std::unique_ptr<Decoder> make_decoder(std::shared_ptr<const Code> shared,
                                      const DecoderSettings& requested) {
  if (!shared) throw Error("make_decoder: no code");
  const Code& code = *shared;
  const DecoderSettings settings = resolve_kernel(requested, code);
  validate(settings, code);
  std::unique_ptr<Decoder> d;
  if (settings.kernel == Kernel::simd) {
    d = detail::make_simd(code, settings);
  } else if (settings.quantization) {
    d = detail::make_fixed_point(code, settings);
  } else if (settings.algorithm == Algorithm::bit_flip) {
    d = detail::make_bit_flip(code, settings);
  } else if (settings.algorithm == Algorithm::ml) {
    d = detail::make_ml(code, settings);
  } else {
    d = detail::make_belief_propagation(code, settings);
  }
  d->owner_ = std::move(shared);  // code_ refers to *owner_ from here on
  return d;
}

std::unique_ptr<Decoder> make_decoder(Code code, const DecoderSettings& settings) {
  return make_decoder(std::make_shared<const Code>(std::move(code)), settings);
}

}  // namespace tannery
