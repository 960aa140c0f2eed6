#include "tannery/channel/modulation.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <fstream>
#include <numeric>
#include <sstream>

#include "demap_kernels.hpp"
#include "tannery/error.hpp"
#include "tannery/parse.hpp"
#include "tannery/sim/random.hpp"

namespace tannery {

std::optional<Modulation> SettingText<Modulation>::parse(std::string_view text) {
  if (const auto kind = from_name<ModulationKind>(text)) {
    if (*kind == ModulationKind::custom) return std::nullopt;  // "custom" names no file
    return Modulation{*kind, {}};
  }
  if (text.empty()) return std::nullopt;
  return Modulation{ModulationKind::custom, std::string(text)};
}

std::string SettingText<Modulation>::format(const Modulation& m) {
  return m.kind == ModulationKind::custom ? m.file : std::string(name_of(m.kind));
}

std::optional<Interleaver> SettingText<Interleaver>::parse(std::string_view text) {
  if (text == "none") return Interleaver{};
  if (text.starts_with("random:")) {
    const auto seed = parse_count(text.substr(7));
    if (!seed) return std::nullopt;
    return Interleaver{Interleaver::random, *seed, 0, 0};
  }
  if (text.starts_with("block:")) {
    const std::string_view shape = text.substr(6);
    const auto x = shape.find('x');
    if (x == std::string_view::npos) return std::nullopt;
    const auto rows = parse_count(shape.substr(0, x)), cols = parse_count(shape.substr(x + 1));
    if (!rows || !cols || *rows == 0 || *cols == 0 || *rows > UINT32_MAX || *cols > UINT32_MAX)
      return std::nullopt;
    return Interleaver{Interleaver::block, 0, static_cast<std::uint32_t>(*rows),
                       static_cast<std::uint32_t>(*cols)};
  }
  return std::nullopt;
}

std::string SettingText<Interleaver>::format(const Interleaver& i) {
  switch (i.kind) {
    case Interleaver::random:
      return fmt::format("random:{}", i.seed);
    case Interleaver::block:
      return fmt::format("block:{}x{}", i.rows, i.cols);
    case Interleaver::none:
      break;
  }
  return "none";
}

std::vector<std::uint32_t> interleaver_order(const Interleaver& interleaver, std::size_t bits) {
  std::vector<std::uint32_t> order(bits);
  std::iota(order.begin(), order.end(), 0u);
  switch (interleaver.kind) {
    case Interleaver::none:
      break;
    case Interleaver::random: {
      // Fisher-Yates with the uniforms of a Philox stream of its own (frame = seed, point 0).
      std::vector<double> u(bits);
      frame_uniforms(FrameId{interleaver.seed, 0xFFFFFFFFu, 0}, u);
      for (std::size_t i = bits; i > 1; --i) {
        const auto j = std::min(static_cast<std::size_t>(u[i - 1] * static_cast<double>(i)), i - 1);
        std::swap(order[i - 1], order[j]);
      }
      break;
    }
    case Interleaver::block: {
      const std::uint64_t size = std::uint64_t{interleaver.rows} * interleaver.cols;
      if (size != bits) {
        throw Error(fmt::format(
            "interleaver block:{}x{} holds {} bits, but a frame sends {}: rows x cols must equal "
            "the sent bits",
            interleaver.rows, interleaver.cols, size, bits));
      }
      // Written row by row, read column by column: slot j reads row j % rows, column j / rows.
      for (std::size_t j = 0; j < bits; ++j)
        order[j] = static_cast<std::uint32_t>((j % interleaver.rows) * interleaver.cols +
                                              j / interleaver.rows);
      break;
    }
  }
  return order;
}

namespace {

// Gray PAM levels by label, unit energy over the levels times energy_share.
std::vector<double> gray_pam(unsigned bits, double energy) {
  const std::size_t levels = std::size_t{1} << bits;
  const double m = static_cast<double>(levels);
  const double d = std::sqrt(3 * energy / (m * m - 1));
  std::vector<double> by_label(levels);
  for (std::size_t i = 0; i < levels; ++i)
    by_label[i ^ (i >> 1)] = (m - 1 - 2 * static_cast<double>(i)) * d;
  return by_label;
}

}  // namespace

Constellation Constellation::standard(ModulationKind kind) {
  Constellation c;
  auto pam = [&](unsigned bits) {
    c.bits_ = c.pam_bits_ = bits;
    c.pam_ = gray_pam(bits, 1.0);
    for (double level : c.pam_) c.points_.emplace_back(level, 0.0);
  };
  auto qam = [&](unsigned bits_per_axis) {
    c.bits_ = 2 * bits_per_axis;
    c.pam_bits_ = bits_per_axis;
    c.complex_ = true;
    c.pam_ = gray_pam(bits_per_axis, 0.5);
    const std::uint32_t axis = 1u << bits_per_axis;
    for (std::uint32_t label = 0; label < axis * axis; ++label)
      c.points_.emplace_back(c.pam_[label / axis], c.pam_[label % axis]);
  };
  switch (kind) {
    case ModulationKind::bpsk:
      pam(1);
      break;
    case ModulationKind::pam4:
      pam(2);
      break;
    case ModulationKind::pam8:
      pam(3);
      break;
    case ModulationKind::qpsk:
      qam(1);
      break;
    case ModulationKind::qam16:
      qam(2);
      break;
    case ModulationKind::qam64:
      qam(3);
      break;
    case ModulationKind::qam256:
      qam(4);
      break;
    case ModulationKind::custom:
      throw Error("a custom modulation needs a constellation file");
  }
  return c;
}

Constellation Constellation::parse(std::string_view text, const std::string& source) {
  Constellation c;
  std::vector<std::pair<std::uint32_t, std::complex<double>>> points;
  std::size_t line_number = 0, label_bits = 0;
  std::istringstream in{std::string(text)};
  for (std::string line; std::getline(in, line);) {
    ++line_number;
    if (const auto hash = line.find('#'); hash != std::string::npos) line.erase(hash);
    std::istringstream fields(line);
    std::vector<std::string> tokens;
    for (std::string t; fields >> t;) tokens.push_back(t);
    if (tokens.empty()) continue;
    auto fail = [&](const std::string& what) {
      return Error(fmt::format("{}:{}: {}", source, line_number, what));
    };
    if (tokens.size() < 2 || tokens.size() > 3)
      throw fail("expected LABEL I [Q] (label in binary, then the point's coordinates)");
    const std::string& label = tokens[0];
    if (label.empty() || label.size() > 8 || label.find_first_not_of("01") != std::string::npos) {
      throw fail(fmt::format("label '{}' must be 1 to 8 binary digits", label));
    }
    if (label_bits == 0) label_bits = label.size();
    if (label.size() != label_bits)
      throw fail(
          fmt::format("label '{}' has {} bits, the first one {}", label, label.size(), label_bits));
    const auto i = parse_real(tokens[1]);
    const auto q = tokens.size() == 3 ? parse_real(tokens[2]) : std::optional<double>(0.0);
    if (!i || !q) throw fail("coordinates must be finite numbers");
    points.emplace_back(static_cast<std::uint32_t>(std::stoul(label, nullptr, 2)),
                        std::complex<double>(*i, *q));
  }
  if (points.empty()) throw Error(fmt::format("{}: no constellation points", source));
  const std::size_t size = std::size_t{1} << label_bits;
  if (points.size() != size) {
    throw Error(
        fmt::format("{}: {} points for {}-bit labels, which need each of the {} labels once",
                    source, points.size(), label_bits, size));
  }
  c.bits_ = static_cast<unsigned>(label_bits);
  c.points_.assign(size, {});
  std::vector<bool> seen(size, false);
  double energy = 0;
  for (const auto& [label, x] : points) {
    if (seen[label]) {
      throw Error(fmt::format("{}: label {:0{}b} appears twice", source, label,
                              static_cast<int>(label_bits)));
    }
    seen[label] = true;
    c.points_[label] = x;
    energy += std::norm(x);
    c.complex_ = c.complex_ || x.imag() != 0;
  }
  energy /= static_cast<double>(size);
  if (!(energy > 0)) throw Error(fmt::format("{}: every point is at the origin", source));
  c.scale_ = 1 / std::sqrt(energy);
  for (auto& x : c.points_) x *= c.scale_;
  for (std::size_t a = 0; a < size; ++a) {
    for (std::size_t b = a + 1; b < size; ++b) {
      if (c.points_[a] == c.points_[b])
        throw Error(fmt::format("{}: labels {:0{}b} and {:0{}b} share a point", source, a,
                                static_cast<int>(label_bits), b, static_cast<int>(label_bits)));
    }
  }
  return c;
}

Constellation Constellation::read(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw Error(fmt::format("{}: cannot open the constellation file", path));
  std::ostringstream text;
  text << in.rdbuf();
  return parse(text.str(), path);
}

Constellation Constellation::of(const Modulation& m) {
  return m.kind == ModulationKind::custom ? read(m.file) : standard(m.kind);
}

std::string Constellation::table() const {
  std::string out = fmt::format(
      "# label  in-phase  quadrature   ({} points, unit average energy)\n", points_.size());
  for (std::size_t label = 0; label < points_.size(); ++label) {
    out += fmt::format("{:0{}b}  {:.17g}  {:.17g}\n", label, static_cast<int>(bits_),
                       points_[label].real(), points_[label].imag());
  }
  return out;
}

namespace detail {

void demap_planes(const Constellation& c, Demapper demapper, std::span<const double> in_phase,
                  std::span<const double> quadrature, std::span<const double> amplitude,
                  double noise_variance, double* planes) {
  const std::size_t count = in_phase.size();
  if ((c.complex() && quadrature.size() != count) || (!c.complex() && !quadrature.empty()) ||
      (!amplitude.empty() && amplitude.size() != count)) {
    throw Error("demap: the received values and amplitudes do not match in size");
  }
  if (!(noise_variance > 0 && std::isfinite(1 / noise_variance)))
    throw Error(fmt::format("demap: noise_variance must be positive, got {}", noise_variance));
  const bool exact = demapper == Demapper::exact;
  const double* a = amplitude.empty() ? nullptr : amplitude.data();
  if (c.pam_bits() > 0) {
    // A Gray PAM, or one on each axis: each axis demapped alone.
    const DemapTable pam{c.pam_bits(), c.pam_levels(), {}};
    demap_symbols(pam, exact, count, in_phase.data(), nullptr, a, noise_variance, planes);
    if (c.complex()) {
      demap_symbols(pam, exact, count, quadrature.data(), nullptr, a, noise_variance,
                    planes + count * c.pam_bits());
    }
    return;
  }
  DemapTable table{c.bits(), {}, {}};
  for (const auto& x : c.points()) {
    table.in_phase.push_back(x.real());
    if (c.complex()) table.quadrature.push_back(x.imag());
  }
  demap_symbols(table, exact, count, in_phase.data(), c.complex() ? quadrature.data() : nullptr, a,
                noise_variance, planes);
}

}  // namespace detail

void demap(const Constellation& c, Demapper demapper, std::span<const double> in_phase,
           std::span<const double> quadrature, std::span<const double> amplitude,
           double noise_variance, std::span<double> llr) {
  const std::size_t count = in_phase.size();
  if (llr.size() != count * c.bits())
    throw Error("demap: the LLRs do not match the received values in size");
  std::vector<double> planes(count * c.bits());
  detail::demap_planes(c, demapper, in_phase, quadrature, amplitude, noise_variance, planes.data());
  for (std::size_t s = 0; s < count; ++s) {
    for (unsigned b = 0; b < c.bits(); ++b) llr[s * c.bits() + b] = planes[b * count + s];
  }
}

}  // namespace tannery
