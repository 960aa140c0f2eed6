#include <fmt/format.h>
#include <csignal>

#include "../decode/simd_control.hpp"
#include "commands.hpp"
#include "tannery/error.hpp"

namespace tannery::cli {

void DecoderOptions::add_to(CLI::App& sub) {
  auto* group = sub.add_option_group("decoder", "Decoder options");
  fields.add_to(*group);
  group->add_option(
      "--simd-target", simd_target,
      "force one SIMD target for the simd kernel (e.g. AVX2, SSE4, EMU128), to reproduce a figure");
}

DecoderSettings DecoderOptions::settings(DecoderSettings base) const {
  fields.overlay(base);
  for_each_field<DecoderSettings>([&](const auto& field) {
    const auto owner = parameter_owner(field.key);
    if (owner && fields.given_option(field.key) && base.algorithm != *owner) {
      throw Error(fmt::format("{} applies to --algorithm {} only, not {}", field.flag,
                              name_of(*owner), name_of(base.algorithm)));
    }
  });
  if (!simd_target.empty()) force_simd_target(simd_target);
  return base;
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
