#include "tannery/report/scenario.hpp"

#include <fmt/format.h>
#include <toml++/toml.h>
#include <cmath>
#include <filesystem>
#include <limits>

#include "tannery/error.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/report/settings_json.hpp"

namespace tannery {

namespace {

// A TOML scalar as JSON, for read_value (tables and arrays become null, refused there).
nlohmann::json as_json(const toml::node& n) {
  if (const auto* b = n.as_boolean()) return b->get();
  if (const auto* i = n.as_integer()) return i->get();
  if (const auto* f = n.as_floating_point()) return f->get();
  if (const auto* str = n.as_string()) return str->get();
  return nullptr;
}

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
  // A string value, when present.
  void get(const toml::table& t, std::string_view key, std::string& out) const {
    const toml::node* n = t.get(key);
    if (!n) return;
    if (!n->is_string()) fail(n, fmt::format("'{}' must be a string", key));
    out = n->as_string()->get();
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
  // The fields of S present in table t (through the settings' field table, as results files
  // and Python keywords are read), each error at its value's line; keys neither a field nor
  // one of extra are refused.
  template <class S>
  void read_section(const toml::table& t, S& s, const std::string& section,
                    std::initializer_list<std::string_view> extra = {}) const {
    std::vector<std::string_view> keys(extra);
    for_each_field<S>([&](const auto& field) { keys.push_back(field.key); });
    for (const auto& [key, node] : t) {
      if (std::find(keys.begin(), keys.end(), key.str()) == keys.end())
        fail(&node, fmt::format("unknown key '{}' in [{}]", key.str(), section));
    }
    for_each_field<S>([&](const auto& field) {
      using T = typename std::decay_t<decltype(field)>::Value;
      const toml::node* n = t.get(field.key);
      if (!n) return;
      try {
        s.*field.member = read_value<T>(as_json(*n), field.key);
      } catch (const Error& e) {
        fail(n, e.what());
      }
    });
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
  r.get(root, "name", s.name);
  r.get(root, "description", s.description);
  if (!root.get("code"))
    throw Error(fmt::format("{}: the scenario names no code (code = \"...\")", path));
  r.get(root, "code", s.code);
  // A relative path is relative to the scenario file; a shipped name stays a name.
  auto resolve = [&](std::string& file) {
    if (file.empty()) return;
    const auto beside = std::filesystem::path(path).parent_path() / file;
    std::error_code ec;  // an over-long or odd name is simply no file beside the scenario
    if (std::filesystem::exists(beside, ec)) file = beside.string();
  };
  resolve(s.code);

  SimulationConfig& c = s.config;
  if (const toml::table* d = r.section("decoder")) {
    r.read_section(*d, c.decoder, "decoder");
    // A parameter of another algorithm is a slip, not something to ignore.
    for (const auto& [key, node] : *d) {
      const auto owner = parameter_owner(key.str());
      if (owner && c.decoder.algorithm != *owner) {
        r.fail(&node, fmt::format("{} applies to algorithm = \"{}\" only, not \"{}\"", key.str(),
                                  name_of(*owner), name_of(c.decoder.algorithm)));
      }
    }
    try {
      validate(c.decoder);
    } catch (const Error& e) {
      r.fail(d, e.what());
    }
  }
  const toml::table* ch = r.section("channel");
  if (!ch || !ch->get("sweep"))
    throw Error(fmt::format("{}: the scenario has no [channel] sweep", path));
  r.read_section(*ch, c.channel, "channel", {"sweep"});
  resolve(c.channel.puncture);  // files the link reads, beside the scenario like the code
  resolve(c.channel.modulation.file);
  try {
    validate(c.channel);
  } catch (const Error& e) {
    r.fail(ch, e.what());
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
  if (const toml::table* st = r.section("stop")) r.read_section(*st, c.stop, "stop");
  if (const toml::table* run = r.section("run")) r.read_section(*run, c, "run");
  return s;
}

}  // namespace tannery
