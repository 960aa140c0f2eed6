#include "tannery/report/scenario.hpp"

#include <fmt/format.h>
#include <toml++/toml.h>
#include <cmath>
#include <filesystem>
#include <limits>

#include "tannery/error.hpp"
#include "tannery/io/matrix_io.hpp"

namespace tannery {

namespace {

class Reader {
 public:
  Reader(const toml::table& root, std::string path) : root_(root), path_(std::move(path)) {}

  [[noreturn]] void fail(const toml::node* node, const std::string& message) const {
    if (node && node->source().begin) {
      throw Error(fmt::format("{}:{}:{}: {}", path_, node->source().begin.line,
                              node->source().begin.column, message));
    }
    throw Error(fmt::format("{}: {}", path_, message));
  }
  // Refuses keys a section does not define (typos would otherwise be silently ignored).
  void only(const toml::table& t, std::initializer_list<std::string_view> keys,
            const std::string& section) const {
    for (const auto& [key, node] : t) {
      if (std::find(keys.begin(), keys.end(), key.str()) == keys.end()) {
        fail(&node, fmt::format("unknown key '{}'{}", key.str(),
                                section.empty() ? "" : " in [" + section + "]"));
      }
    }
  }
  const toml::table* section(std::string_view name) const {
    const toml::node* n = root_.get(name);
    if (!n) return nullptr;
    if (!n->is_table()) fail(n, fmt::format("'{}' must be a table [{}]", name, name));
    return n->as_table();
  }
  template <class T>
  void get(const toml::table* t, std::string_view key, T& out) const {
    if (!t) return;
    const toml::node* n = t->get(key);
    if (!n) return;
    if constexpr (std::is_same_v<T, bool>) {
      if (!n->is_boolean()) fail(n, fmt::format("'{}' must be true or false", key));
      out = n->as_boolean()->get();
    } else if constexpr (std::is_same_v<T, std::string>) {
      if (!n->is_string()) fail(n, fmt::format("'{}' must be a string", key));
      out = n->as_string()->get();
    } else if constexpr (std::is_floating_point_v<T>) {
      out = static_cast<T>(number(n, fmt::format("'{}'", key)));
    } else {
      if (!n->is_integer() || n->as_integer()->get() < 0 ||
          static_cast<std::uint64_t>(n->as_integer()->get()) > std::numeric_limits<T>::max()) {
        fail(n, fmt::format("'{}' must be an integer from 0 to {}", key,
                            std::numeric_limits<T>::max()));
      }
      out = static_cast<T>(n->as_integer()->get());
    }
  }
  // A finite number, integer or float (toml++'s value<double>() is empty for an integer that
  // a double cannot hold exactly, e.g. 222222222222222221).
  double number(const toml::node* n, const std::string& what) const {
    double v = 0;
    if (n->is_integer()) {
      v = static_cast<double>(n->as_integer()->get());
    } else if (n->is_floating_point()) {
      v = n->as_floating_point()->get();
    } else {
      fail(n, fmt::format("{} must be a number", what));
    }
    if (!std::isfinite(v)) fail(n, fmt::format("{} must be a finite number", what));
    return v;
  }
  const toml::node* node(const toml::table* t, std::string_view key) const {
    return t ? t->get(key) : nullptr;
  }

