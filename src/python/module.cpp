// The Python module `tannery`: codes, encoding, decoding of numpy arrays, simulation, thresholds
// and capacities, as thin bindings of the library. Settings are keyword arguments named as the
// library's settings tables name them (the keys of scenario files and results JSON), read
// through the same checks; errors raise tannery.Error (a ValueError) with the library's message.
#include <fmt/format.h>
#include <pybind11/complex.h>
#include <pybind11/functional.h>
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include <dlfcn.h>

#include <algorithm>
#include <atomic>
#include <cstdint>
#include <filesystem>
#include <memory>
#include <mutex>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "tannery/code/analysis.hpp"
#include "tannery/code/code.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/decode/parallel.hpp"
#include "tannery/error.hpp"
#include "tannery/floor/estimate.hpp"
#include "tannery/floor/search.hpp"
#include "tannery/io/code_lookup.hpp"
#include "tannery/report/results.hpp"
#include "tannery/report/settings_json.hpp"
#include "tannery/report/structures.hpp"
#include "tannery/theory/capacity.hpp"
#include "tannery/theory/density_evolution.hpp"
#include "tannery/theory/protograph.hpp"
#include "tannery/version.hpp"

namespace py = pybind11;
using nlohmann::json;

namespace tannery::python {

namespace {

// The last decoder a code was decoded with, kept for the next call with the same settings and
// threads (building one starts its threads and allocates its scratch: a loop of small calls
// would pay that every time). A call made while it is busy in another Python thread gets its own.
struct DecoderCache {
  std::mutex mutex;
  std::string key;
  std::unique_ptr<ParallelDecoder> decoder;
};

// A code and where it came from (empty for one built in Python); the encoder is made on first use.
struct PyCode {
  std::shared_ptr<const Code> code;
  std::string source;
  std::shared_ptr<const Encoder> encoder;
  std::shared_ptr<DecoderCache> decoders = std::make_shared<DecoderCache>();

