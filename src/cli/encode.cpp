// tannery encode --code CODE: information bits to codewords, or a demo capture through a channel.
#include <fmt/format.h>
#include <fstream>
#include <iostream>

#include "commands.hpp"
#include "settings_options.hpp"
#include "tannery/base/output_file.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/error.hpp"
#include "tannery/io/capture.hpp"
#include "tannery/sim/simulator.hpp"

namespace tannery::cli {

namespace {

struct EncodeOptions {
  CodeInput input;
  std::string bits = "-";
  BitFormat input_format = BitFormat::text;
  std::string output = "-";
  std::string output_format;
  std::uint64_t demo = 0;
  std::optional<ChannelModel> channel;
  std::optional<Modulation> modulation;
  Interleaver interleaver;
  std::string puncture;
  std::string fading_output;
  double at = 2.0;
  std::uint64_t seed = 1;
  SampleMeaning meaning = SampleMeaning::llr;
  double scale = 1.0;
  std::string truth;
  bool systematic_first = false;
};

void encode_bits(const EncodeOptions& o, const Code& code, const Encoder& encoder) {
  const BitFormat out_format =
      *from_name<BitFormat>(o.output_format.empty() ? "text" : o.output_format);
  std::ifstream file;
  std::istream* in = &open_input(o.bits, file);
  BitFrameReader reader(*in, o.bits == "-" ? "<stdin>" : o.bits, o.input_format, encoder.k());
  OutputFile out(o.output, false);
  std::vector<std::uint8_t> info, word(code.n());
  std::string text;
  for (std::size_t got; (got = reader.read(1024, info)) > 0;) {
    text.clear();
    for (std::size_t f = 0; f < got; ++f) {
      encoder.encode(std::span(info).subspan(f * encoder.k(), encoder.k()), word);
      append_bits(text, word, out_format);
    }
    out.write(text);
  }
  // Nothing good at all: an existing output keeps its content rather than becoming empty.
  if (reader.error() && reader.frames_read() == 0) throw Error(*reader.error());
  out.commit();
  if (reader.error()) {
    throw Error(fmt::format("{}; encoded and written before it: {}", *reader.error(),
                            count_of(reader.frames_read(), "complete frame")));
  }
}

// Random frames through a link, written as a capture that tannery decode reads: the LLRs (or
// BPSK samples) of the sent positions, or with --modulation the received symbols as I/Q pairs.
void demo_capture(const EncodeOptions& o, const Code& code, const Encoder& encoder) {
  const SampleFormat format =
      *from_name<SampleFormat>(o.output_format.empty() ? "f32" : o.output_format);
  ChannelSpec spec;
  std::tie(spec.kind, spec.fading_block) = o.channel.value_or(ChannelModel{ChannelKind::awgn, 1});
  const bool symbols = o.modulation.has_value();
  spec.modulation = o.modulation.value_or(Modulation{});
  spec.interleaver = o.interleaver;
  if (symbols && !snr_swept(spec.kind))
    throw Error("--modulation needs --channel awgn or rayleigh");
  if (!o.fading_output.empty() && !(symbols && spec.kind == ChannelKind::rayleigh))
    throw Error("--fading-output needs --modulation and --channel rayleigh");
  const Link link(spec, o.puncture.empty() ? PunctureMap::all_sent(code.n())
                                           : read_puncture_map(o.puncture, code.n()));
  check_shortening(link, encoder);
  const ChannelPoint channel = channel_point(spec, o.at, link.snr_rate(encoder.k()));
  const bool samples = o.meaning == SampleMeaning::samples;
  if (symbols && o.meaning != SampleMeaning::llr)
    throw Error("--meaning applies to soft-bit captures, not to the symbols --modulation writes");
  if (samples && spec.kind != ChannelKind::awgn)
    throw Error("--meaning samples needs --channel awgn");
  // Values as decode reads them with this meaning: LLR / factor (y = LLR sigma^2 / 2 for samples).
  const SampleConverter meaning(
      link.puncture_map(), o.meaning,
      samples ? std::optional(channel.value() * channel.value()) : std::nullopt);
  OutputFile out(o.output, false), truth(o.truth, false), fading(o.fading_output, false);
  std::vector<std::uint8_t> info(encoder.k()), word(code.n());
  std::vector<double> llr(code.n()), values;
  LinkBuffers buffers;
  std::string bytes, bits, amplitudes;
  for (std::uint64_t f = 0; f < o.demo; ++f) {
    const FrameId id{o.seed, 0, f};
    frame_codeword(id, encoder, link, false, info, word);
    values.clear();
    if (symbols) {
      buffers.noise.resize(link.noise_values());
      frame_gaussians(id, buffers.noise);
      link.receive(channel, word, buffers.noise, buffers);
      for (std::size_t s = 0; s < link.symbols(); ++s) {
        values.push_back(buffers.in_phase[s]);
        values.push_back(buffers.quadrature.empty() ? 0.0 : buffers.quadrature[s]);
      }
      if (fading.enabled()) append_samples(amplitudes, buffers.amplitude, SampleFormat::f32, 1);
    } else {
      frame_llrs(id, channel, link, word, llr, buffers);
      for (std::size_t i = 0; i < code.n(); ++i) {
        if (link.puncture_map().state[i] == PunctureMap::sent)
          values.push_back(llr[i] / meaning.factor());
      }
    }
    append_samples(bytes, values, format, o.scale);
    append_bits(bits, info, BitFormat::text);
    if (bytes.size() > (1 << 20)) out.write(bytes), bytes.clear();
    if (bits.size() > (1 << 20)) truth.write(bits), bits.clear();
    if (amplitudes.size() > (1 << 20)) fading.write(amplitudes), amplitudes.clear();
  }
  out.write(bytes);
  truth.write(bits);
  fading.write(amplitudes);
  out.commit();
  truth.commit();
  fading.commit();
  const std::string point =
      snr_swept(spec.kind)
          ? fmt::format("{} dB Eb/N0 = {:.4g} dB Es/N0, noise variance {:.6g} per real dimension",
                        o.at, esn0_db_from_ebn0(o.at, link.snr_rate(encoder.k())),
                        channel.value() * channel.value())
          : fmt::format("{}", o.at);
  fmt::print(stderr, "wrote {} frames of {} ({}; {} at {}, seed {})\n", o.demo,
             symbols ? fmt::format("{} {} symbols as I/Q pairs", link.symbols(),
                                   SettingText<Modulation>::format(spec.modulation))
                     : fmt::format("{} values", link.sent()),
             name_of(format), channel_model(spec), point, o.seed);
}

}  // namespace

void add_encode(CLI::App& app) {
  auto o = std::make_shared<EncodeOptions>();
  auto* sub = app.add_subcommand(
      "encode", "Encode information bits, or make a demo capture through a channel");
  sub->footer(
      "Examples:\n"
      "  printf '0101\\n1111\\n' | tannery encode --code hamming-7-4\n"
      "  tannery encode --code qc-rate-half-z54 --demo 1000 --at 2.5 --seed 7 -o demo.f32 "
      "--truth demo.bits\n"
      "  tannery encode --code qc-rate-half-z54 --demo 100 --modulation 64qam --at 9 -o iq.f32 "
      "--truth iq.bits");
  o->input.add_to(*sub, false, "");
  sub->add_option("INPUT", o->bits, "information bits, k per frame ('-' = stdin)")
      ->capture_default_str();
  add_named_option(*sub, "--input-format", o->input_format,
                   "text (0/1, whitespace ignored), packed or bytes");
  sub->add_option("-o,--output", o->output, "output file ('-' = stdout)")->capture_default_str();
  sub->add_option(
      "--output-format", o->output_format,
      "codewords: text, packed or bytes (default text); demo captures: f32, f64, i8, i16 or text "
      "(default f32)");
  sub->add_option("--demo", o->demo,
                  "instead of reading bits: this many random frames through --channel")
      ->check(kNonNegative);
  add_channel_option(*sub, o->channel,
                     "demo channel: awgn, rayleigh:fast, rayleigh:block:B, bsc or bec")
      ->default_str("awgn");
  sub->add_option("--at", o->at,
                  "demo channel point: Eb/N0 in dB (awgn, rayleigh; information bits per sent "
                  "symbol), p (bsc) or epsilon (bec)")
      ->capture_default_str();
  add_setting_option(*sub, "--modulation", o->modulation,
                     "demo: write received symbols as I/Q pairs (interleaved, Q = 0 for real "
                     "constellations), symbols per frame as 'tannery inspect' states");
  add_setting_option(*sub, "--interleaver", o->interleaver,
                     "demo: none, random:SEED or block:ROWSxCOLS");
  sub->add_option("--puncture", o->puncture,
                  "demo: puncture map (punctured and shortened positions are not sent)");
  sub->add_option("--fading-output", o->fading_output,
                  "demo with --modulation on rayleigh: write the fading amplitude of every "
                  "symbol (f32) for decode --fading");
  sub->add_option("--seed", o->seed, "demo seed (frames as tannery simulate's point 0)")
      ->capture_default_str();
  add_named_option(*sub, "--meaning", o->meaning,
                   "demo values: llr, llr-inverted or samples (BPSK y, awgn only)");
  sub->add_option("--scale", o->scale,
                  "demo: value multiplier for f32/f64/text, LSB size for i8/i16")
      ->capture_default_str();
  sub->add_option("--truth", o->truth, "demo: also write the sent information bits (text)");
  sub->add_flag("--systematic-first", o->systematic_first,
                "put the information bits at codeword positions 0..k-1 (refused when those "
                "positions are no information set); default: the positions 'tannery inspect "
                "--json' lists as info_positions");
  sub->callback([o] {
    check_paths(
        {{"--code", o->input.code},
         {"INPUT", o->demo > 0 ? "" : o->bits},
         {"--puncture", o->puncture}},
        {{"--output", o->output}, {"--truth", o->truth}, {"--fading-output", o->fading_output}});
    const Code code = o->input.load();
    const Encoder encoder = make_encoder(code, o->systematic_first);
    if (o->demo > 0)
      demo_capture(*o, code, encoder);
    else
      encode_bits(*o, code, encoder);
  });
}

}  // namespace tannery::cli
