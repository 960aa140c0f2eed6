#include "tannery/theory/protograph.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <array>
#include <cmath>
#include <vector>

#include "tannery/error.hpp"
#include "threshold_internal.hpp"

namespace tannery {

// ---- the J function ----------------------------------------------------------------------------

namespace {

// J is kept as w(sigma) = sqrt(-ln(1 - J(sigma))): w grows like a sigma near 0 and like
// sigma / sqrt(8) for large sigma, smooth in between, so cubic interpolation on a uniform grid is
// accurate at both ends, and so is the inverse table sigma(w).
constexpr double kSigmaMax = 40;
constexpr int kSigmaSteps = 2560;  // grid step 1/64
constexpr int kWSteps = 2560;

// 1 - J(sigma) = E[log2(1 + exp(-L))], L = sigma^2 / 2 + sigma z, z standard normal, by composite
// Simpson over z. The integrand's mass sits between z = 0 (small sigma) and z = -sigma / 2 (large
// sigma, where it decays like exp(-sigma |z + sigma/2| / 2) on both sides); the window and the
// step follow that.
double j_complement_integral(double sigma) {
  if (sigma == 0) return 1;
  const double centre = -sigma / 2;
  const double half = std::min(14.0, 80.0 / sigma + 1.0);
  const double lo = std::min(centre, 0.0) - half, hi = std::max(centre, 0.0) + half;
  const double step = std::min(0.02, 0.2 / sigma);
  int intervals = static_cast<int>(std::ceil((hi - lo) / step));
  intervals += intervals % 2;
  const double h = (hi - lo) / intervals;
  double sum = 0;
  for (int k = 0; k <= intervals; ++k) {
    const double z = lo + k * h;
    const double l = sigma * sigma / 2 + sigma * z;
    const double log_term = l >= 0 ? std::log1p(std::exp(-l)) : -l + std::log1p(std::exp(l));
    const double f = log_term * std::exp(-z * z / 2);
    sum += f * (k == 0 || k == intervals ? 1 : (k % 2 ? 4 : 2));
  }
  return sum * h / 3 / std::sqrt(2 * M_PI) / std::log(2.0);
}

// Cubic (four-point Lagrange) interpolation in a table sampled at x = 0, step, 2 step, ...
double interpolate(const std::vector<double>& table, double step, double x) {
  const double position = x / step;
  const auto last = static_cast<std::ptrdiff_t>(table.size()) - 1;
  const auto k = std::clamp(static_cast<std::ptrdiff_t>(position) - 1, std::ptrdiff_t{0}, last - 3);
  const double t = position - static_cast<double>(k);  // in [0, 3]; interior points in [1, 2]
  const double y0 = table[k], y1 = table[k + 1], y2 = table[k + 2], y3 = table[k + 3];
  return -y0 * (t - 1) * (t - 2) * (t - 3) / 6 + y1 * t * (t - 2) * (t - 3) / 2 -
         y2 * t * (t - 1) * (t - 3) / 2 + y3 * t * (t - 1) * (t - 2) / 6;
}

struct JTables {
  double sigma_step = kSigmaMax / kSigmaSteps, w_max = 0, w_step = 0;
  std::vector<double> w_of_sigma, sigma_of_w;