  const Encoder& encoding() {
    if (!encoder) encoder = std::make_shared<const Encoder>(*code);
    return *encoder;
  }
};

// A Python value as JSON, for the settings readers (bool before int: True is an int in Python).
json to_json(const py::handle& v) {
  if (v.is_none()) return nullptr;
  if (py::isinstance<py::bool_>(v)) return v.cast<bool>();
  if (py::isinstance<py::int_>(v)) {
    const auto i = v.cast<py::int_>();
    if (py::int_(0) <= i) return v.cast<std::uint64_t>();
    return v.cast<std::int64_t>();
  }
  if (py::isinstance<py::float_>(v)) return v.cast<double>();
  if (py::isinstance<py::str>(v)) return v.cast<std::string>();
  if (py::hasattr(v, "dtype") && py::hasattr(v, "item") && py::len(v.attr("shape")) == 0)
    return to_json(v.attr("item")());  // a numpy scalar
  if (py::isinstance<py::sequence>(v) || py::hasattr(v, "tolist")) {
    const py::object list =
        py::hasattr(v, "tolist") ? v.attr("tolist")() : py::reinterpret_borrow<py::object>(v);
    json a = json::array();
    for (const py::handle item : list) a.push_back(to_json(item));
    return a;
  }
  throw Error("cannot read a value of Python type " +
              py::str(py::type::handle_of(v).attr("__name__")).cast<std::string>());
}

template <class S>
bool has_field(std::string_view key) {
  bool found = false;
  for_each_field<S>([&](const auto& field) { found |= field.key == key; });
  return found;
}

template <class S>
std::string field_keys() {
  std::string keys;
  for_each_field<S>([&](const auto& field) {
    if (!keys.empty()) keys += ", ";
    keys += field.key;
  });
  return keys;
}

// Decoder settings from keyword arguments; Error for a key that is no decoder setting and for a
// parameter of another algorithm.
DecoderSettings decoder_settings(const json& given) {
  DecoderSettings s;
  read_fields(given, s, "decoder");
  for (const auto& [key, value] : given.items()) {
    const auto owner = parameter_owner(key);
    if (owner && s.algorithm != *owner) {
      throw Error(key + " applies to algorithm " + std::string(name_of(*owner)) + " only, not " +
                  std::string(name_of(s.algorithm)));
    }
  }
  validate(s);
  return s;
}

[[noreturn]] void unknown_setting(const std::string& function, const std::string& key,
                                  const std::string& known) {
  throw Error(function + ": unknown setting '" + key + "' (settings: " + known + ")");
}

// Decoder settings from a function's keyword arguments (others: its other keywords, for the
// message naming the settings it takes).
DecoderSettings decoder_keywords(const std::string& function, const py::kwargs& settings,
                                 const std::string& others) {
  json given = json::object();
  for (const auto& [key, value] : settings) {
    const auto name = key.cast<std::string>();
    if (!has_field<DecoderSettings>(name))
      unknown_setting(function, name, others + field_keys<DecoderSettings>());
    given[name] = to_json(value);
  }
  return decoder_settings(given);
}

py::object json_to_python(const json& j) {
  return py::module_::import("json").attr("loads")(j.dump());
}

// ---- Code ----------------------------------------------------------------------------------

PyCode py_load(const std::string& path_or_name, std::optional<std::string> format,
               std::optional<std::size_t> lifting) {
  ReadOptions options;
  if (format) options.format = parse_name<MatrixFormat>(*format);
  options.lifting = lifting;
  return PyCode{std::make_shared<const Code>(load_code(path_or_name, options)), path_or_name, {}};
}

// Any scipy.sparse matrix (or a 2-D array) of 0s and 1s: H, m x n.
PyCode from_scipy(const py::object& matrix) {
  py::object csr;
  if (py::hasattr(matrix, "tocsr")) {
    csr = matrix.attr("tocsr")().attr("copy")();
  } else {
    csr = py::module_::import("scipy.sparse").attr("csr_matrix")(matrix);
  }
  csr.attr("sum_duplicates")();
  const auto shape = csr.attr("shape").cast<std::pair<std::size_t, std::size_t>>();
  const auto indptr = py::array_t<std::int64_t, py::array::forcecast>(csr.attr("indptr"));
  const auto indices = py::array_t<std::int64_t, py::array::forcecast>(csr.attr("indices"));
  const auto data = py::array_t<double, py::array::forcecast>(csr.attr("data"));
  std::vector<std::vector<std::uint32_t>> checks(shape.first);
  const auto p = indptr.unchecked<1>();
  const auto col = indices.unchecked<1>();
  const auto value = data.unchecked<1>();
  for (std::size_t r = 0; r < shape.first; ++r) {
    for (auto i = p(static_cast<py::ssize_t>(r)); i < p(static_cast<py::ssize_t>(r) + 1); ++i) {
      const double x = value(i);
      if (x == 0) continue;
      if (x != 1) {
        throw Error("from_scipy: H must hold 0s and 1s; row " + std::to_string(r) + ", column " +
                    std::to_string(col(i)) + " holds " +
                    py::str(py::float_(x)).cast<std::string>());
      }
      checks[r].push_back(static_cast<std::uint32_t>(col(i)));
    }
  }
  return PyCode{std::make_shared<const Code>(Code::from_checks(shape.second, checks)), "", {}};
}

py::object to_scipy(const PyCode& c) {
  const Code& code = *c.code;
  py::array_t<std::int64_t> indptr(static_cast<py::ssize_t>(code.m() + 1));
  py::array_t<std::int64_t> indices(static_cast<py::ssize_t>(code.edges()));
  py::array_t<std::uint8_t> data(static_cast<py::ssize_t>(code.edges()));
  auto p = indptr.mutable_unchecked<1>();
  auto col = indices.mutable_unchecked<1>();
  auto d = data.mutable_unchecked<1>();
  p(0) = 0;
  for (std::size_t r = 0; r < code.m(); ++r) {
    const auto vars = code.check_variables(r);
    for (std::size_t i = 0; i < vars.size(); ++i) {
      col(code.check_begin(r) + i) = vars[i];
      d(code.check_begin(r) + i) = 1;
    }
    p(static_cast<py::ssize_t>(r) + 1) = code.check_end(r);
  }
  return py::module_::import("scipy.sparse")
      .attr("csr_matrix")(py::make_tuple(data, indices, indptr),
                          py::arg("shape") = py::make_tuple(code.m(), code.n()));
}

// info: (..., k) uint8 of 0/1 -> (..., n) codewords.
py::array_t<std::uint8_t> py_encode(
    PyCode& c, const py::array_t<std::uint8_t, py::array::c_style | py::array::forcecast>& info) {
  const Encoder& encoder = c.encoding();
  const std::size_t k = encoder.k(), n = c.code->n();
  if (info.ndim() == 0 || static_cast<std::size_t>(info.shape(info.ndim() - 1)) != k) {
    throw Error("encode: info must have k = " + std::to_string(k) + " bits in its last dimension");
  }
  const std::size_t frames = k ? static_cast<std::size_t>(info.size()) / k : 0;
  std::vector<py::ssize_t> shape(info.shape(), info.shape() + info.ndim());
  shape.back() = static_cast<py::ssize_t>(n);
  py::array_t<std::uint8_t> out(shape);
  const std::uint8_t* in = info.data();
  std::uint8_t* word = out.mutable_data();
  for (std::size_t i = 0; i < frames * k; ++i) {
    if (in[i] > 1) {
      throw Error("encode: frame " + std::to_string(i / k) + ", bit " + std::to_string(i % k) +
                  " is " + std::to_string(in[i]) + "; information bits are 0 or 1");
    }
  }
  py::gil_scoped_release unlocked;
  for (std::size_t f = 0; f < frames; ++f)
    encoder.encode(std::span(in + f * k, k), std::span(word + f * n, n));
  return out;
}

// ---- decode --------------------------------------------------------------------------------

constexpr std::size_t kBatchPerThread = 256;

py::dict py_decode(PyCode& c, const py::array& llr, unsigned threads, bool posteriors,
                   std::optional<double> scale, const py::kwargs& settings) {
  const DecoderSettings s = decoder_keywords("decode", settings, "threads, posteriors, scale, ");
  const std::size_t n = c.code->n();
  if (llr.ndim() == 0 || static_cast<std::size_t>(llr.shape(llr.ndim() - 1)) != n) {
    throw Error("decode: llr must have n = " + std::to_string(n) + " values in its last dimension");
  }
  const py::dtype type = llr.dtype();
  const bool f64 = type.is(py::dtype::of<double>()), f32 = type.is(py::dtype::of<float>()),
             i8 = type.is(py::dtype::of<std::int8_t>());
  if (!f64 && !f32 && !i8)
    throw Error("decode: llr must be float64, float32 or int8, got " +
                py::str(static_cast<const py::handle&>(type)).cast<std::string>());
  // int8 values are fixed-point LLRs: with quantize B.F their unit is 2^-F unless scale says.
  const double factor =
      scale ? *scale
            : (i8 && s.quantization ? std::ldexp(1.0, -s.quantization->fraction_bits) : 1.0);
  if (!(std::isfinite(factor) && factor != 0))
    throw Error("decode: scale must be a finite number other than 0");
  const py::array values = py::array::ensure(llr, py::array::c_style);
  const std::size_t frames = static_cast<std::size_t>(values.size()) / n;
  std::vector<py::ssize_t> shape(values.shape(), values.shape() + values.ndim());
  py::array_t<std::uint8_t> bits(shape);
  py::array_t<double> posterior(posteriors ? shape : std::vector<py::ssize_t>{0});
  shape.pop_back();
  py::array_t<bool> converged(shape);
  py::array_t<std::int32_t> iterations(shape);
  py::array_t<std::uint32_t> syndrome(shape), undecided(shape);

  DecoderCache& cache = *c.decoders;
  std::unique_lock lock(cache.mutex, std::try_to_lock);
  std::unique_ptr<ParallelDecoder> own;
  const std::string key = json(s).dump() + "/" + std::to_string(threads);
  if (lock && (!cache.decoder || cache.key != key)) {
    cache.decoder = std::make_unique<ParallelDecoder>(c.code, s, threads);
    cache.key = key;
  }
  if (!lock) own = std::make_unique<ParallelDecoder>(c.code, s, threads);
  ParallelDecoder& decoder = lock ? *cache.decoder : *own;
  const void* in = values.data();
  std::uint8_t* hard = bits.mutable_data();
  double* post = posteriors ? posterior.mutable_data() : nullptr;
  bool* conv = converged.mutable_data();
  std::int32_t* iters = iterations.mutable_data();
  std::uint32_t* syn = syndrome.mutable_data();
  std::uint32_t* und = undecided.mutable_data();
  {
    py::gil_scoped_release unlocked;
    // float64 with no scale is decoded in place; other inputs are converted batch by batch.
    const std::size_t batch = kBatchPerThread * decoder.threads();
    std::vector<double> converted;
    std::vector<FrameOutcome> outcomes;
    for (std::size_t first = 0; first < frames; first += batch) {
      const std::size_t count = std::min(batch, frames - first), size = count * n;
      std::span<const double> batch_llr;
      if (f64 && factor == 1.0) {
        batch_llr = std::span(static_cast<const double*>(in) + first * n, size);
      } else {
        converted.resize(size);
        for (std::size_t i = 0; i < size; ++i) {
          const std::size_t at = first * n + i;
          const double x = f64   ? static_cast<const double*>(in)[at]
                           : f32 ? static_cast<double>(static_cast<const float*>(in)[at])
                                 : static_cast<double>(static_cast<const std::int8_t*>(in)[at]);
          converted[i] = x * factor;
        }
        batch_llr = converted;
      }
      outcomes.resize(count);
      decoder.decode(batch_llr, std::span(hard + first * n, size),
                     post ? std::span(post + first * n, size) : std::span<double>(), outcomes,
                     first);
      for (std::size_t f = 0; f < count; ++f) {
        conv[first + f] = outcomes[f].converged;
        iters[first + f] = outcomes[f].iterations;
        syn[first + f] = outcomes[f].syndrome_weight;
        und[first + f] = outcomes[f].undecided;
      }
    }
  }
  py::dict result;
  result["bits"] = bits;
  result["converged"] = converged;
  result["iterations"] = iterations;
  result["syndrome_weight"] = syndrome;
  result["undecided"] = undecided;
  result["posterior"] = posteriors ? py::object(posterior) : py::none();
  result["kernel"] = std::string(name_of(decoder.settings().kernel));
  return result;
}

// ---- simulate ------------------------------------------------------------------------------

py::object py_simulate(PyCode& c, const std::string& channel,
                       std::optional<std::vector<double>> sweep, unsigned threads,
                       const std::optional<py::function>& progress, const py::kwargs& settings) {
  SimulationConfig config;
  json decoder = json::object(), chan = json::object(), stop = json::object(), run = json::object();
  const auto model = parse_channel_model(channel);
  if (!model) {
    throw Error("channel '" + channel +
                "' is not one of awgn, rayleigh:fast, rayleigh:block:B, bsc, bec");
  }
  chan["kind"] = name_of(model->first);
  chan["fading_block"] = model->second;
  for (const auto& [key, value] : settings) {
    const auto name = key.cast<std::string>();
    const bool model_key = name == "kind" || name == "fading_block";  // given by channel
    json* target = has_field<DecoderSettings>(name)             ? &decoder
                   : has_field<ChannelSpec>(name) && !model_key ? &chan
                   : has_field<StopRules>(name)                 ? &stop
                   : has_field<SimulationConfig>(name)          ? &run
                                                                : nullptr;
    if (!target) {
      std::string link;
      for_each_field<ChannelSpec>([&](const auto& field) {
        if (field.key != "kind" && field.key != "fading_block") link.append(", ").append(field.key);
      });
      unknown_setting("simulate", name,
                      "channel, sweep, threads, progress, " + field_keys<DecoderSettings>() + ", " +
                          field_keys<StopRules>() + ", " + field_keys<SimulationConfig>() + link);
    }
    (*target)[name] = to_json(value);
  }
  config.decoder = decoder_settings(decoder);
  read_fields(chan, config.channel, "channel");
  validate(config.channel);
  read_fields(stop, config.stop, "stop");
  read_fields(run, config, "run");
  config.sweep = sweep ? *sweep : default_sweep(config.channel.kind);
  config.threads = threads;

  Simulator sim(c.code, config);
  RunRecord record = new_run_record(c.source, *c.code, sim);
  std::atomic<bool> interrupt{false};
  std::optional<py::error_already_set> raised;
  auto on_progress = [&](const Progress& p) {
    py::gil_scoped_acquire locked;
    if (raised) return;
    try {
      if (PyErr_CheckSignals() != 0) throw py::error_already_set();
      if (progress) {
        py::dict d;
        d["point"] = p.point;
        d["parameter"] = config.sweep[p.point];
        d["frames"] = p.totals.frames;
        d["frame_errors"] = p.totals.frame_errors;
        d["bit_errors"] = p.totals.bit_errors;
        d["seconds"] = p.seconds;
        (*progress)(d);
      }
    } catch (py::error_already_set& e) {
      raised = std::move(e);
      interrupt = true;  // the simulator stops at the next chunk boundary
    }
  };
  {
    py::gil_scoped_release unlocked;
    record.points = sim.run({}, on_progress, &interrupt);
  }
  record.interrupted = !record.points.empty() && !record.points.back().complete;
  // Ctrl-C returns what was computed (interrupted: true); any other error of the callback raises.
  if (raised && !raised->matches(PyExc_KeyboardInterrupt)) throw std::move(*raised);
  return json_to_python(json::parse(results_json(record)));
}

// ---- theory --------------------------------------------------------------------------------

// A threshold result as the dict both threshold functions return.
py::dict threshold_dict(const ThresholdResult& r, const std::string& channel) {
  py::dict out;
  out["threshold"] = r.threshold;
  out["parameter"] = channel == "awgn" ? "sigma" : (channel == "bsc" ? "p" : "epsilon");
  out["ebn0_db"] = channel == "awgn" ? py::object(py::float_(r.ebn0_db)) : py::none();
  out["rate"] = r.rate;
  out["limit"] = r.limit;
  out["gap_db"] = channel == "awgn" ? py::object(py::float_(r.gap_db)) : py::none();
  out["method"] = r.method;
  out["accuracy"] = r.accuracy;
  return out;
}

py::dict py_threshold(std::optional<py::object> code,
                      std::optional<std::pair<std::size_t, std::size_t>> regular,
                      const std::string& channel, const std::string& method,
                      const py::kwargs& settings) {
  const DecoderSettings d =
      decoder_keywords("threshold", settings, "code, regular, channel, method, ");
  if (code.has_value() == regular.has_value())
    throw Error("threshold: give either a code (its degree distribution) or regular=(dv, dc)");
  const Ensemble e = regular ? Ensemble::regular(regular->first, regular->second)
                             : Ensemble::from_code(degree_profile(*code->cast<PyCode&>().code));
  e.validate();
  return threshold_dict(
      threshold(e, d, parse_name<ChannelKind>(channel), parse_name<ThresholdMethod>(method)),
      channel);
}

// A protograph from a 2-D table of multiplicities (nested lists or a numpy array) and punctured
// columns (0-based, as numpy indexes).
Protograph protograph_of(const std::vector<std::vector<int>>& table,
                         const std::vector<std::size_t>& punctured) {
  Protograph p;
  p.rows = table.size();
  p.cols = table.empty() ? 0 : table[0].size();
  for (std::size_t i = 0; i < table.size(); ++i) {
    if (table[i].size() != p.cols)
      throw Error(fmt::format("protograph: row {} has {} entries, row 0 has {}", i, table[i].size(),
                              p.cols));
    for (int v : table[i]) {
      if (v < 0 || v > 255)
        throw Error(fmt::format("protograph: multiplicity {} in row {} is not in 0..255", v, i));
      p.cells.push_back(static_cast<std::uint8_t>(v));
    }
  }
  p.punctured = punctured;
  std::sort(p.punctured.begin(), p.punctured.end());
  for (std::size_t j = 0; j < p.punctured.size(); ++j) {
    if (p.punctured[j] >= p.cols || (j > 0 && p.punctured[j] == p.punctured[j - 1]))
      throw Error(
          fmt::format("protograph: punctured column {} is repeated or beyond the {} columns",
                      p.punctured[j], p.cols));
  }
  p.validate();
  return p;
}

py::dict py_protograph_threshold(const std::vector<std::vector<int>>& table,
                                 const std::vector<std::size_t>& punctured,
                                 const std::string& channel, const std::string& method) {
  const Protograph p = protograph_of(table, punctured);
  py::dict d = threshold_dict(protograph_threshold(p, parse_name<ChannelKind>(channel),
                                                   parse_name<ThresholdMethod>(method)),
                              channel);
  d["encodable_weight_bound"] = protograph_design_violation(p, true).empty()
                                    ? py::object(py::int_(encodable_weight_bound(p)))
                                    : py::object(py::none());
  return d;
}

// ---- floor ---------------------------------------------------------------------------------

py::object py_floor_search(PyCode& c, unsigned threads, std::uint64_t seed, int impulses,
                           std::optional<std::vector<double>> amplitudes, double background,
                           unsigned local_steps, std::size_t beam, std::uint32_t max_size,
                           std::optional<std::vector<std::vector<std::uint32_t>>> failures,
                           const py::kwargs& settings) {
  FloorSearchSettings s;
  s.decoder = decoder_keywords("floor_search", settings,
                               "threads, seed, impulses, amplitudes, background, local_steps, "
                               "beam, max_size, failures, ");
  s.threads = threads;
  s.seed = seed;
  s.impulse_order = impulses;
  if (amplitudes) s.amplitudes = *amplitudes;
  s.background = background;
  s.search_steps = local_steps;
  s.search_beam = beam;
  s.max_size = max_size;
  if (failures) s.seeds = *failures;
  std::string text;
  {
    py::gil_scoped_release unlocked;
    text = structures_json(new_structures_record(c.source, *c.code, s, floor_search(c.code, s)));
  }
  return json_to_python(json::parse(text));
}

py::object py_floor_estimate(PyCode& c, const py::object& structures, std::vector<double> sweep,
                             std::uint64_t frames, std::size_t candidates, std::size_t per_point,
                             std::optional<double> shift, double min_ess, std::uint64_t seed,
                             unsigned threads, double confidence, const py::kwargs& settings) {
  FloorEstimateSettings s;
  s.decoder =
      decoder_keywords("floor_estimate", settings,
                       "structures, sweep, frames, candidates, per_point, shift, min_ess, seed, "
                       "threads, confidence, ");
  s.sweep = std::move(sweep);
  s.frames = frames;
  s.candidates = candidates;
  s.max_structures = per_point;
  s.shift = shift;
  s.min_ess = min_ess;
  s.seed = seed;
  s.threads = threads;
  if (!(confidence > 0 && confidence < 1))
    throw Error("floor_estimate: confidence must be in (0, 1)");
  // A floor_search result (a dict), or lists of positions.
  std::vector<FoundStructure> list;
  if (py::isinstance<py::dict>(structures)) {
    const auto text = py::module_::import("json").attr("dumps")(structures).cast<std::string>();
    list = parse_structures_json(text, "structures", *c.code).result.all();
  } else {
    StructureClassifier classifier(*c.code);
    for (const auto& set : structures.cast<std::vector<std::vector<std::uint32_t>>>()) {
      FoundStructure f;
      f.variables = set;
      std::sort(f.variables.begin(), f.variables.end());
      f.shape = classifier.shape(f.variables);
      list.push_back(std::move(f));
    }
  }
  std::string text;
  {
    py::gil_scoped_release unlocked;
    const auto points = floor_estimate(c.code, list, s);
    text = results_json(estimate_run_record(c.source, *c.code, s, confidence, points));
  }
  return json_to_python(json::parse(text));
}

}  // namespace

}  // namespace tannery::python

