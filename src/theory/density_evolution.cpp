#include "tannery/theory/density_evolution.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <complex>
#include <unsupported/Eigen/FFT>
#include <vector>

#include "tannery/base/stats.hpp"
#include "tannery/channel/channel.hpp"
#include "tannery/error.hpp"
#include "tannery/parse.hpp"
#include "tannery/theory/capacity.hpp"
#include "threshold_internal.hpp"

namespace tannery {

// ---- ensembles --------------------------------------------------------------------------------

double Ensemble::design_rate() const {
  double l = 0, r = 0;
  for (auto [d, c] : lambda) l += c / static_cast<double>(d);
  for (auto [d, c] : rho) r += c / static_cast<double>(d);
  return 1 - r / l;
}

std::map<std::size_t, double> parse_degree_map(std::string_view text, std::string_view setting) {
  std::map<std::size_t, double> out;
  std::size_t start = 0;
  while (start <= text.size()) {
    const std::size_t comma = std::min(text.find(',', start), text.size());
    const std::string_view item = text.substr(start, comma - start);
    const std::size_t colon = item.find(':');
    const auto degree = parse_count(item.substr(0, colon));
    const auto value =
        parse_real(colon == std::string_view::npos ? std::string_view() : item.substr(colon + 1));
    if (!degree || !value || *degree == 0 || *value < 0) {
      throw Error(fmt::format(
          "{}: '{}' is not DEGREE:VALUE with a degree >= 1 and a value >= 0 (e.g. 2:0.3,3:0.7)",
          setting, item));
    }
    out[*degree] += *value;
    start = comma + 1;
  }
  return out;
}

std::pair<std::size_t, std::size_t> parse_degree_pair(std::string_view text,
                                                      std::string_view setting) {
  const std::size_t comma = text.find(',');
  const auto dv = parse_count(text.substr(0, comma));
  const auto dc =
      parse_count(comma == std::string_view::npos ? std::string_view() : text.substr(comma + 1));
  if (!dv || !dc || *dv == 0 || *dc == 0)
    throw Error(
        fmt::format("{}: expected DV,DC (two degrees >= 1, e.g. 3,6), got '{}'", setting, text));
  return {*dv, *dc};
}

Ensemble Ensemble::regular(std::size_t dv, std::size_t dc) {
  if (dv < 2 || dc < 2) throw Error("regular ensembles need dv >= 2 and dc >= 2");
  return Ensemble{{{dv, 1.0}}, {{dc, 1.0}}};
}

Ensemble Ensemble::from_node_fractions(const std::map<std::size_t, double>& variables,
                                       const std::map<std::size_t, double>& checks) {
  auto convert = [](const std::map<std::size_t, double>& nodes) {
    double edges = 0;
    for (auto [d, f] : nodes) edges += static_cast<double>(d) * f;
    std::map<std::size_t, double> out;
    for (auto [d, f] : nodes) out[d] = static_cast<double>(d) * f / edges;
    return out;
  };
  return Ensemble{convert(variables), convert(checks)};
}

Ensemble Ensemble::from_code(const DegreeProfile& p) {
  std::map<std::size_t, double> v, c;
  for (auto [d, count] : p.variable) {
    if (d > 0) v[d] = static_cast<double>(count);
  }
  for (auto [d, count] : p.check) {
    if (d > 0) c[d] = static_cast<double>(count);
  }
  return from_node_fractions(v, c);
}

void Ensemble::validate() const {
  for (const auto* m : {&lambda, &rho}) {
    double sum = 0;
    for (auto [d, c] : *m) {
      if (d < 1 || d > kMaxEnsembleDegree || !(c >= 0 && std::isfinite(c))) {
        throw Error(
            fmt::format("degree {} with coefficient {} is not allowed (degrees 1 to {}, "
                        "coefficients >= 0)",
                        d, c, kMaxEnsembleDegree));
      }
      sum += c;
    }
    if (std::abs(sum - 1) > 1e-6) {
      throw Error(
          fmt::format("{} coefficients sum to {}, not 1", m == &lambda ? "lambda" : "rho", sum));
    }
  }
  if (rho.begin()->first < 2) throw Error("check degrees must be at least 2");
  const double rate = design_rate();
  if (!(rate > 0 && rate < 1)) {
    throw Error(fmt::format(
        "the ensemble's design rate 1 - (sum rho_d/d) / (sum lambda_d/d) is {:g}, not in (0, 1)",
        rate));
  }
}

// ---- BEC --------------------------------------------------------------------------------------

namespace {

double poly(const std::map<std::size_t, double>& coefficients, double x) {
  double s = 0;
  for (auto [d, c] : coefficients) s += c * std::pow(x, static_cast<double>(d - 1));
  return s;
}

}  // namespace

double bec_threshold(const Ensemble& e) {
  e.validate();
  return detail::bisect(0.0, 1.0, 1e-7, [&](double eps) {
    double x = eps;
    for (int it = 0; it < 100000; ++it) {
      const double next = eps * poly(e.lambda, 1 - poly(e.rho, 1 - x));
      if (next < 1e-12) return true;
      if (x - next < 1e-15) return false;  // stuck at a fixed point
      x = next;
    }
    return false;
  });
}

// ---- discretized density evolution ------------------------------------------------------------

namespace {

using Complex = std::complex<double>;

// Where density evolution ends: below the target error probability, or at a fixed point with
// error probability pe; channel_pe is the channel's own (the decoder's starting point).
struct Evolution {
  bool converged = false;
  double pe = 1, channel_pe = 1;
  // A fixed point far below the channel's error probability is a floor after the waterfall,
  // not a failure to decode (a failing decoder stalls within a factor of a few of the channel).
  bool past_waterfall() const { return converged || pe < channel_pe / 20; }
};

// Densities on the LLR grid x_i = (i - half) * step, i in [0, 2 half]; mass beyond +-limit sits
// in the end bins (a saturating decoder).
class Grid {
 public:
  Grid(double step, double limit)
      : step_(step), half_(static_cast<std::size_t>(std::lround(limit / step))) {}
  std::size_t size() const { return 2 * half_ + 1; }
  std::size_t half() const { return half_; }
  double x(std::size_t i) const {
    return (static_cast<double>(i) - static_cast<double>(half_)) * step_;
  }
  double step() const { return step_; }
  std::size_t nearest(double v) const {
    const double pos = std::clamp(std::round(v / step_) + static_cast<double>(half_), 0.0,
                                  static_cast<double>(size() - 1));
    return static_cast<std::size_t>(pos);
  }
  // Adds mass at LLR value v, split linearly between the two nearest points (keeps the mean).
  void deposit(std::vector<double>& d, double v, double mass) const {
    const double pos =
        std::clamp(v / step_ + static_cast<double>(half_), 0.0, static_cast<double>(size() - 1));
    const auto lo = static_cast<std::size_t>(std::floor(pos));
    const double frac = pos - static_cast<double>(lo);
    d[lo] += mass * (1 - frac);
    if (frac > 0) d[lo + 1] += mass * frac;
  }