  JTables() {
    w_of_sigma.resize(kSigmaSteps + 1);
    for (int k = 0; k <= kSigmaSteps; ++k)
      w_of_sigma[k] = std::sqrt(-std::log(j_complement_integral(k * sigma_step)));
    w_max = w_of_sigma.back();
    w_step = w_max / kWSteps;
    sigma_of_w.resize(kWSteps + 1);
    for (int k = 0; k <= kWSteps; ++k) {
      const double target = k * w_step;
      double lo = 0, hi = kSigmaMax;  // w(sigma) increases
      for (int b = 0; b < 60; ++b) {
        const double mid = 0.5 * (lo + hi);
        (interpolate(w_of_sigma, sigma_step, mid) < target ? lo : hi) = mid;
      }
      sigma_of_w[k] = 0.5 * (lo + hi);
    }
  }
  double w(double sigma) const {
    return interpolate(w_of_sigma, sigma_step, std::clamp(sigma, 0.0, kSigmaMax));
  }
  double sigma(double w) const {
    return interpolate(sigma_of_w, w_step, std::clamp(w, 0.0, w_max));
  }
};

const JTables& j_tables() {
  static const JTables tables;
  return tables;
}

}  // namespace

double exit_j(double sigma) {
  const double w = j_tables().w(sigma);
  return -std::expm1(-w * w);
}
double exit_j_complement(double sigma) {
  const double w = j_tables().w(sigma);
  return std::exp(-w * w);
}
double exit_j_inverse(double information) {
  if (!(information >= 0 && information <= 1))
    throw Error(fmt::format("J^-1 needs information in [0, 1], got {}", information));
  if (information == 1) return kSigmaMax;  // J(40) is 1 in double precision
  return j_tables().sigma(std::sqrt(-std::log1p(-information)));
}
double exit_j_inverse_complement(double complement) {
  if (!(complement >= 0 && complement <= 1))
    throw Error(fmt::format("J^-1 needs a complement in [0, 1], got {}", complement));
  if (complement == 0) return kSigmaMax;
  return j_tables().sigma(std::sqrt(-std::log(complement)));
}

// ---- protograph analysis ----------------------------------------------------------------------

namespace {

// Edge types of a protograph, grouped by check (edges) and listed per variable.
struct EdgeTypes {
  struct Edge {
    std::size_t check, variable;
    double multiplicity;
  };
  std::vector<Edge> edges;                            // ordered by check, then variable
  std::vector<std::size_t> check_start;               // edges of check i: [start[i], start[i+1])
  std::vector<std::vector<std::size_t>> of_variable;  // edge ids of each variable