PYBIND11_MODULE(tannery, m) {
  using namespace tannery;
  using namespace tannery::python;
  m.doc() =
      "tannery: error-correcting codes on Tanner graphs (LDPC above all) - load or build a code, "
      "encode, decode numpy arrays of LLRs on all cores, simulate error rates, thresholds and "
      "capacities. Settings are keyword arguments named as in scenario files and results JSON.";
  m.attr("__version__") = std::string(version());
  static py::exception<Error> error(m, "Error", PyExc_ValueError);
  py::register_exception_translator([](std::exception_ptr p) {
    try {
      if (p) std::rethrow_exception(p);
    } catch (const Error& e) {
      PyErr_SetString(error.ptr(), e.what());
    }
  });
  // Shipped codes beside the module: build/python -> build/share, or an installation's
  // lib/python3/dist-packages -> share.
  Dl_info self{};
  if (dladdr(reinterpret_cast<void*>(&py_load), &self) != 0 && self.dli_fname)
    add_code_directories_near(std::filesystem::path(self.dli_fname).parent_path().string(), 3);

  py::class_<PyCode>(m, "Code", "A binary linear code given by its parity-check matrix H (m x n).")
      .def_static("load", &py_load, py::arg("path_or_name"), py::arg("format") = py::none(),
                  py::arg("lifting") = py::none(),
                  "Reads a matrix file (tannery, alist, mtx, qc or dense; detected from its "
                  "content unless format is given) or a shipped code by name.")
      .def_static("from_scipy", &from_scipy, py::arg("H"),
                  "A code from H as any scipy.sparse matrix or 2-D array of 0s and 1s.")
      .def_static("shipped", &shipped_code_names, "Names of the codes shipped with tannery.")
      .def("to_scipy", &to_scipy, "H as a scipy.sparse.csr_matrix of uint8.")
      .def_property_readonly(
          "n", [](const PyCode& c) { return c.code->n(); }, "code length")
      .def_property_readonly(
          "m", [](const PyCode& c) { return c.code->m(); }, "checks (rows of H)")
      .def_property_readonly(
          "k", [](PyCode& c) { return c.encoding().k(); }, "dimension (information bits)")
      .def_property_readonly(
          "edges", [](const PyCode& c) { return c.code->edges(); }, "ones in H")
      .def_property_readonly(
          "source", [](const PyCode& c) { return c.source; },
          "path or shipped name it was loaded from ('' if built in Python)")
      .def_property_readonly(
          "info_positions",
          [](PyCode& c) {
            return py::array_t<std::uint32_t>(py::cast(c.encoding().info_positions()));
          },
          "codeword positions that carry the information bits, as encode places them")
      .def(
          "inspect",
          [](const PyCode& c, std::size_t max_dimension) {
            return json_to_python(
                json::parse(code_report_json(inspect_code(*c.code, max_dimension), c.source)));
          },
          py::arg("max_dimension") = 24,
          "Structure as a dict (the fields of 'tannery inspect --json'): rank, k, rates, degree "
          "distributions, girth, redundant rows, weight enumerator and minimum distance when k "
          "<= max_dimension.")
      .def("encode", &py_encode, py::arg("info"),
           "Codewords of information bits: uint8 array (..., k) of 0/1 -> (..., n).")
      .def("__repr__", [](PyCode& c) {
        return "<tannery.Code n=" + std::to_string(c.code->n()) +
               " m=" + std::to_string(c.code->m()) + (c.source.empty() ? "" : " from " + c.source) +
               ">";
      });

  m.def("decode", &py_decode, py::arg("code"), py::arg("llr"), py::kw_only(),
        py::arg("threads") = 0, py::arg("posteriors") = false, py::arg("scale") = py::none(),
        "Decodes channel LLRs log P(0)/P(1), an array (..., n) of float64 (read in place), float32 "
        "or int8 (fixed-point: times scale, by default 2^-F with quantize='B.F', else 1), on all "
        "cores (threads=0) with the GIL released. Settings as keywords: algorithm, schedule, "
        "iterations, early_stop, alpha, beta, flip_threshold, kernel, quantize. Returns a dict: "
        "bits (..., n) uint8 (2 = undecided: posterior exactly 0), converged, iterations, "
        "syndrome_weight, undecided (...), posterior (..., n) float64 when posteriors=True, and "
        "the kernel that decoded.");
  m.def("simulate", &py_simulate, py::arg("code"), py::kw_only(), py::arg("channel") = "awgn",
        py::arg("sweep") = py::none(), py::arg("threads") = 0, py::arg("progress") = py::none(),
        "Monte Carlo error rates across a sweep, counts identical to 'tannery simulate' with the "
        "same settings and seed. channel: awgn, rayleigh:fast, rayleigh:block:B, bsc or bec; "
        "sweep: Eb/N0 dB (awgn, rayleigh), p or epsilon (default as the CLI's). Settings as "
        "keywords (decoder, stop rules: frame_errors, max_frames, max_seconds, stop_below_fer; "
        "run: seed, chunk_frames, all_zero, confidence; link: modulation, demapper, interleaver, "
        "ignore_fading, puncture, snr, design_rate, snr_offset_db, assumed_crossover). "
        "progress(dict) is called "
        "about five times a second. Ctrl-C stops at the next chunk and returns the results so far "
        "(interrupted: True). Returns the results document as a dict.");
  m.def("threshold", &py_threshold, py::kw_only(), py::arg("code") = py::none(),
        py::arg("regular") = py::none(), py::arg("channel") = "awgn",
        py::arg("method") = "discretized",
        "Density-evolution threshold of a code's degree distribution or of regular=(dv, dc) on "
        "awgn (sigma and Eb/N0), bsc (p) or bec (epsilon), for the decoder the keywords give.");
  m.def("protograph_threshold", &py_protograph_threshold, py::arg("table"), py::kw_only(),
        py::arg("punctured") = std::vector<std::size_t>{}, py::arg("channel") = "awgn",
        py::arg("method") = "exit",
        "Sum-product threshold of a protograph: table of edge multiplicities (rows: check types), "
        "punctured columns (0-based), channel awgn (protograph EXIT analysis, or 'discretized' "
        "density evolution when the protograph is regular) or bec (exact). The same dict as "
        "threshold(), plus encodable_weight_bound: for a protograph with the encodable parity "
        "part, the weight of a codeword one information bit makes in every encodable lifting "
        "(None otherwise).");
  m.def("floor_search", &py_floor_search, py::arg("code"), py::kw_only(), py::arg("threads") = 0,
        py::arg("seed") = 1, py::arg("impulses") = 0, py::arg("amplitudes") = py::none(),
        py::arg("background") = 2.0, py::arg("local_steps") = 6, py::arg("beam") = 16,
        py::arg("max_size") = 40, py::arg("failures") = py::none(),
        "Low-weight codewords (error impulses) and trapping sets of the code, as 'tannery floor "
        "search --json' gives them: a dict with smallest_codeword_weight (an upper bound on "
        "d_min), classes and structures (variables, a, b, multiplicity, absorbing, ...). "
        "failures: lists of positions (e.g. a simulation's failure_classes examples) seeding "
        "the trapping-set search. Decoder settings as keywords.");
  m.def("floor_estimate", &py_floor_estimate, py::arg("code"), py::arg("structures"), py::kw_only(),
        py::arg("sweep"), py::arg("frames") = 20000, py::arg("candidates") = 256,
        py::arg("per_point") = 8, py::arg("shift") = py::none(), py::arg("min_ess") = 30.0,
        py::arg("seed") = 1, py::arg("threads") = 0, py::arg("confidence") = 0.95,
        "Importance-sampled FER at each Eb/N0 of sweep (BPSK, AWGN) toward the structures "
        "(a floor_search result, or lists of positions), as 'tannery floor estimate': the results "
        "document, each point with importance_sampled (fer, fer_sd, ess, reliable, structures). "
        "A lower estimate: failures on structures not listed are not counted.");
  m.def("biawgn_capacity", &biawgn_capacity, py::arg("sigma"),
        "Capacity of BPSK over AWGN (bits per channel use) at noise deviation sigma.");
  m.def("shannon_limit_ebn0_db", &biawgn_shannon_limit_ebn0_db, py::arg("rate"),
        "Smallest Eb/N0 (dB) at which BPSK-AWGN capacity reaches the rate.");
  m.def(
      "modulation_capacity",
      [](const std::string& modulation, double esn0_db, const std::string& kind,
         const std::string& channel) {
        return modulation_capacity(Constellation::of(parse_text<Modulation>(modulation)),
                                   parse_name<CapacityKind>(kind), parse_name<ChannelKind>(channel),
                                   esn0_db);
      },
      py::arg("modulation"), py::arg("esn0_db"), py::arg("kind") = "bicm",
      py::arg("channel") = "awgn",
      "Capacity in bits per symbol of a modulation (bpsk ... 256qam, 4pam, 8pam or a "
      "constellation file) at Es/N0 in dB: kind bicm (bit-interleaved) or coded-modulation; "
      "channel awgn or rayleigh (ergodic, amplitude known).");
  m.def(
      "modulation_shannon_limit_ebn0_db",
      [](const std::string& modulation, double rate, const std::string& kind,
         const std::string& channel) {
        return modulation_shannon_limit_ebn0_db(
            Constellation::of(parse_text<Modulation>(modulation)), parse_name<CapacityKind>(kind),
            parse_name<ChannelKind>(channel), rate);
      },
      py::arg("modulation"), py::arg("rate"), py::arg("kind") = "bicm", py::arg("channel") = "awgn",
      "Smallest Eb/N0 (dB) at which that capacity reaches `rate` information bits per symbol.");
  m.def(
      "constellation",
      [](const std::string& modulation) {
        const Constellation c = Constellation::of(parse_text<Modulation>(modulation));
        py::array_t<std::complex<double>> points(static_cast<py::ssize_t>(c.size()));
        std::copy(c.points().begin(), c.points().end(), points.mutable_data());
        return points;
      },
      py::arg("modulation"),
      "The points of a modulation by label (index = label, first label bit the most "
      "significant), unit average energy, as a complex numpy array.");
  m.def("bsc_capacity", &bsc_capacity, py::arg("p"), "1 - h2(p).");
  m.def("bec_capacity", &bec_capacity, py::arg("epsilon"), "1 - epsilon.");
  m.def(
      "normal_approximation_fer",
      [](const std::string& channel, double value, std::size_t n, std::size_t k) {
        return normal_approximation_fer(parse_name<ChannelKind>(channel), value, n, k);
      },
      py::arg("channel"), py::arg("value"), py::arg("n"), py::arg("k"),
      "Finite-length limit: the smallest FER a code (n, k) can reach at the channel value "
      "(sigma, p or epsilon), by the normal approximation.");
}
