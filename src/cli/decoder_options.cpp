#include <fmt/format.h>
#include <csignal>

#include "commands.hpp"
#include "tannery/error.hpp"

namespace tannery::cli {

void DecoderOptions::add_to(CLI::App& sub) {
  auto* group = sub.add_option_group("decoder", "Decoder options");
  group
      ->add_option("--algorithm", algorithm,
                   "sum-product (exact check rule), min-sum, normalized-min-sum (--alpha), "
                   "offset-min-sum (--beta), "
                   "bit-flip (hard decisions, BSC), ml (exhaustive, k <= 24)")
      ->check(CLI::IsMember(
          {"sum-product", "min-sum", "normalized-min-sum", "offset-min-sum", "bit-flip", "ml"}))
      ->capture_default_str();
  group
      ->add_option("--schedule", schedule,
                   "flooding (all checks, then all variables) or layered (check by check)")
      ->check(CLI::IsMember({"flooding", "layered"}))
      ->capture_default_str();
  group->add_option("--iterations", iterations, "maximum decoder iterations per frame")
      ->check(CLI::Range(1, 1000000))
      ->capture_default_str();
  group->add_flag("--no-early-stop", no_early_stop,
                  "always run every iteration (as fixed-iteration hardware does) instead of "
                  "stopping at a zero syndrome");
  alpha_option =
      group->add_option("--alpha", alpha, "normalization factor of normalized-min-sum, in (0, 1]")
          ->capture_default_str();
  beta_option = group->add_option("--beta", beta, "offset of offset-min-sum (LLR units, >= 0)")
                    ->capture_default_str();
  group
      ->add_option(
          "--kernel", kernel,
          "auto (simd where it implements the algorithm and schedule, else reference), "
          "reference (scalar double precision, the definition) or simd (batched float32 or "
          "integer lanes, one frame per lane)")
      ->check(CLI::IsMember({"auto", "reference", "simd"}))
      ->capture_default_str();
  group->add_option(
      "--quantize", quantize,
      "fixed-point decoding: B.F or B.F:M:P = channel LLRs on B bits with F fractional bits, "
      "messages on M bits (default B), posteriors on P bits (default B+2); min-sum family, "
      "layered");
  group->add_option(
      "--simd-target", simd_target,
      "force one SIMD target for the simd kernel (e.g. AVX2, SSE4, EMU128), to reproduce a figure");
  threshold_option = group->add_option(
      "--flip-threshold", flip_threshold,
      "bit-flip: other checks that must disagree to flip a message (default: strict majority)");
}

DecoderSettings DecoderOptions::settings() const {
  DecoderSettings s;
  s.algorithm = *parse_algorithm(algorithm);
  s.schedule = *parse_schedule(schedule);
  s.iterations = iterations;
  s.early_stop = !no_early_stop;
  s.alpha = alpha;
  s.beta = beta;
  s.flip_threshold = flip_threshold;
  s.kernel = *parse_kernel(kernel);
  if (!quantize.empty()) {
    s.quantization = parse_quantization(quantize);
    if (!s.quantization)
      throw Error(
          fmt::format("--quantize '{}': expected B.F or B.F:M:P (e.g. 6.2 or 5.1:5:7)", quantize));
  }
  if (!simd_target.empty()) force_simd_target(simd_target);
  auto refuse = [&](const CLI::Option* option, Algorithm needed, const char* name) {
    if (option && option->count() > 0 && s.algorithm != needed) {
      throw Error(fmt::format("{} applies to --algorithm {} only, not {}", name,
                              algorithm_name(needed), algorithm));
    }
  };
  refuse(alpha_option, Algorithm::normalized_min_sum, "--alpha");
  refuse(beta_option, Algorithm::offset_min_sum, "--beta");
  refuse(threshold_option, Algorithm::bit_flip, "--flip-threshold");
  return s;
}

std::atomic<bool> g_interrupted{false};

namespace {
// Every SIGINT/SIGTERM only asks to stop: a second one while the results are being saved must
// not discard them (SIGKILL remains for a hard stop).
extern "C" void on_signal(int) {
  g_interrupted = true;
}
}  // namespace

void install_interrupt_handler() {
  std::signal(SIGINT, on_signal);
  std::signal(SIGTERM, on_signal);
}

}  // namespace tannery::cli