 private:
  double step_;
  std::size_t half_;
};

std::size_t fft_size(std::size_t at_least) {
  std::size_t n = 1;
  while (n < at_least) n <<= 1;
  return n;
}

class DensityEvolution {
 public:
  DensityEvolution(const Ensemble& e, const DecoderSettings& decoder, double step, double limit)
      : e_(e), decoder_(decoder), grid_(step, limit) {
    max_dv_ = e.lambda.rbegin()->first;
    max_dc_ = e.rho.rbegin()->first;
    if (decoder.algorithm == Algorithm::sum_product) {
      const std::size_t n = grid_.size();
      table_.resize(n * n);
      for (std::size_t i = 0; i < n; ++i) {
        for (std::size_t j = 0; j < n; ++j) {
          const double a = grid_.x(i), b = grid_.x(j);
          const double r = (a < 0) != (b < 0) ? -1.0 : 1.0;
          const double value = r * std::min(std::abs(a), std::abs(b)) +
                               std::log1p(std::exp(-std::abs(a + b))) -
                               std::log1p(std::exp(-std::abs(a - b)));
          table_[i * n + j] = static_cast<std::uint16_t>(grid_.nearest(value));
        }
      }
    }
  }

  // Iterates from the channel density until the error probability of the messages (ties at 0
  // count one half) falls below target, or stops making progress (a fixed point).
  Evolution evolve(const std::vector<double>& channel, int max_iterations, double target) {
    std::vector<double> v = channel;  // variable-to-check density
    const double channel_pe = error_probability(channel);
    double previous = 1, pe = 1;
    for (int it = 0; it < max_iterations; ++it) {
      const std::vector<double> c = check_update(v);
      v = variable_update(channel, c);
      pe = error_probability(v);
      if (pe < target) return Evolution{true, pe, channel_pe};
      if (it > 20 && previous - pe < 1e-4 * pe) break;  // no progress: a fixed point
      previous = std::min(previous, pe);
    }
    return Evolution{false, pe, channel_pe};
  }