  explicit EdgeTypes(const Protograph& p) : of_variable(p.cols) {
    for (std::size_t i = 0; i < p.rows; ++i) {
      check_start.push_back(edges.size());
      for (std::size_t j = 0; j < p.cols; ++j) {
        if (p.at(i, j) == 0) continue;
        of_variable[j].push_back(edges.size());
        edges.push_back({i, j, static_cast<double>(p.at(i, j))});
      }
    }
    check_start.push_back(edges.size());
  }
};

constexpr double kConverged = 1e-7;  // 1 - a-posteriori information of every variable type

}  // namespace

bool protograph_exit_converges(const Protograph& p, double sigma, int max_iterations) {
  p.validate();
  const EdgeTypes g(p);
  const std::size_t count = g.edges.size();
  // Complements of the information: from checks (1 - I_c) and from variables (1 - I_v). The
  // complements keep their precision as the information approaches 1.
  std::vector<double> from_check(count, 1.0), from_variable(count), squared(count);
  const double channel = 4 / (sigma * sigma);  // variance of the channel LLR 2y / sigma^2
  double previous = 2;
  for (int it = 0; it < max_iterations; ++it) {
    double worst = 0;  // largest 1 - I_app
    for (std::size_t j = 0; j < p.cols; ++j) {
      double total = p.is_punctured(j) ? 0.0 : channel;
      for (std::size_t e : g.of_variable[j]) {
        const double s = exit_j_inverse_complement(from_check[e]);
        squared[e] = s * s;
        total += g.edges[e].multiplicity * squared[e];
      }
      worst = std::max(worst, exit_j_complement(std::sqrt(total)));
      for (std::size_t e : g.of_variable[j])
        from_variable[e] = exit_j_complement(std::sqrt(std::max(0.0, total - squared[e])));
    }
    if (worst < kConverged) return true;
    if (worst > previous - 1e-14) return false;  // a fixed point
    previous = worst;
    for (std::size_t i = 0; i < p.rows; ++i) {
      double total = 0;
      for (std::size_t e = g.check_start[i]; e < g.check_start[i + 1]; ++e) {
        const double s = exit_j_inverse(from_variable[e]);
        squared[e] = s * s;
        total += g.edges[e].multiplicity * squared[e];
      }
      for (std::size_t e = g.check_start[i]; e < g.check_start[i + 1]; ++e)
        from_check[e] = exit_j(std::sqrt(std::max(0.0, total - squared[e])));
    }
  }
  return false;
}

bool protograph_bec_converges(const Protograph& p, double epsilon) {
  p.validate();
  const EdgeTypes g(p);
  const std::size_t count = g.edges.size();
  // Erasure probabilities of the messages, from checks and from variables.
  std::vector<double> from_check(count, 1.0), from_variable(count);
  double previous = 2;
  for (int it = 0; it < 100000; ++it) {
    double worst = 0;
    for (std::size_t j = 0; j < p.cols; ++j) {
      const double channel = p.is_punctured(j) ? 1.0 : epsilon;
      double all = channel;
      for (std::size_t e : g.of_variable[j])
        all *= std::pow(from_check[e], g.edges[e].multiplicity);
      worst = std::max(worst, all);
      for (std::size_t e : g.of_variable[j]) {
        double others = channel;  // the product without one copy of edge e
        for (std::size_t f : g.of_variable[j]) {
          others *= std::pow(from_check[f], g.edges[f].multiplicity - (f == e ? 1 : 0));
        }
        from_variable[e] = others;
      }
    }
    if (worst < 1e-12) return true;
    if (worst > previous - 1e-15) return false;
    previous = worst;
    for (std::size_t i = 0; i < p.rows; ++i) {
      for (std::size_t e = g.check_start[i]; e < g.check_start[i + 1]; ++e) {
        double known = 1;
        for (std::size_t f = g.check_start[i]; f < g.check_start[i + 1]; ++f) {
          known *= std::pow(1 - from_variable[f], g.edges[f].multiplicity - (f == e ? 1 : 0));
        }
        from_check[e] = 1 - known;
      }
    }
  }
  return false;
}

std::optional<Ensemble> protograph_ensemble(const Protograph& p) {
  p.validate();
  if (!p.punctured.empty()) return std::nullopt;
  const std::size_t dv = p.variable_degree(0), dc = p.check_degree(0);
  for (std::size_t j = 0; j < p.cols; ++j)
    if (p.variable_degree(j) != dv) return std::nullopt;
  for (std::size_t i = 0; i < p.rows; ++i)
    if (p.check_degree(i) != dc) return std::nullopt;
  return Ensemble::regular(dv, dc);
}

ThresholdResult protograph_threshold(const Protograph& p, ChannelKind kind, ThresholdMethod method,
                                     double tolerance) {
  p.validate();
  const double rate = p.design_rate();
  if (kind == ChannelKind::bec) {
    ThresholdResult r;
    r.threshold = detail::bisect(0.0, 1.0, std::max(tolerance, 1e-9),
                                 [&](double eps) { return protograph_bec_converges(p, eps); });
    r.rate = rate;
    r.limit = 1 - rate;
    r.method = "exact erasure density evolution on the protograph";
    r.accuracy = std::max(tolerance, 1e-9);
    r.target = 1e-12;
    return r;
  }
  if (kind != ChannelKind::awgn)
    throw Error(fmt::format("protograph thresholds: awgn or bec, not {}", name_of(kind)));
  if (method == ThresholdMethod::discretized || method == ThresholdMethod::gaussian) {
    const std::optional<Ensemble> e = protograph_ensemble(p);
    if (!e) {
      throw Error(fmt::format(
          "the {} method needs a protograph that reduces to an ensemble (every variable type of "
          "one degree, every check type of one degree, nothing punctured); use exit",
          name_of(method)));
    }
    return awgn_threshold(*e, DecoderSettings{}, method);
  }
  if (method != ThresholdMethod::exit)
    throw Error(fmt::format("protograph thresholds on awgn: exit, discretized or gaussian"));
  // The capacity limit bounds the threshold; a margin keeps the bracket's bad end bad.
  const double limit = awgn_sigma(biawgn_shannon_limit_ebn0_db(rate), SnrMeasure::ebn0, rate);
  const double good = 0.05, bad = 1.5 * limit;
  if (!protograph_exit_converges(p, good)) {
    throw Error(fmt::format(
        "protograph EXIT analysis does not converge even at sigma = {} (Eb/N0 = {:.1f} dB): some "
        "variable type is never recovered (a punctured column no check can determine?)",
        good, 10 * std::log10(1 / (2 * rate * good * good))));
  }
  const double sigma = detail::bisect(good, bad, tolerance,
                                      [&](double s) { return protograph_exit_converges(p, s); });
  return detail::awgn_threshold_result(
      sigma, rate, "protograph EXIT analysis (Liva & Chiani 2007), Gaussian messages", tolerance);
}

}  // namespace tannery
