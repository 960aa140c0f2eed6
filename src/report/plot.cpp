#include "tannery/report/plot.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "tannery/error.hpp"
#include "tannery/theory/capacity.hpp"
#include "tannery/theory/density_evolution.hpp"

namespace tannery {

namespace {

constexpr double kWidth = 960, kHeight = 560, kLeft = 80, kRight = 330, kTop = 50, kBottom = 60;
constexpr const char* kColours[] = {"#1f5fa8", "#c0392b", "#2e8b57", "#8e44ad",
                                    "#d68910", "#117a8b", "#6e2c00"};

std::string escape(const std::string& s) {
  std::string out;
  for (char c : s) {
    switch (c) {
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '&':
        out += "&amp;";
        break;
      case '"':
        out += "&quot;";
        break;
      default:
        out += c;
    }
  }
  return out;
}

struct Axes {
  double x0, x1, y0, y1;  // y in log10
  double px(double x) const { return kLeft + (x - x0) / (x1 - x0) * (kWidth - kLeft - kRight); }
  double py(double v) const {
    const double l = std::clamp(std::log10(std::max(v, 1e-300)), y0, y1);
    return kTop + (y1 - l) / (y1 - y0) * (kHeight - kTop - kBottom);
  }
};

// BPSK over AWGN with every code bit sent: the uncoded BPSK BER applies.
bool binary_awgn(const RunRecord& run) {
  const ChannelSpec& c = run.config.channel;
  return c.kind == ChannelKind::awgn && c.modulation == Modulation{} && c.puncture.empty();
}

// The block the normal approximation compares a run with: the code bits sent per frame and the
// information bits they carry (puncturing and shortening counted), on a binary-input channel;
// {0, 0} when it does not apply (other modulations, or a punctured run in a file from before the
// sent bits were recorded).
std::pair<std::size_t, std::size_t> sent_block(const RunRecord& run) {
  const ChannelSpec& c = run.config.channel;
  const bool binary =
      c.kind == ChannelKind::awgn ? c.modulation == Modulation{} : !snr_swept(c.kind);
  if (!binary || run.code.n == 0 || run.code.k == 0) return {0, 0};
  if (c.puncture.empty()) return {run.code.n, run.code.k};
  if (run.sent_bits == 0) return {0, 0};
  return {run.sent_bits, static_cast<std::size_t>(std::llround(
                             run.effective_rate * static_cast<double>(run.sent_bits)))};
}

// Capacity limit of the first run, in its own parameter, with a label; NaN when not applicable.
// AWGN and Rayleigh: the limit of the run's modulation for a bit-interleaved receiver (BICM; for
// BPSK the binary-input AWGN capacity) at its information bits per symbol.
std::pair<double, std::string> capacity_limit(const RunRecord& run) {
  const ChannelSpec& c = run.config.channel;
  if (snr_swept(c.kind)) {
    const double rate = run.rate_for_snr;
    double limit = NAN;
    std::string label;
    if (c.kind == ChannelKind::awgn && c.modulation == Modulation{}) {
      if (!(rate > 0 && rate < 1)) return {NAN, ""};
      limit = biawgn_shannon_limit_ebn0_db(rate);
      label = fmt::format("BPSK Shannon limit, R = {:.3f}", rate);
    } else {
      try {
        const Constellation points = Constellation::of(c.modulation);
        if (!(rate > 0 && rate < points.bits())) return {NAN, ""};
        limit = modulation_shannon_limit_ebn0_db(points, CapacityKind::bicm, c.kind, rate);
      } catch (const Error&) {
        return {NAN, ""};  // a custom constellation file no longer readable
      }
      label = fmt::format("{} BICM limit{}, {:.3f} bit/symbol",
                          SettingText<Modulation>::format(c.modulation),
                          c.kind == ChannelKind::rayleigh ? " (Rayleigh, ergodic)" : "", rate);
    }
    if (c.measure == SnrMeasure::esn0) limit = esn0_db_from_ebn0(limit, rate);
    return {limit, label};
  }
  const double rate = run.effective_rate;
  if (!(rate > 0 && rate < 1)) return {NAN, ""};
  if (c.kind == ChannelKind::bsc)
    return {bsc_limit_crossover(rate), fmt::format("BSC capacity limit, R = {:.3f}", rate)};
  return {1 - rate, fmt::format("BEC capacity limit, R = {:.3f}", rate)};
}

}  // namespace

FerCrossing fer_crossing(const RunRecord& run, double fer) {
  if (!(fer > 0 && fer < 1)) throw Error(fmt::format("FER {} is not in (0, 1)", fer));
  FerCrossing c;
  c.limit = capacity_limit(run).first;
  c.normal_approximation = NAN;
  std::vector<std::pair<double, double>> curve;  // (parameter, FER), increasing parameter
  for (const PointResult& p : run.points) curve.emplace_back(p.parameter, p.fer());
  std::sort(curve.begin(), curve.end());
  for (std::size_t i = 0; i + 1 < curve.size(); ++i) {
    const auto [x0, f0] = curve[i];
    const auto [x1, f1] = curve[i + 1];
    if (f0 >= fer && f1 < fer && f1 > 0) {
      c.at = x0 + (x1 - x0) * (std::log(f0 / fer) / std::log(f0 / f1));
      break;
    }
  }
  const ChannelSpec& spec = run.config.channel;
  // Plain variables: the lambda below captures them, and clang 14 (the checking build's
  // compiler) cannot capture structured bindings.
  const std::pair<std::size_t, std::size_t> block = sent_block(run);
  const std::size_t n = block.first, k = block.second;
  if (spec.kind == ChannelKind::awgn && n > 0) {
    // The normal approximation's FER falls as the SNR rises: bisection over 40 dB.
    auto na = [&](double x) {
      const double value = awgn_sigma(x, spec.measure, run.rate_for_snr);
      return normal_approximation_fer(spec.kind, value, n, k);
    };
    double lo = -10, hi = 30;
    if (na(lo) >= fer && na(hi) < fer) {
      for (int i = 0; i < 60; ++i) {
        const double mid = 0.5 * (lo + hi);
        (na(mid) >= fer ? lo : hi) = mid;
      }
      c.normal_approximation = 0.5 * (lo + hi);
      c.sent_n = n;
      c.sent_k = k;
    }
  }
  return c;
}

std::string run_label(const RunRecord& run) {
  const DecoderSettings& d = run.config.decoder;
  std::string decoder(name_of(d.algorithm));
  if (d.algorithm == Algorithm::normalized_min_sum) decoder += fmt::format(" {}", d.alpha);
  if (d.algorithm == Algorithm::offset_min_sum) decoder += fmt::format(" {}", d.beta);
  const std::string kernel = d.quantization
                                 ? fmt::format("fixed point {}", quantization_spec(*d.quantization))
                                 : fmt::format("{} kernel", name_of(d.kernel));
  const ChannelSpec& c = run.config.channel;
  std::string link = channel_model(c);
  if (snr_swept(c.kind) && !(c.modulation == Modulation{}))
    link += fmt::format(" {}", SettingText<Modulation>::format(c.modulation));
  if (!c.puncture.empty()) link += " punctured";
  return fmt::format("{}/{}, {}, {}, {}", decoder, name_of(d.schedule), kernel, link,
                     run.code.source);
}

namespace {

// "(8, 2) 40%" beside a FER point: its most frequent failure class (the smallest a, then b, on
// a tie) and that class's share of the point's failures; nothing when none was classified.
std::string failure_class_label(const PointResult& p, double x, double y, const char* colour) {
  const std::pair<const StructureClass, FailureClassCount>* top = nullptr;
  for (const auto& entry : p.failure_classes) {
    if (!top || entry.second.frames > top->second.frames) top = &entry;
  }
  if (!top || p.frame_errors == 0) return "";
  const StructureClass& cls = top->first;
  return fmt::format(
      "<text x=\"{:.1f}\" y=\"{:.1f}\" font-size=\"9\" fill=\"{}\">({}, {}){} {:.0f}%</text>\n",
      x + 6, y - 6, colour, cls.a, cls.b, cls.b == 0 ? " cw" : "",
      100.0 * static_cast<double>(top->second.frames) / static_cast<double>(p.frame_errors));
}

}  // namespace

std::string plot_svg(const std::vector<PlotRun>& runs, const PlotOptions& options) {
  if (runs.empty()) throw Error("plot: no results to draw");
  double xmin = INFINITY, xmax = -INFINITY, vmin = 1.0;
  for (const auto& r : runs) {
    for (const auto& p : r.run.points) {
      xmin = std::min(xmin, p.parameter);
      xmax = std::max(xmax, p.parameter);
      const PointStats s = point_stats(p, r.run.config.confidence);
      for (double v : {options.fer ? p.fer() : 1.0, options.ber ? p.ber() : 1.0,
                       options.fer ? s.fer.low : 1.0, options.ber ? s.ber.low : 1.0}) {
        if (v > 0) vmin = std::min(vmin, v);
      }
    }
  }
  if (!std::isfinite(xmin)) throw Error("plot: the results files have no points");
  const RunRecord& first = runs.front().run;
  // One horizontal axis: every run must sweep the same quantity (AWGN and Rayleigh runs share an
  // Eb/N0 or Es/N0 axis).
  for (const auto& r : runs) {
    const ChannelSpec &a = first.config.channel, &b = r.run.config.channel;
    const bool same =
        snr_swept(a.kind) ? snr_swept(b.kind) && a.measure == b.measure : a.kind == b.kind;
    if (!same) {
      throw Error(fmt::format(
          "plot: '{}' sweeps {} on {} and '{}' sweeps {} on {}: they cannot share one axis; plot "
          "them separately",
          runs.front().label, parameter_heading(a), name_of(a.kind), r.label, parameter_heading(b),
          name_of(b.kind)));
    }
  }
  const bool awgn_ebn0 = binary_awgn(first) && first.config.channel.measure == SnrMeasure::ebn0;
  const auto [limit, limit_label] = options.references
                                        ? capacity_limit(first)
                                        : std::pair{static_cast<double>(NAN), std::string()};
  if (std::isfinite(limit)) xmin = std::min(xmin, limit), xmax = std::max(xmax, limit);
  if (options.threshold)
    xmin = std::min(xmin, *options.threshold), xmax = std::max(xmax, *options.threshold);
  const double span = std::max(xmax - xmin, snr_swept(first.config.channel.kind) ? 1.0 : 0.01);
  Axes ax{xmin - 0.05 * span, xmax + 0.05 * span, std::floor(std::log10(vmin)) - (vmin < 1 ? 0 : 1),
          0};
  if (ax.y0 >= ax.y1) ax.y0 = ax.y1 - 1;

  std::string svg = fmt::format(
      "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
      "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{0}\" height=\"{1}\" viewBox=\"0 0 {0} "
      "{1}\" "
      "font-family=\"sans-serif\" font-size=\"12\">\n<rect width=\"100%\" height=\"100%\" "
      "fill=\"white\"/>\n",
      kWidth, kHeight);
  const std::string heading = parameter_heading(first.config.channel);
  const std::string title =
      options.title.empty() ? fmt::format("{}: error rates", first.code.source) : options.title;
  svg += fmt::format("<text x=\"{}\" y=\"28\" font-size=\"15\" font-weight=\"bold\">{}</text>\n",
                     kLeft, escape(title));
  // Decade grid and labels.
  for (double d = ax.y0; d <= ax.y1 + 1e-9; d += 1) {
    const double y = ax.py(std::pow(10.0, d));
    svg += fmt::format(
        "<line x1=\"{:.1f}\" y1=\"{:.1f}\" x2=\"{:.1f}\" y2=\"{:.1f}\" stroke=\"#ccc\"/>\n", kLeft,
        y, kWidth - kRight, y);
    svg += fmt::format("<text x=\"{:.1f}\" y=\"{:.1f}\" text-anchor=\"end\">1e{}</text>\n",
                       kLeft - 6, y + 4, static_cast<int>(d));
    for (int m = 2; m < 10 && d < ax.y1; ++m) {
      const double ym = ax.py(m * std::pow(10.0, d));
      svg += fmt::format(
          "<line x1=\"{:.1f}\" y1=\"{:.1f}\" x2=\"{:.1f}\" y2=\"{:.1f}\" stroke=\"#eee\"/>\n",
          kLeft, ym, kWidth - kRight, ym);
    }
  }
  const double raw_step = (ax.x1 - ax.x0) / 8;
  const double magnitude = std::pow(10.0, std::floor(std::log10(raw_step)));
  double step = magnitude;
  for (double f : {1.0, 2.0, 2.5, 5.0, 10.0}) {
    if (f * magnitude >= raw_step) {
      step = f * magnitude;
      break;
    }
  }
  for (double x = std::ceil(ax.x0 / step) * step; x <= ax.x1 + 1e-12; x += step) {
    const double px = ax.px(x);
    svg += fmt::format(
        "<line x1=\"{:.1f}\" y1=\"{:.1f}\" x2=\"{:.1f}\" y2=\"{:.1f}\" stroke=\"#ddd\"/>\n", px,
        kTop, px, kHeight - kBottom);
    svg += fmt::format("<text x=\"{:.1f}\" y=\"{:.1f}\" text-anchor=\"middle\">{:g}</text>\n", px,
                       kHeight - kBottom + 18, std::round(x / step) * step);
  }
  svg += fmt::format(
      "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"black\"/>\n",
      kLeft, kTop, kWidth - kLeft - kRight, kHeight - kTop - kBottom);
  svg += fmt::format("<text x=\"{:.1f}\" y=\"{:.1f}\" text-anchor=\"middle\">{}</text>\n",
                     (kLeft + kWidth - kRight) / 2, kHeight - 18, escape(heading));
  svg += fmt::format(
      "<text x=\"18\" y=\"{:.1f}\" text-anchor=\"middle\" transform=\"rotate(-90 18 "
      "{:.1f})\">error rate</text>\n",
      (kTop + kHeight - kBottom) / 2, (kTop + kHeight - kBottom) / 2);

  std::vector<std::pair<std::string, std::string>> legend;  // (swatch svg, label)
  if (options.references && awgn_ebn0) {
    std::string points;
    for (int i = 0; i <= 200; ++i) {
      const double x = ax.x0 + (ax.x1 - ax.x0) * i / 200;
      const double v = uncoded_bpsk_ber(x);
      if (std::log10(v) < ax.y0) break;
      points += fmt::format("{:.1f},{:.1f} ", ax.px(x), ax.py(v));
    }
    svg += fmt::format(
        "<polyline points=\"{}\" fill=\"none\" stroke=\"#777\" stroke-dasharray=\"6 4\"/>\n",
        points);
    legend.emplace_back("stroke=\"#777\" stroke-dasharray=\"6 4\"", "uncoded BPSK BER");
  }
  const auto [na_n, na_k] = sent_block(first);
  if (options.normal_approximation && na_n > 0) {
    std::string points;
    for (int i = 0; i <= 200; ++i) {
      const double x = ax.x0 + (ax.x1 - ax.x0) * i / 200;
      ChannelSpec spec = first.config.channel;
      double value = x;
      if (spec.kind == ChannelKind::awgn) value = awgn_sigma(x, spec.measure, first.rate_for_snr);
      if (spec.kind != ChannelKind::awgn && (x <= 0 || x >= 1)) continue;
      const double fer = normal_approximation_fer(spec.kind, value, na_n, na_k);
      if (fer <= 0 || std::log10(fer) < ax.y0) continue;
      points += fmt::format("{:.1f},{:.1f} ", ax.px(x), ax.py(fer));
    }
    svg += fmt::format(
        "<polyline points=\"{}\" fill=\"none\" stroke=\"#444\" stroke-dasharray=\"1 3\" "
        "stroke-width=\"1.5\"/>\n",
        points);
    legend.emplace_back("stroke=\"#444\" stroke-dasharray=\"1 3\"",
                        fmt::format("normal approximation FER, n = {}, k = {}", na_n, na_k));
  }
  if (options.threshold) {
    const double px = ax.px(*options.threshold);
    svg += fmt::format(
        "<line x1=\"{0:.1f}\" y1=\"{1}\" x2=\"{0:.1f}\" y2=\"{2}\" stroke=\"#b03a2e\" "
        "stroke-dasharray=\"8 3\"/>\n",
        px, kTop, kHeight - kBottom);
    legend.emplace_back("stroke=\"#b03a2e\" stroke-dasharray=\"8 3\"",
                        fmt::format("threshold ({:.4g})", *options.threshold));
  }
  if (std::isfinite(limit)) {
    const double px = ax.px(limit);
    svg += fmt::format(
        "<line x1=\"{0:.1f}\" y1=\"{1}\" x2=\"{0:.1f}\" y2=\"{2}\" stroke=\"black\" "
        "stroke-dasharray=\"2 3\"/>\n",
        px, kTop, kHeight - kBottom);
    legend.emplace_back("stroke=\"black\" stroke-dasharray=\"2 3\"",
                        fmt::format("{} ({:.3g})", limit_label, limit));
  }
  std::size_t colour = 0;
  for (const auto& r : runs) {
    for (int metric = 0; metric < 2; ++metric) {
      if ((metric == 0 && !options.fer) || (metric == 1 && !options.ber)) continue;
      const char* c = kColours[colour++ % std::size(kColours)];
      // Importance-sampled runs: dashed line, hollow diamonds, '?' beside an unreliable point.
      const bool sampled =
          std::any_of(r.run.points.begin(), r.run.points.end(),
                      [](const PointResult& p) { return p.importance.has_value(); });
      std::string line, marks;
      for (const auto& p : r.run.points) {
        const PointStats s = point_stats(p, r.run.config.confidence);
        const double v = metric == 0 ? p.fer() : p.ber();
        const Interval iv = metric == 0 ? s.fer : s.ber;
        const double x = ax.px(p.parameter);
        marks += fmt::format(
            "<line x1=\"{0:.1f}\" y1=\"{1:.1f}\" x2=\"{0:.1f}\" y2=\"{2:.1f}\" stroke=\"{3}\"/>\n",
            x, ax.py(iv.low), ax.py(iv.high), c);
        if (v <= 0) continue;  // no errors: only the interval is drawn
        line += fmt::format("{:.1f},{:.1f} ", x, ax.py(v));
        if (p.importance) {
          const double y = ax.py(v);
          marks += fmt::format(
              "<polygon points=\"{0:.1f},{1:.1f} {2:.1f},{3:.1f} {0:.1f},{4:.1f} {5:.1f},{3:.1f}\" "
              "fill=\"white\" stroke=\"{6}\" stroke-width=\"1.5\"/>\n",
              x, y - 5, x + 5, y, y + 5, x - 5, c);
          if (!p.importance->reliable)
            marks += fmt::format(
                "<text x=\"{:.1f}\" y=\"{:.1f}\" font-size=\"11\" fill=\"{}\">?</text>\n", x + 6,
                y + 4, c);
          continue;
        }
        marks +=
            metric == 0
                ? fmt::format("<circle cx=\"{:.1f}\" cy=\"{:.1f}\" r=\"3.5\" fill=\"{}\"/>\n", x,
                              ax.py(v), c)
                : fmt::format(
                      "<rect x=\"{:.1f}\" y=\"{:.1f}\" width=\"7\" height=\"7\" fill=\"{}\"/>\n",
                      x - 3.5, ax.py(v) - 3.5, c);
        if (metric == 0 && options.failure_classes) marks += failure_class_label(p, x, ax.py(v), c);
      }
      const std::string dash = sampled ? " stroke-dasharray=\"5 3\"" : "";
      svg += fmt::format(
          "<polyline points=\"{}\" fill=\"none\" stroke=\"{}\" stroke-width=\"1.6\"{}/>\n{}", line,
          c, dash, marks);
      legend.emplace_back(fmt::format("stroke=\"{}\" stroke-width=\"2\"{}", c, dash),
                          fmt::format("{} {}{}", metric == 0 ? "FER" : "BER", r.label,
                                      sampled ? " (importance-sampled, lower estimate)" : ""));
    }
  }
  double ly = kTop + 10;
  for (const auto& [style, label] : legend) {
    const double lx = kWidth - kRight + 12;
    svg += fmt::format("<line x1=\"{:.1f}\" y1=\"{:.1f}\" x2=\"{:.1f}\" y2=\"{:.1f}\" {}/>\n", lx,
                       ly, lx + 24, ly, style);
    svg += fmt::format("<text x=\"{:.1f}\" y=\"{:.1f}\" font-size=\"11\">{}</text>\n", lx + 30,
                       ly + 4, escape(label));
    ly += 18;
  }
  svg += fmt::format(
      "<text x=\"{}\" y=\"{:.1f}\" font-size=\"10\" fill=\"#555\">bars: {:.0f}% confidence "
      "intervals</text>\n",
      kWidth - kRight + 12, ly + 6, first.config.confidence * 100);
  svg += "</svg>\n";
  return svg;
}

}  // namespace tannery
