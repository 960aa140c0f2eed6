#include "tannery/report/structures.hpp"

#include <fmt/format.h>
#include <fmt/ranges.h>
#include <map>
#include <nlohmann/json.hpp>
#include <thread>

#include "results_document.hpp"
#include "tannery/error.hpp"
#include "tannery/report/settings_json.hpp"
#include "tannery/version.hpp"

namespace tannery {

using nlohmann::json;

namespace {

json structure_json(const FoundStructure& f) {
  return {{"a", f.shape.cls.a},
          {"b", f.shape.cls.b},
          {"multiplicity", f.multiplicity},
          {"absorbing", f.shape.absorbing},
          {"elementary", f.shape.elementary},
          {"origin", name_of(f.origin)},
          {"amplitude", f.amplitude},
          {"variables", f.variables}};
}

// Classes with their set counts (multiplicities summed), in (a, b) order.
std::map<StructureClass, std::uint64_t> class_counts(const std::vector<FoundStructure>& list) {
  std::map<StructureClass, std::uint64_t> out;
  for (const auto& f : list) out[f.shape.cls] += f.multiplicity;
  return out;
}

}  // namespace

StructuresRecord new_structures_record(const std::string& source, const Code& code,
                                       const FloorSearchSettings& settings,
                                       FloorSearchResult result) {
  StructuresRecord r;
  r.tool_version = std::string(version());
  r.created = utc_now();
  r.code = code_record(source, code, Encoder(code).k());
  r.decoder = resolve_kernel(settings.decoder, code);
  r.settings = settings;
  r.result = std::move(result);
  return r;
}

RunRecord estimate_run_record(const std::string& source, const Code& code,
                              const FloorEstimateSettings& settings, double confidence,
                              const std::vector<FloorEstimatePoint>& points) {
  const std::size_t k = Encoder(code).k();
  RunRecord run;
  run.tool_version = std::string(version());
  run.created = utc_now();
  run.code = code_record(source, code, k);
  run.config.decoder = resolve_kernel(settings.decoder, code);
  run.config.sweep = settings.sweep;
  run.config.seed = settings.seed;
  run.config.chunk_frames = 64;  // frames per task of the estimate
  run.config.all_zero = true;    // the all-zero word is sent, as the weights assume
  run.config.confidence = confidence;
  run.rate_for_snr = run.effective_rate =
      static_cast<double>(k) / static_cast<double>(std::max<std::size_t>(code.n(), 1));
  run.threads_used =
      settings.threads ? settings.threads : std::max(1u, std::thread::hardware_concurrency());
  run.config.threads = run.threads_used;
  for (const auto& p : points) run.points.push_back(p.point);
  return run;
}

std::string structures_json(const StructuresRecord& r) {
  const FloorSearchResult& s = r.result;
  json j;
  j["format"] = "tannery-structures";
  j["version"] = kStructuresVersion;
  j["tool"] = {{"name", "tannery"}, {"version", r.tool_version}};
  j["created"] = r.created;
  j["code"] = {{"source", r.code.source},
               {"matrix_sha256", r.code.matrix_sha256},
               {"n", r.code.n},
               {"k", r.code.k}};
  j["decoder"] = r.decoder;
  j["decoder"]["description"] = describe(r.decoder);
  j["search"] = {{"background", r.settings.background},
                 {"dither", r.settings.dither},
                 {"amplitudes", r.settings.amplitudes},
                 {"impulse_order", s.impulse_order},
                 {"local_search_steps", r.settings.search_steps},
                 {"local_search_beam", r.settings.search_beam},
                 {"max_size", r.settings.max_size},
                 {"seed", r.settings.seed},
                 {"lifting", s.lifting},
                 {"impulses", s.impulses},
                 {"decodes", s.decodes},
                 {"unbroken", s.unbroken},
                 {"larger_failures", s.larger_failures},
                 {"seconds", s.seconds}};
  const std::size_t w = s.smallest_codeword_weight();
  j["smallest_codeword_weight"] = w ? json(w) : json(nullptr);
  json classes = json::array();
  for (const auto* list : {&s.codewords, &s.trapping_sets}) {
    for (const auto& [cls, count] : class_counts(*list))
      classes.push_back({{"a", cls.a}, {"b", cls.b}, {"sets", count}});
  }
  j["classes"] = classes;
  json structures = json::array();
  for (const auto* list : {&s.codewords, &s.trapping_sets}) {
    for (const auto& f : *list) structures.push_back(structure_json(f));
  }
  j["structures"] = structures;
  return j.dump(1) + "\n";
}

namespace {

StructuresRecord parse_structures(const json& j, const std::string& source, const Code& code) {
  if (!j.is_object() || j.value("format", "") != "tannery-structures")
    throw Error(
        fmt::format("{}: not a tannery structures file (no \"format\": "
                    "\"tannery-structures\")",
                    source));
  if (!j.contains("version") || !j["version"].is_number_integer() ||
      j["version"].get<std::int64_t>() != kStructuresVersion)
    throw Error(fmt::format("{}: structures version {} is not supported (this tool reads {})",
                            source, j.contains("version") ? j["version"].dump() : "(none)",
                            kStructuresVersion));
  StructuresRecord r;
  const json& c = j.value("code", json());
  if (!c.is_object() || !c.contains("matrix_sha256") || !c["matrix_sha256"].is_string())
    throw Error(fmt::format("{}: no code matrix_sha256", source));
  r.code.source = c.value("source", "");
  r.code.matrix_sha256 = c["matrix_sha256"].get<std::string>();
  const std::string here = matrix_sha256(code);
  if (r.code.matrix_sha256 != here)
    throw Error(fmt::format(
        "{}: its structures belong to another code (matrix SHA-256 {}... , this code {}...)",
        source, r.code.matrix_sha256.substr(0, 12), here.substr(0, 12)));
  r.code.n = code.n();
  if (j.contains("tool") && j["tool"].is_object()) r.tool_version = j["tool"].value("version", "");
  r.created = j.value("created", "");
  if (j.contains("decoder")) {
    try {
      read_fields(j["decoder"], r.decoder, "decoder");
    } catch (const Error& e) {
      throw Error(fmt::format("{}: {}", source, e.what()));
    }
  }
  const json& list = j.value("structures", json());
  if (!list.is_array()) throw Error(fmt::format("{}: 'structures' is not a list", source));
  StructureClassifier classifier(code);
  for (std::size_t i = 0; i < list.size(); ++i) {
    const json& sj = list[i];
    const json& vars = sj.is_object() ? sj.value("variables", json()) : json();
    if (!vars.is_array() || vars.empty() ||
        !std::all_of(vars.begin(), vars.end(), [&](const json& v) {
          return v.is_number_unsigned() && v.get<std::uint64_t>() < code.n();
        }))
      throw Error(
          fmt::format("{}: structure {}: 'variables' must be a list of positions below n "
                      "= {}",
                      source, i + 1, code.n()));
    FoundStructure f;
    f.variables = vars.get<std::vector<std::uint32_t>>();
    std::sort(f.variables.begin(), f.variables.end());
    if (std::adjacent_find(f.variables.begin(), f.variables.end()) != f.variables.end())
      throw Error(fmt::format("{}: structure {}: a position is repeated", source, i + 1));
    f.shape = classifier.shape(f.variables);
    if (sj.contains("origin") && sj["origin"].is_string()) {
      if (auto o = from_name<StructureOrigin>(sj["origin"].get<std::string>())) f.origin = *o;
    }
    (f.shape.cls.b == 0 ? r.result.codewords : r.result.trapping_sets).push_back(std::move(f));
  }
  r.result.n = code.n();
  return r;
}

}  // namespace

StructuresRecord parse_structures_json(std::string_view text, const std::string& source,
                                       const Code& code) {
  const json j = parse_json_text(text, source);
  try {
    return parse_structures(j, source, code);
  } catch (const json::exception& e) {  // a field of an unexpected type
    throw Error(fmt::format("{}: {}", source, e.what()));
  }
}

std::string structures_text(const FloorSearchResult& s, std::size_t examples) {
  std::string out;
  if (s.codewords.empty()) {
    out += "codewords: none found\n";
  } else {
    out += fmt::format(
        "codewords found: smallest weight {} (an upper bound on d_min; the search is not "
        "exhaustive)\n  weight  codewords\n",
        s.smallest_codeword_weight());
    std::map<std::uint32_t, std::uint64_t> weights;
    for (const auto& [cls, count] : class_counts(s.codewords)) weights[cls.a] += count;
    for (const auto& [w, count] : weights) out += fmt::format("  {:>6}  {:>9}\n", w, count);
  }
  if (s.trapping_sets.empty()) {
    out += "trapping sets: none found\n";
    return out;
  }
  out += fmt::format(
      "trapping sets found, (a, b) = a bits with b odd-degree checks:\n  {:>9}  {:>9}  {:>9}  "
      "{:>10}  {}\n",
      "(a, b)", "sets", "absorbing", "elementary", "example (bits)");
  std::map<StructureClass, std::vector<const FoundStructure*>> by_class;
  for (const auto& f : s.trapping_sets) by_class[f.shape.cls].push_back(&f);
  for (const auto& [cls, list] : by_class) {
    std::uint64_t sets = 0, absorbing = 0, elementary = 0;
    for (const auto* f : list) {
      sets += f->multiplicity;
      absorbing += f->shape.absorbing ? f->multiplicity : 0;
      elementary += f->shape.elementary ? f->multiplicity : 0;
    }
    for (std::size_t e = 0; e < std::max<std::size_t>(1, std::min(examples, list.size())); ++e) {
      const std::string example = fmt::format("{}", fmt::join(list[e]->variables, " "));
      if (e == 0) {
        out += fmt::format("  {:>9}  {:>9}  {:>9}  {:>10}  {}\n",
                           fmt::format("({}, {})", cls.a, cls.b), sets, absorbing, elementary,
                           example);
      } else {
        out += fmt::format("  {:>9}  {:>9}  {:>9}  {:>10}  {}\n", "", "", "", "", example);
      }
    }
  }
  return out;
}

}  // namespace tannery