 private:
  const toml::table& root_;
  std::string path_;
};

}  // namespace

Scenario read_scenario(const std::string& path) {
  return parse_scenario(read_text_file(path, 1 << 20), path);
}

Scenario parse_scenario(std::string_view text, const std::string& path) {
  toml::table root;
  try {
    root = toml::parse(text, path);
  } catch (const toml::parse_error& e) {
    throw Error(fmt::format("{}:{}:{}: {}", path, e.source().begin.line, e.source().begin.column,
                            e.description()));
  }
  Reader r(root, path);
  r.only(root, {"name", "description", "code", "decoder", "channel", "stop", "run"}, "");
  Scenario s;
  s.name = std::filesystem::path(path).stem().string();
  r.get(&root, "name", s.name);
  r.get(&root, "description", s.description);
  if (!root.get("code"))
    throw Error(fmt::format("{}: the scenario names no code (code = \"...\")", path));
  r.get(&root, "code", s.code);
  // A relative path is relative to the scenario file; a shipped name stays a name.
  const auto beside = std::filesystem::path(path).parent_path() / s.code;
  std::error_code ec;  // an over-long or odd name is simply no file beside the scenario
  if (std::filesystem::exists(beside, ec)) s.code = beside.string();

  SimulationConfig& c = s.config;
  if (const toml::table* d = r.section("decoder")) {
    r.only(*d,
           {"algorithm", "schedule", "iterations", "early_stop", "alpha", "beta", "flip_threshold",
            "kernel", "quantize"},
           "decoder");
    std::string algorithm = "sum-product", schedule = "flooding";
    r.get(d, "algorithm", algorithm);
    r.get(d, "schedule", schedule);
    const auto a = parse_algorithm(algorithm);
    const auto sch = parse_schedule(schedule);
    if (!a) r.fail(r.node(d, "algorithm"), fmt::format("unknown algorithm '{}'", algorithm));
    if (!sch) r.fail(r.node(d, "schedule"), fmt::format("unknown schedule '{}'", schedule));
    c.decoder.algorithm = *a;
    c.decoder.schedule = *sch;
    r.get(d, "iterations", c.decoder.iterations);
    r.get(d, "early_stop", c.decoder.early_stop);
    r.get(d, "alpha", c.decoder.alpha);
    r.get(d, "beta", c.decoder.beta);
    r.get(d, "flip_threshold", c.decoder.flip_threshold);
    // A parameter of another algorithm is a slip, not something to ignore.
    for (auto [key, owner] : {std::pair{"alpha", Algorithm::normalized_min_sum},
                              std::pair{"beta", Algorithm::offset_min_sum},
                              std::pair{"flip_threshold", Algorithm::bit_flip}}) {
      if (d->get(key) && c.decoder.algorithm != owner) {
        r.fail(r.node(d, key), fmt::format("{} applies to algorithm = \"{}\" only, not \"{}\"", key,
                                           algorithm_name(owner), algorithm));
      }
    }
    std::string kernel = "auto", quantize;
    r.get(d, "kernel", kernel);
    const auto parsed = parse_kernel(kernel);
    if (!parsed) r.fail(r.node(d, "kernel"), "kernel must be \"auto\", \"reference\" or \"simd\"");
    c.decoder.kernel = parsed.value_or(Kernel::automatic);
    r.get(d, "quantize", quantize);
    if (!quantize.empty()) {
      c.decoder.quantization = parse_quantization(quantize);
      if (!c.decoder.quantization) r.fail(r.node(d, "quantize"), "quantize must be B.F or B.F:M:P");
    }
  }
  const toml::table* ch = r.section("channel");
  if (!ch || !ch->get("sweep"))
    throw Error(fmt::format("{}: the scenario has no [channel] sweep", path));
  r.only(*ch, {"kind", "sweep", "snr", "design_rate", "snr_offset_db", "assumed_crossover"},
         "channel");
  std::string kind = "awgn", snr = "ebn0";
  r.get(ch, "kind", kind);
  const auto k = parse_channel(kind);
  if (!k) r.fail(r.node(ch, "kind"), fmt::format("unknown channel '{}'", kind));
  c.channel.kind = *k;
  r.get(ch, "snr", snr);
  if (snr != "ebn0" && snr != "esn0") r.fail(r.node(ch, "snr"), "snr must be \"ebn0\" or \"esn0\"");
  c.channel.measure = snr == "esn0" ? SnrMeasure::esn0 : SnrMeasure::ebn0;
  r.get(ch, "design_rate", c.channel.design_rate);
  r.get(ch, "snr_offset_db", c.channel.snr_offset_db);
  if (ch->get("assumed_crossover")) {
    double p = 0;
    r.get(ch, "assumed_crossover", p);
    c.channel.assumed_crossover = p;
  }
  const toml::node* sweep = ch->get("sweep");
  try {
    if (sweep->is_string()) {
      c.sweep = parse_sweep(sweep->as_string()->get());
    } else if (sweep->is_array()) {
      for (const auto& v : *sweep->as_array()) c.sweep.push_back(r.number(&v, "sweep values"));
    } else {
      r.fail(sweep, "sweep must be a string \"START:STEP:STOP\" or a list of numbers");
    }
  } catch (const Error& e) {
    if (std::string(e.what()).starts_with(path)) throw;
    r.fail(sweep, e.what());
  }
  if (const toml::table* st = r.section("stop")) {
    r.only(*st, {"frame_errors", "max_frames", "max_seconds", "stop_below_fer"}, "stop");
    r.get(st, "frame_errors", c.stop.frame_errors);
    r.get(st, "max_frames", c.stop.max_frames);
    r.get(st, "max_seconds", c.stop.max_seconds);
    r.get(st, "stop_below_fer", c.stop.stop_below_fer);
  }
  if (const toml::table* run = r.section("run")) {
    r.only(*run, {"seed", "chunk_frames", "all_zero", "confidence"}, "run");
    r.get(run, "seed", c.seed);
    r.get(run, "chunk_frames", c.chunk_frames);
    r.get(run, "all_zero", c.all_zero);
    r.get(run, "confidence", c.confidence);
  }
  return s;
}

}  // namespace tannery
