// tannery decode --code CODE INPUT: decode captured soft bits offline.
#include <fmt/format.h>
#include <chrono>
#include <fstream>
#include <iostream>

#include "commands.hpp"
#include "settings_options.hpp"
#include "tannery/base/output_file.hpp"
#include "tannery/channel/link.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/decode/parallel.hpp"
#include "tannery/error.hpp"
#include "tannery/io/capture.hpp"

namespace tannery::cli {

namespace {

struct DecodeOptions {
  CodeInput input;
  DecoderOptions decoder;
  std::string capture;
  SampleFormat input_format = SampleFormat::f32;
  double scale = 1.0;
  SampleMeaning meaning = SampleMeaning::llr;
  std::optional<double> noise_variance;
  std::string puncture;
  std::optional<Modulation> modulation;
  Interleaver interleaver;
  Demapper demapper = Demapper::exact;
  std::string fading;
  std::string output = "-";
  BitFormat output_format = BitFormat::text;
  bool codeword = false;
  std::string posterior;
  std::string report;
  std::string report_format;
  bool strict = false;
  unsigned threads = 0;
  std::string truth;
  std::optional<std::uint64_t> max_failures;
  bool systematic_first = false;
};

// One frame's line of the per-frame report (csv or jsonl); bit_errors only against a truth.
std::string report_line(bool csv, std::uint64_t frame, const FrameOutcome& r, std::size_t changed,
                        std::optional<std::uint64_t> bit_errors) {
  if (csv) {
    return fmt::format("{},{},{},{},{},{}{}\n", frame, r.converged ? 1 : 0, r.iterations,
                       r.syndrome_weight, r.undecided, changed,
                       bit_errors ? fmt::format(",{}", *bit_errors) : "");
  }
  return fmt::format(
      "{{\"frame\": {}, \"converged\": {}, \"iterations\": {}, \"syndrome_weight\": {}, "
      "\"undecided_bits\": {}, \"changed_bits\": {}{}}}\n",
      frame, r.converged, r.iterations, r.syndrome_weight, r.undecided, changed,
      bit_errors ? fmt::format(", \"bit_errors\": {}", *bit_errors) : "");
}

void run(const DecodeOptions& o) {
  check_paths({{"--code", o.input.code},
               {"INPUT", o.capture},
               {"--puncture", o.puncture},
               {"--truth", o.truth},
               {"--fading", o.fading}},
              {{"--output", o.output}, {"--posterior", o.posterior}, {"--report", o.report}});
  const auto code = std::make_shared<const Code>(o.input.load());
  const std::size_t n = code->n();
  const Encoder encoder = make_encoder(*code, o.systematic_first);
  PunctureMap map =
      o.puncture.empty() ? PunctureMap::all_sent(n) : read_puncture_map(o.puncture, n);
  // Soft bits through the sample converter, or I/Q symbols through the demodulator.
  std::optional<SampleConverter> converter;
  std::optional<SymbolDemodulator> symbols;
  if (o.modulation) {
    if (o.meaning != SampleMeaning::llr)
      throw Error("--meaning applies to soft-bit captures; --modulation reads I/Q symbols");
    ChannelSpec link;
    link.modulation = *o.modulation;
    link.interleaver = o.interleaver;
    link.demapper = o.demapper;
    symbols.emplace(Link(link, std::move(map)), o.noise_variance);
  } else {
    if (!o.fading.empty()) throw Error("--fading needs --modulation (a capture of symbols)");
    converter.emplace(std::move(map), o.meaning, o.noise_variance);
  }
  ParallelDecoder decoder(code, o.decoder.settings(), o.threads);

  std::ifstream file, fading_file;
  CaptureReader reader(open_input(o.capture, file), o.capture == "-" ? "<stdin>" : o.capture,
                       o.input_format, o.scale,
                       symbols ? symbols->received() : converter->received());
  // --fading: the amplitude of every symbol, f32, a frame of symbols() values per frame.
  std::optional<CaptureReader> fading;
  if (!o.fading.empty()) {
    fading.emplace(open_input(o.fading, fading_file), o.fading, SampleFormat::f32, 1.0,
                   symbols->link().symbols());
  }
  std::vector<double> amplitudes;
  // --truth: the information bits that were sent, as encode writes them (text, k per frame).
  std::ifstream truth_file;
  std::optional<BitFrameReader> truth;
  if (!o.truth.empty())
    truth.emplace(open_input(o.truth, truth_file), o.truth, BitFormat::text, encoder.k());
  std::vector<std::uint8_t> sent;
  std::uint64_t truth_frame_errors = 0, truth_bit_errors = 0;

  const bool csv = o.report_format.empty()
                       ? !(o.report.ends_with(".jsonl") || o.report.ends_with(".json"))
                       : o.report_format == "csv";
  OutputFile bits_out(o.output, o.strict), posterior_out(o.posterior, o.strict),
      report_out(o.report, o.strict);
  if (csv) {
    report_out.write(
        fmt::format("frame,converged,iterations,syndrome_weight,undecided_bits,changed_bits{}\n",
                    truth ? ",bit_errors" : ""));
  }
  const std::size_t batch = 128 * decoder.threads();
  std::vector<double> values, llr, posterior;
  std::vector<std::uint8_t> hard, selected(o.codeword ? n : encoder.k());
  std::vector<FrameOutcome> outcomes;
  std::uint64_t frames = 0, failures = 0, iterations = 0;
  const auto start = std::chrono::steady_clock::now();
  std::string text, report, bytes;
  std::vector<float> as_float;
  for (std::size_t got; (got = reader.read(batch, values)) > 0; frames += got) {
    llr.resize(got * n);
    if (symbols) {
      if (fading && fading->read(got, amplitudes) != got) {
        throw Error(fmt::format("{}: {}; decoding stopped at frame {}", o.fading,
                                fading->error().value_or("ends before the capture"),
                                frames + fading->frames_read()));
      }
      const bool estimate = !symbols->noise_variance();
      symbols->convert(values, amplitudes, llr);
      if (estimate) {
        fmt::print(stderr,
                   "noise variance {:.6g} per real dimension, estimated from the capture's first "
                   "{} symbols (maximum likelihood, random data assumed; give --noise-variance "
                   "when known)\n",
                   *symbols->noise_variance(), symbols->estimated_from());
      }
    } else {
      converter->convert(values, llr);
    }
    hard.resize(got * n);
    outcomes.resize(got);
    posterior.resize(posterior_out.enabled() ? got * n : 0);
    decoder.decode(llr, hard, posterior, outcomes, frames);
    if (truth && truth->read(got, sent) != got) {
      throw Error(fmt::format(
          "{}: {}; decoding stopped at frame {}, where the check against it ends", o.truth,
          truth->error().value_or("ends before the capture"), frames + truth->frames_read()));
    }
    text.clear();
    report.clear();
    for (std::size_t f = 0; f < got; ++f) {
      const std::span<const std::uint8_t> h(hard.data() + f * n, n);
      // Information bits against the truth; an undecided bit is an error whatever was sent.
      std::optional<std::uint64_t> bit_errors;
      if (truth) {
        bit_errors = encoder.info_errors(h, std::span(sent).subspan(f * encoder.k(), encoder.k()));
        truth_bit_errors += *bit_errors;
        truth_frame_errors += *bit_errors > 0;
      }
      // An undecided bit (kUndecided) is written as 0; the report counts it.
      for (std::size_t i = 0; i < selected.size(); ++i)
        selected[i] = h[o.codeword ? i : encoder.info_positions()[i]] & 1u;
      append_bits(text, selected, o.output_format);
      const FrameOutcome& r = outcomes[f];
      failures += r.converged ? 0 : 1;
      iterations += static_cast<std::uint64_t>(r.iterations);
      if (report_out.enabled()) {
        report += report_line(csv, frames + f, r,
                              changed_decisions(h, std::span(llr).subspan(f * n, n)), bit_errors);
      }
    }
    bits_out.write(text);
    report_out.write(report);
    if (posterior_out.enabled()) {
      bytes.clear();
      as_float.assign(posterior.begin(), posterior.end());
      append_f32_le(bytes, as_float);
      posterior_out.write(bytes);
    }
  }
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  // Nothing good at all: an existing output keeps its content rather than becoming empty.
  if (reader.error() && (o.strict || frames == 0)) {
    for (OutputFile* out : {&bits_out, &posterior_out, &report_out}) out->abandon();
    throw Error(*reader.error() + (o.strict ? " (--strict: nothing written)" : ""));
  }
  for (OutputFile* out : {&bits_out, &posterior_out, &report_out}) out->commit();
  const double fps = seconds > 0 ? static_cast<double>(frames) / seconds : 0;
  fmt::print(
      stderr,
      "decoded {} frames ({}): {} did not converge; {:.0f} frames/s, {:.3f} coded Mbit/s, "
      "{:.3g} edge-updates/s ({})\n",
      frames, describe(decoder.settings()), failures, fps, fps * static_cast<double>(n) / 1e6,
      seconds > 0 ? static_cast<double>(iterations) * static_cast<double>(code->edges()) / seconds
                  : 0.0,
      count_of(decoder.threads(), "thread"));
  if (truth) {
    const double bits = static_cast<double>(frames) * static_cast<double>(encoder.k());
    fmt::print(stderr,
               "against {}: {} frame errors in {} frames (FER {:.4g}), {} bit errors in {:.0f} "
               "information bits (BER {:.4g})\n",
               o.truth, truth_frame_errors, frames,
               frames ? static_cast<double>(truth_frame_errors) / static_cast<double>(frames) : 0.0,
               truth_bit_errors, bits,
               bits > 0 ? static_cast<double>(truth_bit_errors) / bits : 0.0);
  }
  if (reader.error()) {
    throw Error(frames == 0 ? *reader.error()
                            : fmt::format("{}; decoded and written before it: {}", *reader.error(),
                                          count_of(frames, "complete frame")));
  }
  if (o.max_failures && failures > *o.max_failures) {
    fmt::print(stderr,
               "tannery: {} frames did not converge, more than --max-failures {} (a capture read "
               "with the wrong format or meaning fails nearly every frame)\n",
               failures, *o.max_failures);
    throw CheckFailed{1};
  }
}

}  // namespace

void add_decode(CLI::App& app) {
  auto o = std::make_shared<DecodeOptions>();
  auto* sub =
      app.add_subcommand("decode", "Decode captured soft bits (LLRs or channel samples) offline");
  sub->footer(
      "Examples:\n"
      "  tannery decode --code qc-rate-half-z54 capture.f32 --output bits.txt --report frames.csv\n"
      "  tannery decode --code my.alist rx.i8 --input-format i8 --scale 0.125 --posterior "
      "soft.f32\n"
      "  tannery decode --code my.alist rx.txt --input-format text --meaning samples "
      "--noise-variance 0.5\n"
      "  tannery decode --code qc-rate-half-z54 iq.i16 --input-format i16 --scale 0.001 "
      "--modulation 64qam\n"
      "Binary inputs are little-endian frames of n values (n minus punctured/shortened "
      "positions).\n"
      "Exit status: 0 decoded, 1 more frames failed than --max-failures, 2 error.");
  o->input.add_to(*sub, false, "");
  sub->add_option("INPUT", o->capture, "capture file ('-' = stdin)")->required();
  add_named_option(*sub, "--input-format", o->input_format,
                   "f32, f64 (IEEE little-endian), i8, i16 (integers times --scale), text "
                   "(numbers separated by whitespace or commas)");
  sub->add_option("--scale", o->scale,
                  "multiply every input value by this (e.g. the LSB of fixed-point LLRs)")
      ->capture_default_str();
  add_named_option(*sub, "--meaning", o->meaning,
                   "llr (log P(0)/P(1), positive = 0), llr-inverted (positive = 1), samples (BPSK "
                   "y with 0 -> +1; LLR = 2y/sigma^2)");
  sub->add_option("--noise-variance", o->noise_variance,
                  "sigma^2 per real sample, for --meaning samples and --modulation (there "
                  "estimated from the capture when not given)");
  add_setting_option(*sub, "--modulation", o->modulation,
                     "the capture holds received symbols as I/Q pairs (2 values per symbol, "
                     "symbols per frame as 'tannery inspect' states): bpsk, qpsk, 16qam, 64qam, "
                     "256qam, 4pam, 8pam or a constellation file");
  add_setting_option(*sub, "--interleaver", o->interleaver,
                     "with --modulation: the transmitter's bit interleaver");
  add_named_option(*sub, "--demapper", o->demapper, "with --modulation: exact or max-log");
  sub->add_option("--fading", o->fading,
                  "with --modulation: fading amplitude of every symbol (f32, symbols per "
                  "frame), for a receiver that knows the channel");
  sub->add_option("--puncture", o->puncture,
                  "map of positions the capture lacks: lines 'punctured LIST' (LLR 0) or "
                  "'shortened LIST' (known 0)");
  sub->add_option("-o,--output", o->output, "decoded bits ('-' = stdout)")->capture_default_str();
  add_named_option(*sub, "--output-format", o->output_format,
                   "text (0/1, a line per frame), packed (MSB first, frames padded to bytes) or "
                   "bytes (one byte per bit)");
  sub->add_flag("--codeword", o->codeword,
                "write whole codewords (n bits) instead of the k information bits");
  sub->add_flag("--systematic-first", o->systematic_first,
                "the information bits are codeword positions 0..k-1 (an encoder with the "
                "systematic part first); refused when those positions are no information set. "
                "Default: the positions 'tannery inspect --json' lists as info_positions");
  sub->add_option("--posterior", o->posterior,
                  "write posterior LLRs as float32 little-endian, n per frame");
  sub->add_option("--report", o->report,
                  "per-frame report: frame, converged, iterations, syndrome weight, undecided "
                  "bits (posterior exactly 0, written as 0), bits changed versus the channel's "
                  "hard decisions");
  sub->add_option("--report-format", o->report_format,
                  "csv or jsonl (default: from the extension, else csv)")
      ->check(CLI::IsMember({"csv", "jsonl"}));
  sub->add_flag("--strict", o->strict,
                "refuse the whole input if any part is bad (outputs appear only on success)");
  sub->add_option("--threads", o->threads, "worker threads, 1 to 1024 (default: all cores)")
      ->check(CLI::Range(0.0, 1024.0));
  sub->add_option("--truth", o->truth,
                  "the information bits that were sent (text, k per frame, as 'tannery encode' "
                  "writes them): count frame and bit errors against them");
  sub->add_option("--max-failures", o->max_failures,
                  "exit with status 1 when more frames than this did not converge (default: "
                  "never), so scripts notice e.g. a capture read with the wrong format");
  o->decoder.add_to(*sub);
  sub->callback([o] { run(*o); });
}

}  // namespace tannery::cli
