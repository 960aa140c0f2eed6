// tannery decode --code CODE INPUT: decode captured soft bits offline.
#include <fmt/format.h>
#include <chrono>
#include <cmath>
#include <fstream>
#include <iostream>
#include <thread>

#include "commands.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/error.hpp"
#include "tannery/io/capture.hpp"
#include "tannery/io/output_file.hpp"

namespace tannery::cli {

namespace {

struct DecodeOptions {
  CodeInput input;
  DecoderOptions decoder;
  std::string capture;
  std::string input_format = "f32";
  double scale = 1.0;
  std::string meaning = "llr";
  std::optional<double> noise_variance;
  std::string puncture;
  std::string output = "-";
  std::string output_format = "text";
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

// Decodes frames [0, frames) of a batch on all threads; frame order is kept by construction.
void decode_parallel(std::vector<std::unique_ptr<Decoder>>& decoders, std::size_t n,
                     std::size_t frames, std::uint64_t first_frame, std::vector<double>& llr,
                     std::vector<std::uint8_t>& hard, std::vector<double>& posterior,
                     std::vector<FrameOutcome>& outcomes) {
  const std::size_t threads = std::min(decoders.size(), frames);
  const std::size_t per = (frames + threads - 1) / threads;
  std::vector<std::thread> pool;
  std::vector<std::exception_ptr> errors(threads);
  for (std::size_t t = 0; t < threads; ++t) {
    const std::size_t a = t * per, b = std::min(frames, a + per);
    if (a >= b) break;
    pool.emplace_back([&, t, a, b] {
      try {
        decoders[t]->decode(std::span(llr).subspan(a * n, (b - a) * n),
                            std::span(hard).subspan(a * n, (b - a) * n),
                            posterior.empty() ? std::span<double>()
                                              : std::span(posterior).subspan(a * n, (b - a) * n),
                            std::span(outcomes).subspan(a, b - a), first_frame + a);
      } catch (...) {
        errors[t] = std::current_exception();
      }
    });
  }
  for (auto& th : pool) th.join();
  for (auto& e : errors) {
    if (e) std::rethrow_exception(e);
  }
}

void run(const DecodeOptions& o) {
  check_paths({{"--code", o.input.code},
               {"INPUT", o.capture},
               {"--puncture", o.puncture},
               {"--truth", o.truth}},
              {{"--output", o.output}, {"--posterior", o.posterior}, {"--report", o.report}});
  const Code code = o.input.load();
  const Encoder encoder = make_encoder(code, o.systematic_first);
  const DecoderSettings settings = o.decoder.settings();
  const std::size_t n = code.n();
  const SampleFormat format = *from_name<SampleFormat>(o.input_format);
  const BitFormat out_format = *from_name<BitFormat>(o.output_format);
  if (o.meaning == "samples" && !o.noise_variance) {
    throw Error(
        "--meaning samples needs --noise-variance (the noise variance sigma^2 per real sample)");
  }
  if (o.meaning != "samples" && o.noise_variance)
    throw Error("--noise-variance applies to --meaning samples only");
  if (o.noise_variance && !(*o.noise_variance > 0 && std::isfinite(*o.noise_variance)))
    throw Error("--noise-variance must be positive");
  if (!(std::isfinite(o.scale) && o.scale != 0))
    throw Error(fmt::format("--scale must be a finite number other than 0, got {}", o.scale));
  const PunctureMap map = o.puncture.empty()
                              ? PunctureMap{std::vector<PunctureMap::State>(n, PunctureMap::sent)}
                              : read_puncture_map(o.puncture, n);
  const std::size_t received = map.transmitted();
  // LLR = factor * value: +1 for LLRs, -1 for LLRs with positive meaning 1, 2/sigma^2 for samples.
  const double factor =
      o.meaning == "llr" ? 1.0 : (o.meaning == "llr-inverted" ? -1.0 : 2.0 / *o.noise_variance);

  std::ifstream file;
  std::istream* in = &open_input(o.capture, file);
  CaptureReader reader(*in, o.capture == "-" ? "<stdin>" : o.capture, format, o.scale, received);

  // --truth: the information bits that were sent, as encode writes them (text, k per frame).
  std::ifstream truth_file;
  std::optional<BitFrameReader> truth;
  if (!o.truth.empty()) {
    truth.emplace(open_input(o.truth, truth_file), o.truth, BitFormat::text, encoder.k());
  }
  std::vector<std::uint8_t> sent;
  std::uint64_t truth_frame_errors = 0, truth_bit_errors = 0;

  std::string report_format = o.report_format;
  if (report_format.empty())
    report_format = o.report.ends_with(".jsonl") || o.report.ends_with(".json") ? "jsonl" : "csv";
  OutputFile bits_out(o.output, o.strict), posterior_out(o.posterior, o.strict),
      report_out(o.report, o.strict);
  if (report_format == "csv") {
    report_out.write(
        fmt::format("frame,converged,iterations,syndrome_weight,undecided_bits,"
                    "changed_bits{}\n",
                    truth ? ",bit_errors" : ""));
  }

  const unsigned threads =
      o.threads ? o.threads : std::max(1u, std::thread::hardware_concurrency());
  std::vector<std::unique_ptr<Decoder>> decoders;
  for (unsigned t = 0; t < threads; ++t) decoders.push_back(make_decoder(code, settings));
  const std::size_t batch = 128 * threads;
  std::vector<double> values, llr, posterior;
  std::vector<std::uint8_t> hard, selected(o.codeword ? n : encoder.k());
  std::vector<FrameOutcome> outcomes;
  std::uint64_t frames = 0, failures = 0, iterations = 0;
  const auto start = std::chrono::steady_clock::now();
  std::string text;
  for (std::size_t got; (got = reader.read(batch, values)) > 0;) {
    llr.resize(got * n);
    for (std::size_t f = 0; f < got; ++f) {
      map.expand(std::span(values).subspan(f * received, received),
                 std::span(llr).subspan(f * n, n));
    }
    for (double& x : llr) x *= factor;
    hard.resize(got * n);
    outcomes.resize(got);
    posterior.resize(posterior_out.enabled() ? got * n : 0);
    decode_parallel(decoders, n, got, frames, llr, hard, posterior, outcomes);
    if (truth && truth->read(got, sent) != got) {
      throw Error(fmt::format(
          "{}: {}; decoding stopped at frame {}, where the check against it ends", o.truth,
          truth->error().value_or("ends before the capture"), frames + truth->frames_read()));
    }
    text.clear();
    std::string report;
    for (std::size_t f = 0; f < got; ++f) {
      const std::uint8_t* h = hard.data() + f * n;
      // Information bits against the truth; an undecided bit is an error whatever was sent.
      std::uint64_t bit_errors = 0;
      if (truth) {
        for (std::size_t i = 0; i < encoder.k(); ++i)
          bit_errors += h[encoder.info_positions()[i]] != sent[f * encoder.k() + i];
        truth_bit_errors += bit_errors;
        truth_frame_errors += bit_errors > 0;
      }
      // An undecided bit (kUndecided) is written as 0; the report counts it.
      if (o.codeword) {
        for (std::size_t i = 0; i < n; ++i) selected[i] = h[i] & 1u;
      } else {
        for (std::size_t i = 0; i < encoder.k(); ++i)
          selected[i] = h[encoder.info_positions()[i]] & 1u;
      }
      append_bits(text, selected, out_format);
      const FrameOutcome& r = outcomes[f];
      std::size_t changed = 0;
      for (std::size_t i = 0; i < n; ++i) changed += h[i] != decide(llr[f * n + i]);
      failures += r.converged ? 0 : 1;
      iterations += static_cast<std::uint64_t>(r.iterations);
      if (report_out.enabled()) {
        report += report_format == "csv"
                      ? fmt::format("{},{},{},{},{},{}{}\n", frames + f, r.converged ? 1 : 0,
                                    r.iterations, r.syndrome_weight, r.undecided, changed,
                                    truth ? fmt::format(",{}", bit_errors) : "")
                      : fmt::format(
                            "{{\"frame\": {}, \"converged\": {}, \"iterations\": {}, "
                            "\"syndrome_weight\": {}, \"undecided_bits\": {}, "
                            "\"changed_bits\": {}{}}}\n",
                            frames + f, r.converged, r.iterations, r.syndrome_weight, r.undecided,
                            changed, truth ? fmt::format(", \"bit_errors\": {}", bit_errors) : "");
      }
    }
    bits_out.write(text);
    report_out.write(report);
    if (posterior_out.enabled()) {
      std::string bytes;
      std::vector<float> as_float(posterior.begin(), posterior.end());
      append_f32_le(bytes, as_float);
      posterior_out.write(bytes);
    }
    frames += got;
  }
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  // Nothing good at all: an existing output keeps its content rather than becoming empty.
  if (reader.error() && (o.strict || frames == 0)) {
    bits_out.abandon();
    posterior_out.abandon();
    report_out.abandon();
    throw Error(*reader.error() + (o.strict ? " (--strict: nothing written)" : ""));
  }
  bits_out.commit();
  posterior_out.commit();
  report_out.commit();
  const double fps = seconds > 0 ? static_cast<double>(frames) / seconds : 0;
  fmt::print(stderr,
             "decoded {} frames ({}): {} did not converge; {:.0f} frames/s, {:.3f} coded Mbit/s, "
             "{:.3g} edge-updates/s ({})\n",
             frames, describe(resolve_kernel(settings, code)), failures, fps,
             fps * static_cast<double>(n) / 1e6,
             seconds > 0
                 ? static_cast<double>(iterations) * static_cast<double>(code.edges()) / seconds
                 : 0.0,
             count_of(threads, "thread"));
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
      "Binary inputs are little-endian frames of n values (n minus punctured/shortened "
      "positions).\n"
      "Exit status: 0 decoded, 1 more frames failed than --max-failures, 2 error.");
  o->input.add_to(*sub, false, "");
  sub->add_option("INPUT", o->capture, "capture file ('-' = stdin)")->required();
  sub->add_option("--input-format", o->input_format,
                  "f32, f64 (IEEE little-endian), i8, i16 (integers times --scale), text (numbers "
                  "separated by "
                  "whitespace or commas)")
      ->check(CLI::IsMember({"f32", "f64", "i8", "i16", "text"}))
      ->capture_default_str();
  sub->add_option("--scale", o->scale,
                  "multiply every input value by this (e.g. the LSB of fixed-point LLRs)")
      ->capture_default_str();
  sub->add_option("--meaning", o->meaning,
                  "llr (log P(0)/P(1), positive = 0), llr-inverted (positive = 1), samples (BPSK y "
                  "with 0 -> +1; "
                  "LLR = 2y/sigma^2)")
      ->check(CLI::IsMember({"llr", "llr-inverted", "samples"}))
      ->capture_default_str();
  sub->add_option("--noise-variance", o->noise_variance,
                  "sigma^2 per real sample, for --meaning samples");
  sub->add_option("--puncture", o->puncture,
                  "map of positions the capture lacks: lines 'punctured LIST' (LLR 0) or "
                  "'shortened LIST' (known 0)");
  sub->add_option("-o,--output", o->output, "decoded bits ('-' = stdout)")->capture_default_str();
  sub->add_option("--output-format", o->output_format,
                  "text (0/1, a line per frame), packed (MSB first, frames padded "
                  "to bytes) or bytes (one byte per bit)")
      ->check(CLI::IsMember({"text", "packed", "bytes"}))
      ->capture_default_str();
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
