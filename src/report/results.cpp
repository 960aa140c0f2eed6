#include "tannery/report/results.hpp"

#include "results_document.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <chrono>
#include <ctime>
#include <functional>
#include <nlohmann/json.hpp>
#include <sstream>
#include <type_traits>

#include "tannery/base/sha256.hpp"
#include "tannery/error.hpp"
#include "tannery/io/capture.hpp"
#include "tannery/io/code_lookup.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/report/settings_json.hpp"
#include "tannery/version.hpp"

namespace tannery {

using nlohmann::json;

PointStats point_stats(const PointResult& p, double confidence) {
  PointStats s;
  if (p.importance) {
    // Importance-sampled: the normal interval from the estimate's standard error.
    const double z = normal_quantile(0.5 + confidence / 2);
    const ImportanceEstimate& e = *p.importance;
    s.fer = {std::max(0.0, e.fer - z * e.fer_sd), std::min(1.0, e.fer + z * e.fer_sd)};
    s.ber = {std::max(0.0, e.ber - z * e.ber_sd), std::min(1.0, e.ber + z * e.ber_sd)};
    return s;
  }
  s.fer = clopper_pearson(p.frame_errors, p.frames, confidence);
  const std::uint64_t per_frame = p.frames ? p.bits / p.frames : 0;
  s.ber = clustered_ber_interval(p.frames, per_frame, p.bit_errors, p.bit_error_squares, confidence,
                                 s.fer.high);
  return s;
}

std::string parameter_key(const ChannelSpec& c) {
  switch (c.kind) {
    case ChannelKind::awgn:
    case ChannelKind::rayleigh:
      return c.measure == SnrMeasure::ebn0 ? "ebn0_db" : "esn0_db";
    case ChannelKind::bsc:
      return "p";
    case ChannelKind::bec:
      return "epsilon";
  }
  return "parameter";
}

std::string parameter_heading(const ChannelSpec& c) {
  switch (c.kind) {
    case ChannelKind::awgn:
    case ChannelKind::rayleigh:
      return c.measure == SnrMeasure::ebn0 ? "Eb/N0 dB" : "Es/N0 dB";
    case ChannelKind::bsc:
      return "p";
    case ChannelKind::bec:
      return "epsilon";
  }
  return "parameter";
}

std::string utc_now() {
  const std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

namespace {

// The failure classes, most frequent first (then by a, b): {a, b, frames, examples}.
json failure_classes_json(const PointResult& p) {
  std::vector<std::pair<StructureClass, const FailureClassCount*>> order;
  for (const auto& [cls, count] : p.failure_classes) order.emplace_back(cls, &count);
  std::stable_sort(order.begin(), order.end(), [](const auto& x, const auto& y) {
    return x.second->frames > y.second->frames;
  });
  json out = json::array();
  for (const auto& [cls, count] : order) {
    out.push_back({{"a", cls.a},
                   {"b", cls.b},
                   {"frames", count->frames},
                   {"oscillating", count->oscillating},
                   {"examples", count->examples}});
  }
  return out;
}

// An importance-sampled point's estimate; bad(what) throws for a damaged one.
template <class Bad>
ImportanceEstimate parse_importance(const json& j, std::size_t n, const Bad& bad) {
  auto number = [&](const json& o, const char* key, bool probability) {
    if (!o.is_object() || !o.contains(key) || !o[key].is_number())
      bad(fmt::format("importance_sampled: '{}' is missing or not a number", key));
    const double x = o[key].get<double>();
    if (!std::isfinite(x) || x < 0 || (probability && x > 1))
      bad(fmt::format("importance_sampled: '{}' = {} is out of range", key, x));
    return x;
  };
  auto count = [&](const json& o, const char* key) {
    if (!o.contains(key) || !o[key].is_number_unsigned())
      bad(fmt::format("importance_sampled: '{}' is missing or not a count", key));
    return o[key].get<std::uint64_t>();
  };
  ImportanceEstimate e;
  e.fer = number(j, "fer", true);
  e.fer_sd = number(j, "fer_sd", false);
  e.ber = number(j, "ber", true);
  e.ber_sd = number(j, "ber_sd", false);
  e.ess = number(j, "ess", false);
  if (!j.contains("reliable") || !j["reliable"].is_boolean())
    bad("importance_sampled: 'reliable' is missing or not true/false");
  e.reliable = j["reliable"].get<bool>();
  if (!j.contains("structures") || !j["structures"].is_array())
    bad("importance_sampled: 'structures' is not a list");
  for (const json& sj : j["structures"]) {
    StructureEstimate se;
    if (!sj.is_object()) bad("importance_sampled: a structure is not an object");
    const std::uint64_t a = count(sj, "a"), b = count(sj, "b");
    se.multiplicity = count(sj, "multiplicity");
    se.frames = count(sj, "frames");
    se.hits = count(sj, "hits");
    const json& shifts = sj.value("shifts", json());
    if (!shifts.is_array() || shifts.size() != a ||
        !std::all_of(shifts.begin(), shifts.end(), [](const json& x) {
          return x.is_number() && std::isfinite(x.get<double>()) && x.get<double>() >= 0;
        }))
      bad("importance_sampled: a structure's shifts are not a finite numbers >= 0, one per bit");
    se.shifts = shifts.get<std::vector<double>>();
    se.fer = number(sj, "fer", false);
    se.fer_sd = number(sj, "fer_sd", false);
    se.ber = number(sj, "ber", false);
    se.ber_sd = number(sj, "ber_sd", false);
    se.ess = number(sj, "ess", false);
    const json& vars = sj.value("variables", json());
    if (!vars.is_array() || vars.size() != a ||
        !std::all_of(vars.begin(), vars.end(), [&](const json& v) {
          return v.is_number_unsigned() && v.get<std::uint64_t>() < n;
        }))
      bad("importance_sampled: a structure's variables are not its a positions below n");
    if (b > a * 64 || se.hits > se.frames || se.multiplicity == 0)
      bad("importance_sampled: a structure's counts are inconsistent");
    se.cls = {static_cast<std::uint32_t>(a), static_cast<std::uint32_t>(b)};
    se.variables = vars.get<std::vector<std::uint32_t>>();
    e.structures.push_back(std::move(se));
  }
  return e;
}

json point_json(const PointResult& p, const RunRecord& run, std::size_t edges) {
  const PointStats s = point_stats(p, run.config.confidence);
  json j;
  j["parameter"] = p.parameter;
  j["frames"] = p.frames;
  j["frame_errors"] = p.frame_errors;
  j["bit_errors"] = p.bit_errors;
  j["bits"] = p.bits;
  j["fer"] = p.fer();
  j["ber"] = p.ber();
  j["fer_low"] = s.fer.low;
  j["fer_high"] = s.fer.high;
  j["ber_low"] = s.ber.low;
  j["ber_high"] = s.ber.high;
  j["mean_iterations"] = p.mean_iterations();
  j["coded_bit_errors"] = p.coded_bit_errors;
  j["coded_bits"] = p.coded_bits;
  j["undetected_errors"] = p.undetected_errors;
  j["bit_error_squares"] = p.bit_error_squares;
  j["iteration_histogram"] = p.iteration_histogram;
  j["chunks"] = p.chunks;
  j["complete"] = p.complete;
  j["stop_reason"] = p.stop_reason;
  j["seconds"] = p.seconds;
  const double secs = p.seconds > 0 ? p.seconds : 1e-9;
  j["frames_per_second"] = static_cast<double>(p.frames) / secs;
  j["edge_updates_per_second"] =
      static_cast<double>(p.iterations) * static_cast<double>(edges) / secs;
  j["failed_frames"] = p.failed_frames;
  j["failure_classes"] = failure_classes_json(p);
  j["larger_failures"] = p.larger_failures;
  if (p.importance) {
    const ImportanceEstimate& e = *p.importance;
    json structures = json::array();
    for (const auto& se : e.structures) {
      structures.push_back({{"a", se.cls.a},
                            {"b", se.cls.b},
                            {"multiplicity", se.multiplicity},
                            {"shifts", se.shifts},
                            {"frames", se.frames},
                            {"hits", se.hits},
                            {"fer", se.fer},
                            {"fer_sd", se.fer_sd},
                            {"ber", se.ber},
                            {"ber_sd", se.ber_sd},
                            {"ess", se.ess},
                            {"variables", se.variables}});
    }
    j["importance_sampled"] = {{"fer", e.fer},
                               {"fer_sd", e.fer_sd},
                               {"ber", e.ber},
                               {"ber_sd", e.ber_sd},
                               {"ess", e.ess},
                               {"reliable", e.reliable},
                               {"structures", structures}};
  }
  return j;
}

template <class T>
T get(const json& j, const char* key, const std::string& source, const std::string& where) {
  if (!j.contains(key)) throw Error(fmt::format("{}: {} has no '{}'", source, where, key));
  // Integers must be stored as integers (a float like 1e300 would overflow the conversion), and
  // unsigned fields non-negative.
  const json& value = j.at(key);
  auto integer_ok = [](const json& v, bool is_unsigned) {
    return is_unsigned ? v.is_number_unsigned() : v.is_number_integer();
  };
  if constexpr (std::is_integral_v<T> && !std::is_same_v<T, bool>) {
    if (!integer_ok(value, std::is_unsigned_v<T>)) {
      throw Error(fmt::format("{}: {} has a '{}' that is not a valid integer", source, where, key));
    }
  } else if constexpr (std::is_same_v<T, std::vector<std::uint64_t>>) {
    if (!value.is_array() || !std::all_of(value.begin(), value.end(),
                                          [&](const json& v) { return integer_ok(v, true); })) {
      throw Error(
          fmt::format("{}: {} has a '{}' that is not a list of counts", source, where, key));
    }
  }
  try {
    return value.get<T>();
  } catch (const json::exception&) {
    throw Error(fmt::format("{}: {} has a '{}' of the wrong type", source, where, key));
  }
}

}  // namespace

std::string matrix_sha256(const Code& code) {
  std::ostringstream canonical;
  write_code(code, MatrixFormat::tannery, canonical);
  return sha256_hex(canonical.str());
}

CodeRecord code_record(const std::string& source, const Code& code, std::size_t k) {
  CodeRecord r;
  r.source = source;
  r.path = resolve_code_path(source);
  r.sha256 = r.path == "-" ? std::string() : sha256_hex(read_text_file(r.path));
  r.matrix_sha256 = matrix_sha256(code);
  r.n = code.n();
  r.m = code.m();
  r.k = k;
  r.edges = code.edges();
  return r;
}

RunRecord new_run_record(const std::string& source, const Code& code, const Simulator& sim) {
  RunRecord r;
  r.tool_version = std::string(version());
  r.created = utc_now();
  r.code = code_record(source, code, sim.encoder().k());
  r.config = sim.config();
  r.rate_for_snr = sim.rate();
  r.effective_rate = sim.effective_rate();
  r.sent_bits = sim.link().sent();
  r.bits_per_symbol = sim.link().constellation().bits();
  r.threads_used = sim.config().threads;
  return r;
}

Throughput throughput(const RunRecord& run, double seconds) {
  if (!(seconds > 0)) return {};
  double frames = 0, iterations = 0;
  for (const PointResult& p : run.points) {
    frames += static_cast<double>(p.frames);
    iterations += static_cast<double>(p.iterations);
  }
  Throughput t;
  t.frames_per_second = frames / seconds;
  t.coded_bits_per_second = t.frames_per_second * static_cast<double>(run.code.n);
  t.info_bits_per_second = t.frames_per_second * static_cast<double>(run.code.k);
  t.edge_updates_per_second = iterations * static_cast<double>(run.code.edges) / seconds;
  t.edge_updates_per_thread = t.edge_updates_per_second / std::max(1u, run.threads_used);
  return t;
}

FailureCapture failure_capture(const std::vector<KeptFrame>& kept,
                               const std::vector<double>& sweep) {
  FailureCapture c;
  c.index = "# point parameter frame (one line per float32 frame in the capture)\n";
  for (const KeptFrame& f : kept) {
    append_f32_le(c.llr_bytes, std::vector<float>(f.llr.begin(), f.llr.end()));
    c.index += fmt::format("{} {} {}\n", f.point, sweep.at(f.point), f.frame);
  }
  return c;
}

std::vector<std::string> config_differences(const SimulationConfig& recorded,
                                            const SimulationConfig& asked) {
  std::vector<std::string> d;
  auto compare = [&](const json& was, const json& is) {
    for (const auto& [key, value] : is.items()) {
      if (was.value(key, json()) != value) {
        d.push_back(
            fmt::format("{} {} (recorded: {})", key,
                        value.is_string() ? value.get<std::string>() : value.dump(),
                        was[key].is_string() ? was[key].get<std::string>() : was[key].dump()));
      }
    }
  };
  compare(recorded.decoder, asked.decoder);
  compare(recorded.channel, asked.channel);
  compare(recorded.stop, asked.stop);
  compare(fields_json(recorded), fields_json(asked));
  if (recorded.sweep != asked.sweep) d.push_back("the sweep");
  return d;
}

std::string results_json(const RunRecord& run) {
  return results_document(run).dump(1) + "\n";
}

json results_document(const RunRecord& run, std::string_view format) {
  const SimulationConfig& c = run.config;
  json j;
  j["format"] = format;
  j["version"] = kResultsVersion;
  j["tool"] = {{"name", "tannery"}, {"version", run.tool_version}};
  j["created"] = run.created;
  j["code"] = {
      {"source", run.code.source},
      {"path", run.code.path},
      {"sha256", run.code.sha256},
      {"matrix_sha256", run.code.matrix_sha256},
      {"n", run.code.n},
      {"m", run.code.m},
      {"k", run.code.k},
      {"edges", run.code.edges},
      {"rate",
       run.code.n ? static_cast<double>(run.code.k) / static_cast<double>(run.code.n) : 0.0}};
  j["decoder"] = c.decoder;
  j["decoder"]["description"] = describe(c.decoder);
  j["channel"] = c.channel;
  j["channel"]["parameter"] = parameter_key(c.channel);
  j["channel"]["rate_for_snr"] = run.rate_for_snr;
  j["channel"]["effective_rate"] = run.effective_rate;
  j["channel"]["sent_bits"] = run.sent_bits;
  j["channel"]["bits_per_symbol"] = run.bits_per_symbol;
  j["run"] = fields_json(c);
  j["run"]["sweep"] = c.sweep;
  j["run"]["threads"] = run.threads_used;
  j["run"]["ranks"] = run.ranks_used;
  j["run"]["interrupted"] = run.interrupted;
  j["run"]["stop"] = c.stop;
  j["points"] = json::array();
  for (const auto& p : run.points) j["points"].push_back(point_json(p, run, run.code.edges));
  return j;
}

namespace {
RunRecord parse_results(const json& j, const std::string& source, std::string_view format);
}  // namespace

std::string failure_anatomy_problem(const PointResult& p, std::size_t n) {
  std::uint64_t classified = 0;
  for (const auto& [cls, count] : p.failure_classes) {
    if (cls.a == 0 || cls.a > kAnatomyMaxBits || cls.b > cls.a * std::uint64_t{1024} ||
        count.frames == 0 || count.oscillating > count.frames ||
        count.examples.size() > std::min<std::uint64_t>(count.frames, kAnatomyExamples))
      return fmt::format("failure class ({}, {}) is not valid", cls.a, cls.b);
    for (const auto& example : count.examples) {
      if (example.size() != cls.a ||
          std::adjacent_find(example.begin(), example.end(), std::greater_equal<>()) !=
              example.end() ||
          (n && example.back() >= n))
        return fmt::format(
            "failure class ({}, {}) lists a set that is not {} increasing "
            "positions of the code",
            cls.a, cls.b, cls.a);
    }
    classified += count.frames;
  }
  if (classified > p.frame_errors || p.larger_failures > p.frame_errors - classified)
    return "more classified failures than frame errors";
  return "";
}

json parse_json_text(std::string_view text, const std::string& source) {
  try {
    return json::parse(text);
  } catch (const json::parse_error& e) {
    throw Error(fmt::format("{}: not valid JSON (byte {})", source, e.byte));
  } catch (const json::exception& e) {  // e.g. a number too large for any JSON number type
    throw Error(fmt::format("{}: not valid JSON ({})", source, e.what()));
  }
}

RunRecord parse_results_json(std::string_view text, const std::string& source) {
  return parse_results_document(parse_json_text(text, source), source);
}

RunRecord parse_results_document(const json& j, const std::string& source,
                                 std::string_view format) {
  try {
    return parse_results(j, source, format);
  } catch (const json::exception& e) {  // a field of an unexpected type in a nested object
    throw Error(fmt::format("{}: malformed {} file ({})", source,
                            format == "tannery-results" ? "results" : format, e.what()));
  }
}

namespace {

RunRecord parse_results(const json& j, const std::string& source, std::string_view format) {
  if (!j.is_object() || j.value("format", "") != format) {
    throw Error(fmt::format("{}: not a {} file (no \"format\": \"{}\")", source,
                            format == "tannery-results" ? "tannery results" : format, format));
  }
  if (!j.contains("version") || !j["version"].is_number_integer() ||
      j["version"].get<std::int64_t>() != kResultsVersion) {
    throw Error(fmt::format("{}: results version {} is not supported (this tool reads {})", source,
                            j.contains("version") ? j["version"].dump() : std::string("(none)"),
                            kResultsVersion));
  }
  RunRecord r;
  for (const char* section : {"tool", "code", "decoder", "channel", "run", "points"}) {
    if (!j.contains(section)) throw Error(fmt::format("{}: missing section '{}'", source, section));
  }
  r.tool_version = get<std::string>(j["tool"], "version", source, "tool");
  r.created = j.value("created", "");
  const json& code = j["code"];
  r.code.source = get<std::string>(code, "source", source, "code");
  r.code.path = get<std::string>(code, "path", source, "code");
  r.code.sha256 = get<std::string>(code, "sha256", source, "code");
  r.code.matrix_sha256 = get<std::string>(code, "matrix_sha256", source, "code");
  r.code.n = get<std::size_t>(code, "n", source, "code");
  r.code.m = get<std::size_t>(code, "m", source, "code");
  r.code.k = get<std::size_t>(code, "k", source, "code");
  r.code.edges = get<std::size_t>(code, "edges", source, "code");
  SimulationConfig& c = r.config;
  const json& dec = j["decoder"];
  const json& ch = j["channel"];
  const json& run = j["run"];
  const json& stop = get<json>(run, "stop", source, "run");
  try {
    // Files written before the batched kernels existed have no "kernel": the reference
    // decoders; before "snr" was recorded, the parameter's name told the measure.
    if (dec.is_object() && !dec.contains("kernel")) c.decoder.kernel = Kernel::reference;
    if (ch.is_object() && !ch.contains("snr") && ch.value("parameter", "") == "esn0_db")
      c.channel.measure = SnrMeasure::esn0;
    read_fields(dec, c.decoder, "decoder");
    read_fields(ch, c.channel, "channel");
    read_fields(run, c, "run");
    read_fields(stop, c.stop, "stop rules");
  } catch (const Error& e) {
    throw Error(fmt::format("{}: {}", source, e.what()));
  }
  r.rate_for_snr = get<double>(ch, "rate_for_snr", source, "channel");
  // Before links: BPSK with every code bit sent.
  r.effective_rate =
      ch.contains("effective_rate")
          ? get<double>(ch, "effective_rate", source, "channel")
          : static_cast<double>(r.code.k) / static_cast<double>(std::max<std::size_t>(r.code.n, 1));
  r.bits_per_symbol =
      ch.contains("bits_per_symbol") ? get<unsigned>(ch, "bits_per_symbol", source, "channel") : 1;
  if (ch.contains("sent_bits")) r.sent_bits = get<std::size_t>(ch, "sent_bits", source, "channel");
  if (c.chunk_frames == 0 || c.chunk_frames > kMaxChunkFrames) {
    throw Error(fmt::format("{}: run: chunk_frames {} is outside 1..{}", source, c.chunk_frames,
                            kMaxChunkFrames));
  }
  c.sweep = get<std::vector<double>>(run, "sweep", source, "run");
  // Threads over all ranks of an MPI job (1024 per rank at most).
  r.ranks_used = run.contains("ranks") ? get<unsigned>(run, "ranks", source, "run") : 1;
  if (r.ranks_used == 0 || r.ranks_used > (1u << 20))
    throw Error(fmt::format("{}: run: ranks {} is outside 1..{}", source, r.ranks_used, 1u << 20));
  r.threads_used = get<unsigned>(run, "threads", source, "run");
  if (r.threads_used == 0 || r.threads_used / r.ranks_used > 1024)
    throw Error(fmt::format("{}: run: threads {} is outside 1..{}", source, r.threads_used,
                            1024 * r.ranks_used));
  r.interrupted = get<bool>(run, "interrupted", source, "run");
  if (!j["points"].is_array()) throw Error(fmt::format("{}: 'points' is not an array", source));
  for (std::size_t i = 0; i < j["points"].size(); ++i) {
    const json& pj = j["points"][i];
    const std::string where = fmt::format("point {}", i);
    PointResult p;
    p.parameter = get<double>(pj, "parameter", source, where);
    p.frames = get<std::uint64_t>(pj, "frames", source, where);
    p.frame_errors = get<std::uint64_t>(pj, "frame_errors", source, where);
    p.bit_errors = get<std::uint64_t>(pj, "bit_errors", source, where);
    p.bits = get<std::uint64_t>(pj, "bits", source, where);
    p.coded_bit_errors = get<std::uint64_t>(pj, "coded_bit_errors", source, where);
    p.coded_bits = get<std::uint64_t>(pj, "coded_bits", source, where);
    p.undetected_errors = get<std::uint64_t>(pj, "undetected_errors", source, where);
    p.bit_error_squares = get<double>(pj, "bit_error_squares", source, where);
    p.iteration_histogram =
        get<std::vector<std::uint64_t>>(pj, "iteration_histogram", source, where);
    p.failed_frames = get<std::vector<std::uint64_t>>(pj, "failed_frames", source, where);
    p.chunks = get<std::uint64_t>(pj, "chunks", source, where);
    p.complete = get<bool>(pj, "complete", source, where);
    p.stop_reason = get<std::string>(pj, "stop_reason", source, where);
    p.seconds = get<double>(pj, "seconds", source, where);
    // A file edited (or damaged) into inconsistency is refused, never compared or resumed.
    auto bad = [&](const std::string& what) {
      throw Error(fmt::format("{}: {}: {}", source, where, what));
    };
    if (!std::isfinite(p.parameter)) bad("the parameter is not a finite number");
    if (!(p.seconds >= 0 && std::isfinite(p.seconds))) bad("seconds must be >= 0");
    if (p.frame_errors > p.frames || p.bit_errors > p.bits || p.coded_bit_errors > p.coded_bits ||
        p.undetected_errors > p.frame_errors)
      bad("more errors than trials");
    if (!(p.bit_error_squares >= 0 && std::isfinite(p.bit_error_squares)))
      bad("bit_error_squares must be a finite number >= 0");
    std::uint64_t histogram_frames = 0;
    for (std::size_t it = 0; it < p.iteration_histogram.size(); ++it) {
      const std::uint64_t count = p.iteration_histogram[it];
      if (count > p.frames - std::min(p.frames, histogram_frames))
        bad("the iteration histogram counts more frames than the point has");
      histogram_frames += count;
      p.iterations += it * count;
    }
    if (!p.iteration_histogram.empty() && histogram_frames != p.frames)
      bad(fmt::format("the iteration histogram counts {} frames, the point has {}",
                      histogram_frames, p.frames));
    for (std::size_t f = 0; f < p.failed_frames.size(); ++f) {
      if (p.failed_frames[f] >= p.frames)
        bad(fmt::format("failed frame {} is beyond the point's {} frames", p.failed_frames[f],
                        p.frames));
      if (f > 0 && p.failed_frames[f] <= p.failed_frames[f - 1])
        bad("failed frames are not listed in increasing order without repeats");
    }
    if (p.failed_frames.size() > p.frame_errors)
      bad("more failed frames listed than frame errors counted");
    // Failure anatomy (absent from files written before it was recorded).
    if (pj.contains("failure_classes")) {
      const json& classes = pj["failure_classes"];
      if (!classes.is_array()) bad("failure_classes is not a list");
      for (const json& cj : classes) {
        const std::string what = "a failure class";
        const auto a = get<std::uint32_t>(cj, "a", source, where + ", " + what);
        const auto b = get<std::uint32_t>(cj, "b", source, where + ", " + what);
        FailureClassCount count;
        count.frames = get<std::uint64_t>(cj, "frames", source, where + ", " + what);
        count.oscillating = get<std::uint64_t>(cj, "oscillating", source, where + ", " + what);
        const json& sets = cj.value("examples", json());
        if (!sets.is_array() || !std::all_of(sets.begin(), sets.end(), [](const json& set) {
              return set.is_array() && std::all_of(set.begin(), set.end(), [](const json& v) {
                       return v.is_number_unsigned() && v.get<std::uint64_t>() < (1ull << 32);
                     });
            }))
          bad("a failure class's examples are not lists of positions");
        count.examples = get<std::vector<std::vector<std::uint32_t>>>(cj, "examples", source,
                                                                      where + ", " + what);
        if (!p.failure_classes.emplace(StructureClass{a, b}, std::move(count)).second)
          bad(fmt::format("failure class ({}, {}) is listed twice", a, b));
      }
      p.larger_failures = get<std::uint64_t>(pj, "larger_failures", source, where);
      if (const std::string problem = failure_anatomy_problem(p, r.code.n); !problem.empty())
        bad(problem);
    }
    if (pj.contains("importance_sampled"))
      p.importance = parse_importance(pj["importance_sampled"], r.code.n, bad);
    r.points.push_back(std::move(p));
  }
  return r;
}

}  // namespace

std::string failure_anatomy_text(const RunRecord& run, std::size_t top) {
  std::string out;
  for (const PointResult& p : run.points) {
    if (p.frame_errors == 0) continue;
    std::vector<std::pair<StructureClass, std::uint64_t>> order;
    for (const auto& [cls, count] : p.failure_classes) order.emplace_back(cls, count.frames);
    std::stable_sort(order.begin(), order.end(),
                     [](const auto& x, const auto& y) { return x.second > y.second; });
    std::string line;
    for (std::size_t i = 0; i < order.size() && i < top; ++i) {
      const auto& [cls, frames] = order[i];
      const std::uint64_t oscillating = p.failure_classes.at(cls).oscillating;
      line += fmt::format("{}({}, {}){} x{}{}", line.empty() ? "" : ", ", cls.a, cls.b,
                          cls.b == 0 ? " codeword" : "", frames,
                          oscillating ? fmt::format(" ({} oscillating)", oscillating) : "");
    }
    if (order.size() > top) line += fmt::format(", {} more classes", order.size() - top);
    if (p.larger_failures > 0)
      line += fmt::format("{}{} with more than {} wrong bits", line.empty() ? "" : ", ",
                          p.larger_failures, kAnatomyMaxBits);
    const std::uint64_t known = p.larger_failures + [&] {
      std::uint64_t n = 0;
      for (const auto& [cls, count] : p.failure_classes) n += count.frames;
      return n;
    }();
    if (known < p.frame_errors)
      line += fmt::format("{}{} not recorded", line.empty() ? "" : ", ", p.frame_errors - known);
    out += fmt::format("  {:<8.4g} {}\n", p.parameter, line);
  }
  if (out.empty()) return out;
  return "failures by structure (a wrong bits, b odd-degree checks among their neighbours):\n" +
         out;
}

std::string results_csv(const RunRecord& run) {
  std::string out =
      "parameter,frames,frame_errors,bit_errors,bits,fer,ber,fer_low,fer_high,ber_low,ber_high,"
      "mean_iterations,"
      "undetected_errors,seconds\n";
  for (const auto& p : run.points) {
    const PointStats s = point_stats(p, run.config.confidence);
    out += fmt::format(
        "{},{},{},{},{},{:.6e},{:.6e},{:.6e},{:.6e},{:.6e},{:.6e},{:.4f},{},{:.3f}\n", p.parameter,
        p.frames, p.frame_errors, p.bit_errors, p.bits, p.fer(), p.ber(), s.fer.low, s.fer.high,
        s.ber.low, s.ber.high, p.mean_iterations(), p.undetected_errors, p.seconds);
  }
  return out;
}

std::string results_table(const RunRecord& run) {
  const int level = static_cast<int>(std::lround(run.config.confidence * 100));
  std::string out =
      fmt::format("{:>9} {:>10} {:>8} {:>10} {:>23} {:>10} {:>23} {:>7} {:>9}  {}\n",
                  parameter_heading(run.config.channel), "frames", "errors", "FER",
                  fmt::format("FER {}% interval", level), "BER",
                  fmt::format("BER {}% interval", level), "iter", "frames/s", "stopped by");
  for (const auto& p : run.points) {
    const PointStats s = point_stats(p, run.config.confidence);
    out += fmt::format(
        "{:>9.4g} {:>10} {:>8} {:>10.3e} [{:9.3e}, {:9.3e}] {:>10.3e} [{:9.3e}, {:9.3e}] {:>7.2f} "
        "{:>9.0f}  {}\n",
        p.parameter, p.frames, p.frame_errors, p.fer(), s.fer.low, s.fer.high, p.ber(), s.ber.low,
        s.ber.high, p.mean_iterations(),
        p.seconds > 0 ? static_cast<double>(p.frames) / p.seconds : 0.0, p.stop_reason);
  }
  return out;
}

}  // namespace tannery