  const Grid& grid() const { return grid_; }

 private:
  double error_probability(const std::vector<double>& d) const {
    double pe = 0;
    for (std::size_t i = 0; i < grid_.half(); ++i) pe += d[i];
    return pe + 0.5 * d[grid_.half()];
  }

  // out = channel * sum_d lambda_d c^(*(d-1)), by FFT; saturated at the grid ends.
  std::vector<double> variable_update(const std::vector<double>& channel,
                                      const std::vector<double>& c) {
    const std::size_t n = grid_.size(), size = fft_size(n * max_dv_);
    std::vector<double> a(size, 0.0), b(size, 0.0);
    std::copy(channel.begin(), channel.end(), a.begin());
    std::copy(c.begin(), c.end(), b.begin());
    std::vector<Complex> fa, fb;
    fft_.fwd(fa, a);
    fft_.fwd(fb, b);
    std::vector<double> out(n, 0.0), conv;
    std::vector<Complex> product(fa.size());
    for (auto [d, coef] : e_.lambda) {
      for (std::size_t k = 0; k < fa.size(); ++k)
        product[k] = coef * fa[k] * std::pow(fb[k], static_cast<double>(d - 1));
      fft_.inv(conv, product);
      // Index j sums d grid indices: value (j - d * half) * step, i.e. grid index j - (d - 1) *
      // half.
      const auto offset = static_cast<std::ptrdiff_t>((d - 1) * grid_.half());
      for (std::size_t j = 0; j < conv.size(); ++j) {
        if (conv[j] <= 0) continue;  // FFT round-off below zero
        const std::ptrdiff_t i = static_cast<std::ptrdiff_t>(j) - offset;
        out[static_cast<std::size_t>(
            std::clamp<std::ptrdiff_t>(i, 0, static_cast<std::ptrdiff_t>(n - 1)))] += conv[j];
      }
    }
    normalize(out);
    return out;
  }

  std::vector<double> check_update(const std::vector<double>& v) {
    if (decoder_.algorithm == Algorithm::sum_product) return check_sum_product(v);
    return check_min_sum(v);
  }

  // Sum-product: the check rule on quantised messages, a ⊞ b rounded to the grid (the table of
  // Chung, Forney, Richardson, Urbanke 2001), applied pairwise: p^(⊞k) = p^(⊞(k-1)) ⊞ p.
  std::vector<double> check_sum_product(const std::vector<double>& v) {
    const std::size_t n = grid_.size();
    std::vector<double> power = v, out(n, 0.0), next(n);
    std::vector<std::uint32_t> support;
    for (std::size_t k = 1;; ++k) {  // power holds the density of k inputs combined
      if (auto it = e_.rho.find(k + 1); it != e_.rho.end()) {
        for (std::size_t i = 0; i < n; ++i) out[i] += it->second * power[i];
      }
      if (k + 1 >= max_dc_) break;
      std::fill(next.begin(), next.end(), 0.0);
      // Masses below 1e-20 cannot move an error probability that stops at 1e-7: skip them.
      support.clear();
      for (std::size_t j = 0; j < n; ++j) {
        if (v[j] > 1e-20) support.push_back(static_cast<std::uint32_t>(j));
      }
      for (std::size_t i = 0; i < n; ++i) {
        if (power[i] < 1e-20) continue;
        const std::uint16_t* row = table_.data() + i * n;
        for (std::uint32_t j : support) next[row[j]] += power[i] * v[j];
      }
      power.swap(next);
    }
    normalize(out);
    return out;
  }

  // Min-sum family: P(|min| >= t, sign) from the tail masses G+(t) = P(x >= t), G-(t) = P(x <= -t):
  // positive part [(G+ + G-)^k + (G+ - G-)^k] / 2, negative part [(G+ + G-)^k - (G+ - G-)^k] / 2.
  std::vector<double> check_min_sum(const std::vector<double>& v) {
    const std::size_t h = grid_.half(), n = grid_.size();
    // Tails at magnitude index m (t = m * step), m = 0..h.
    std::vector<double> gp(h + 2, 0.0), gm(h + 2, 0.0);
    for (std::size_t m = h + 1; m-- > 0;) {
      gp[m] = gp[m + 1] + (m == 0 ? 0.5 * v[h] : v[h + m]);
      gm[m] = gm[m + 1] + (m == 0 ? 0.5 * v[h] : v[h - m]);
    }
    std::vector<double> out(n, 0.0);
    for (auto [d, coef] : e_.rho) {
      const double k = static_cast<double>(d - 1);
      auto pos_tail = [&](std::size_t m) {
        return 0.5 * (std::pow(gp[m] + gm[m], k) + std::pow(gp[m] - gm[m], k));
      };
      auto neg_tail = [&](std::size_t m) {
        return 0.5 * (std::pow(gp[m] + gm[m], k) - std::pow(gp[m] - gm[m], k));
      };
      for (std::size_t m = 0; m <= h; ++m) {
        const double pos = coef * (pos_tail(m) - pos_tail(m + 1));
        const double neg = coef * (neg_tail(m) - neg_tail(m + 1));
        double magnitude = static_cast<double>(m) * grid_.step();
        if (decoder_.algorithm == Algorithm::normalized_min_sum) magnitude *= decoder_.alpha;
        if (decoder_.algorithm == Algorithm::offset_min_sum)
          magnitude = std::max(0.0, magnitude - decoder_.beta);
        grid_.deposit(out, magnitude, std::max(pos, 0.0));
        grid_.deposit(out, -magnitude, std::max(neg, 0.0));
      }
    }
    normalize(out);
    return out;
  }

  static void normalize(std::vector<double>& d) {
    double total = 0;
    for (double m : d) total += m;
    if (total > 0) {
      for (double& m : d) m /= total;
    }
  }

  const Ensemble& e_;
  DecoderSettings decoder_;
  Grid grid_;
  std::size_t max_dv_ = 0, max_dc_ = 0;
  std::vector<std::uint16_t> table_;  // sum-product: grid index of x_i ⊞ x_j
  Eigen::FFT<double> fft_;
};

// LLR grid: step 0.05; range +-20 for sum-product (its check table grows with the square of the
// grid), +-40 for the min-sum family. Saturating messages at +-20 gives min-sum a false error
// floor: a saturated wrong message and a saturated right one cancel at a variable node, where the
// unbounded decoder's right messages keep growing (offset min-sum, beta 0.5, lambda = 0.4x +
// 0.6x^2, rho = x^4 at 1.5 dB: stuck at 2e-6 with +-20, below 1e-7 with +-40 and +-60; the
// threshold moved from 2.55 to 1.30 dB and is the same with +-60).
constexpr double kStep = 0.05;
double grid_limit(const DecoderSettings& d) {
  return d.algorithm == Algorithm::sum_product ? 20.0 : 40.0;
}
constexpr int kIterations = 2000;
constexpr double kTarget = 1e-7;

// The threshold of a channel family from the density evolution at channel value x (worse is
// larger), bisected over [good, bad]: where the error probability reaches kTarget, and when it
// stalls at a floor first (the min-sum family can: with normalized min-sum the magnitude of
// messages along degree-2 variables stays bounded near L / (1 - alpha)), where the waterfall
// ends and the floor there.
template <class Evolve>
void find_threshold(double good, double bad, double tolerance, Evolve evolve, ThresholdResult& r) {
  const double waterfall =
      detail::bisect(good, bad, tolerance, [&](double x) { return evolve(x).past_waterfall(); });
  // Just inside the waterfall (the bisection's good side).
  const double inside = std::max(good, waterfall - tolerance);
  const Evolution at = evolve(inside);
  r.target = kTarget;
  if (at.converged) {
    r.threshold = waterfall;
    return;
  }
  r.stalled = true;
  r.waterfall = waterfall;
  r.floor = at.pe;
  r.threshold =
      detail::bisect(good, inside, tolerance, [&](double x) { return evolve(x).converged; });
}

// Channel LLR density of BPSK over AWGN: L = 2y/sigma^2 ~ N(2/sigma^2, 4/sigma^2), by bin masses.
std::vector<double> awgn_channel(const Grid& g, double sigma) {
  const double mean = 2 / (sigma * sigma), sd = 2 / sigma;
  std::vector<double> d(g.size(), 0.0);
  for (std::size_t i = 0; i < g.size(); ++i) {
    const double lo = i == 0 ? -INFINITY : g.x(i) - g.step() / 2,
                 hi = i + 1 == g.size() ? INFINITY : g.x(i) + g.step() / 2;
    d[i] = normal_tail((lo - mean) / sd) - normal_tail((hi - mean) / sd);
  }
  return d;
}

// Channel LLR density of the BSC with crossover p: +-log((1 - p) / p).
std::vector<double> bsc_channel(const Grid& g, double p) {
  std::vector<double> d(g.size(), 0.0);
  const double l = std::log((1 - p) / p);
  g.deposit(d, l, 1 - p);
  g.deposit(d, -l, p);
  return d;
}

// Gaussian approximation: phi(m) = 1 - E[tanh(u/2)] = E[2 / (1 + e^u)], u ~ N(m, 2m)
// (Chung, Richardson, Urbanke 2001); the second form keeps full precision for large m.
double phi(double m) {
  if (m <= 0) return 1;
  const double sd = std::sqrt(2 * m);
  const int steps = 240;
  const double lo = m - 12 * sd, hi = m + 12 * sd, h = (hi - lo) / steps;
  double sum = 0;
  for (int i = 0; i <= steps; ++i) {
    const double u = lo + i * h;
    const double f = 2 / (1 + std::exp(u)) * std::exp(-(u - m) * (u - m) / (4 * m));
    sum += f * (i == 0 || i == steps ? 1 : (i % 2 ? 4 : 2));
  }
  return sum * h / 3 / std::sqrt(4 * M_PI * m);
}
double phi_inverse(double y) {
  double lo = 0, hi = 1;
  while (phi(hi) > y) hi *= 2;
  for (int i = 0; i < 50; ++i) {  // relative precision 2^-50 of the bracket
    const double mid = 0.5 * (lo + hi);
    (phi(mid) > y ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

bool gaussian_converges(const Ensemble& e, double sigma) {
  const double m0 = 2 / (sigma * sigma);
  double mu = 0;
  for (int it = 0; it < 5000; ++it) {
    double s = 0;
    for (auto [dv, l] : e.lambda) s += l * phi(m0 + static_cast<double>(dv - 1) * mu);
    // s tracks the error probability of the messages; below 1e-10 the quadrature of phi, not
    // the recursion, would decide further steps.
    if (s < 1e-10) return true;
    double next = 0;
    for (auto [dc, r] : e.rho)
      next += r * phi_inverse(-std::expm1(static_cast<double>(dc - 1) * std::log1p(-s)));
    if (next - mu < 1e-9) return false;  // a fixed point: decoding fails
    mu = next;
  }
  return false;
}

void check_algorithm(const DecoderSettings& d) {
  if (d.algorithm == Algorithm::bit_flip || d.algorithm == Algorithm::ml) {
    throw Error(fmt::format("density evolution covers sum-product and the min-sum family, not {}",
                            name_of(d.algorithm)));
  }
}

}  // namespace

ThresholdResult awgn_threshold(const Ensemble& e, const DecoderSettings& decoder,
                               ThresholdMethod method) {
  e.validate();
  check_algorithm(decoder);
  const double rate = e.design_rate();
  if (method == ThresholdMethod::exit) {
    throw Error(
        "the EXIT method is protograph EXIT analysis: it takes a protograph (--base), not "
        "a degree distribution; use discretized or gaussian");
  }
  if (method == ThresholdMethod::gaussian) {
    if (decoder.algorithm != Algorithm::sum_product)
      throw Error("the Gaussian approximation covers sum-product only");
    const double sigma =
        detail::bisect(0.3, 2.0, 1e-5, [&](double s) { return gaussian_converges(e, s); });
    return detail::awgn_threshold_result(
        sigma, rate, "Gaussian approximation (Chung, Richardson, Urbanke 2001)", 1e-5);
  }
  DensityEvolution de(e, decoder, kStep, grid_limit(decoder));
  ThresholdResult found;
  find_threshold(
      0.3, 2.0, 2e-4,
      [&](double s) { return de.evolve(awgn_channel(de.grid(), s), kIterations, kTarget); }, found);
  ThresholdResult r = detail::awgn_threshold_result(
      found.threshold, rate,
      fmt::format("discretized density evolution, LLR step {}, range +-{}", kStep,
                  grid_limit(decoder)),
      2e-3);
  r.target = found.target;
  r.stalled = found.stalled;
  if (r.stalled) {
    r.waterfall = found.waterfall;
    r.waterfall_ebn0_db = 10 * std::log10(1 / (2 * rate * found.waterfall * found.waterfall));
    r.floor = found.floor;
  }
  return r;
}

double density_evolution_error(const Ensemble& e, const DecoderSettings& decoder, ChannelKind kind,
                               double value) {
  e.validate();
  check_algorithm(decoder);
  if (kind == ChannelKind::bec) throw Error("on the BEC use bec_threshold (exact recursion)");
  if (kind == ChannelKind::rayleigh)
    throw Error("density evolution: BPSK on awgn, bsc or bec (not rayleigh)");
  DensityEvolution de(e, decoder, kStep, grid_limit(decoder));
  return de
      .evolve(kind == ChannelKind::awgn ? awgn_channel(de.grid(), value)
                                        : bsc_channel(de.grid(), value),
              kIterations, kTarget)
      .pe;
}

ThresholdResult bsc_threshold(const Ensemble& e, const DecoderSettings& decoder) {
  e.validate();
  check_algorithm(decoder);
  DensityEvolution de(e, decoder, kStep, grid_limit(decoder));
  ThresholdResult r;
  find_threshold(
      0.0001, 0.5, 1e-4,
      [&](double q) { return de.evolve(bsc_channel(de.grid(), q), kIterations, kTarget); }, r);
  r.rate = e.design_rate();
  r.limit = bsc_limit_crossover(r.rate);
  r.method = fmt::format("discretized density evolution, LLR step {}, range +-{}", kStep,
                         grid_limit(decoder));
  r.accuracy = 1e-3;
  return r;
}

ThresholdResult threshold(const Ensemble& e, const DecoderSettings& decoder, ChannelKind kind,
                          ThresholdMethod method) {
  if (kind == ChannelKind::awgn) return awgn_threshold(e, decoder, method);
  if (kind == ChannelKind::bsc) return bsc_threshold(e, decoder);
  if (kind == ChannelKind::rayleigh)
    throw Error("density evolution: BPSK on awgn, bsc or bec (not rayleigh)");
  if (decoder.algorithm != Algorithm::sum_product) {
    throw Error(
        "on the BEC every message-passing decoder is the peeling decoder; use algorithm "
        "sum-product");
  }
  ThresholdResult r;
  r.threshold = bec_threshold(e);
  r.rate = e.design_rate();
  r.limit = 1 - r.rate;
  r.method = "exact density evolution (BEC)";
  r.accuracy = 1e-6;
  r.target = 1e-12;  // the recursion's own stopping point
  return r;
}

}  // namespace tannery
