#include <fmt/format.h>
#include <bit>
#include <catch2/catch.hpp>
#include <cmath>
#include <complex>
#include <limits>
#include <vector>

#include "tannery/channel/link.hpp"
#include "tannery/channel/modulation.hpp"
#include "tannery/error.hpp"
#include "tannery/sim/random.hpp"

using namespace tannery;

namespace {

const ModulationKind kStandard[] = {
    ModulationKind::bpsk,   ModulationKind::qpsk, ModulationKind::qam16, ModulationKind::qam64,
    ModulationKind::qam256, ModulationKind::pam4, ModulationKind::pam8};

// 8-PSK with Gray labels around the circle, as a custom constellation file would give it.
Constellation eight_psk() {
  const char* labels[] = {"000", "001", "011", "010", "110", "111", "101", "100"};
  std::string text = "# 8-PSK, Gray around the circle\n";
  for (int i = 0; i < 8; ++i) {
    const double phase = M_PI / 4 * i;
    text +=
        fmt::format("{} {:.17g} {:.17g}\n", labels[i], 2 * std::cos(phase), 2 * std::sin(phase));
  }
  return Constellation::parse(text, "8psk.txt");
}

// log sum exp(-|y - a x|^2 / 2 sigma^2) over points with bit b = 0, minus over b = 1, in long
// double, term by term: the definition the demapper must match.
std::vector<long double> brute_force_llr(const Constellation& c, std::complex<double> y, double a,
                                         double variance, long double* scale = nullptr) {
  std::vector<long double> llr(c.bits());
  if (scale) {  // the largest metric magnitude
    *scale = 0;
    for (std::uint32_t label = 0; label < c.size(); ++label) {
      const auto x = std::complex<long double>(c.point(label));
      const long double dot = 2.0L * a * (y.real() * x.real() + y.imag() * x.imag());
      *scale = std::max(*scale, std::abs(dot - static_cast<long double>(a) * a * std::norm(x)) /
                                    (2.0L * variance));
    }
  }
  for (unsigned b = 0; b < c.bits(); ++b) {
    long double best[2] = {-INFINITY, -INFINITY};
    std::vector<long double> metric(c.size());
    for (std::uint32_t label = 0; label < c.size(); ++label) {
      const std::complex<long double> d =
          std::complex<long double>(y) -
          static_cast<long double>(a) * std::complex<long double>(c.point(label));
      metric[label] = -std::norm(d) / (2.0L * variance);
      const int bit = (label >> (c.bits() - 1 - b)) & 1;
      best[bit] = std::max(best[bit], metric[label]);
    }
    long double sum[2] = {0, 0};
    for (std::uint32_t label = 0; label < c.size(); ++label) {
      const int bit = (label >> (c.bits() - 1 - b)) & 1;
      sum[bit] += std::exp(metric[label] - best[bit]);
    }
    llr[b] = best[0] + std::log(sum[0]) - best[1] - std::log(sum[1]);
  }
  return llr;
}

double q_function(double x) {
  return 0.5 * std::erfc(x / std::sqrt(2.0));
}

struct Counts {
  std::uint64_t bit_errors = 0, bits = 0, symbol_errors = 0, symbols = 0;
};

// Uncoded transmission of random labels at Es/N0 (dB) over AWGN, hard decisions from the sign of
// the max-log LLRs (the nearest point's label).
Counts uncoded(const Constellation& c, double esn0_db, std::size_t symbols, std::uint64_t seed) {
  const double variance = 1 / (2 * std::pow(10.0, esn0_db / 10));
  const double sigma = std::sqrt(variance);
  const std::size_t block = 4096;
  std::vector<double> z(2 * block), in_phase(block), quadrature(c.complex() ? block : 0),
      llr(block * c.bits()), u(block);
  std::vector<std::uint32_t> labels(block);
  Counts counts;
  for (std::uint64_t f = 0; counts.symbols < symbols; ++f) {
    frame_gaussians(FrameId{seed, 1, f}, z);
    frame_uniforms(FrameId{seed, 2, f}, u);
    for (std::size_t s = 0; s < block; ++s) {
      labels[s] = static_cast<std::uint32_t>(u[s] * static_cast<double>(c.size()));
      const auto x = c.point(labels[s]);
      in_phase[s] = x.real() + sigma * z[2 * s];
      if (c.complex()) quadrature[s] = x.imag() + sigma * z[2 * s + 1];
    }
    demap(c, Demapper::max_log, in_phase, quadrature, {}, variance, llr);
    for (std::size_t s = 0; s < block; ++s) {
      bool wrong = false;
      for (unsigned b = 0; b < c.bits(); ++b) {
        const unsigned sent = (labels[s] >> (c.bits() - 1 - b)) & 1;
        const unsigned got = llr[s * c.bits() + b] < 0 ? 1 : 0;
        counts.bit_errors += sent != got;
        wrong = wrong || sent != got;
      }
      counts.symbol_errors += wrong;
    }
    counts.symbols += block;
    counts.bits += block * c.bits();
  }
  return counts;
}

// The Monte Carlo count is within 5 binomial standard deviations of the expected number.
void check_rate(std::uint64_t errors, std::uint64_t trials, double p) {
  const double expected = p * static_cast<double>(trials);
  const double sd = std::sqrt(expected * (1 - p));
  INFO("errors " << errors << " of " << trials << ", expected " << expected);
  CHECK(std::abs(static_cast<double>(errors) - expected) < 5 * sd);
}

}  // namespace

TEST_CASE("standard constellations: unit energy, binary-reflected Gray labels", "[modulation]") {
  for (ModulationKind kind : kStandard) {
    const Constellation c = Constellation::standard(kind);
    INFO(name_of(kind));
    CHECK(c.size() == (std::size_t{1} << c.bits()));
    double energy = 0;
    for (const auto& x : c.points()) energy += std::norm(x);
    CHECK(energy / static_cast<double>(c.size()) == Approx(1.0).epsilon(1e-14));
    // Gray: the labels of nearest neighbours differ in exactly one bit (common practice).
    double nearest = INFINITY;
    for (std::uint32_t a = 0; a < c.size(); ++a) {
      for (std::uint32_t b = a + 1; b < c.size(); ++b)
        nearest = std::min(nearest, std::abs(c.point(a) - c.point(b)));
    }
    for (std::uint32_t a = 0; a < c.size(); ++a) {
      for (std::uint32_t b = a + 1; b < c.size(); ++b) {
        if (std::abs(c.point(a) - c.point(b)) < nearest * (1 + 1e-9))
          CHECK(std::popcount(a ^ b) == 1);
      }
    }
  }
  // BPSK sends 0 as +1; 16-QAM label 0000 is the corner (+3, +3)/sqrt(10), label 1000 flips the
  // in-phase sign (first half of the label on the in-phase axis).
  CHECK(Constellation::standard(ModulationKind::bpsk).point(0) == std::complex<double>(1, 0));
  const Constellation q16 = Constellation::standard(ModulationKind::qam16);
  CHECK(q16.point(0).real() == Approx(3 / std::sqrt(10.0)));
  CHECK(q16.point(0).imag() == Approx(3 / std::sqrt(10.0)));
  CHECK(q16.point(0b1000).real() == Approx(-3 / std::sqrt(10.0)));
  CHECK(q16.point(0b0001).imag() == Approx(1 / std::sqrt(10.0)));
  CHECK(q16.table().find("0000  0.94868329805051") != std::string::npos);
  // The table is a constellation file giving back the same points (to rounding: reading scales
  // to unit energy again).
  for (ModulationKind kind : kStandard) {
    const Constellation c = Constellation::standard(kind);
    const Constellation back = Constellation::parse(c.table(), "table");
    for (std::uint32_t label = 0; label < c.size(); ++label)
      CHECK(std::abs(back.point(label) - c.point(label)) < 1e-15);
  }
}

TEST_CASE("custom constellation files: scaled to unit energy, errors name file and line",
          "[modulation]") {
  const Constellation psk = eight_psk();
  CHECK(psk.bits() == 3);
  CHECK(psk.complex());
  CHECK(psk.scale() == Approx(0.5));
  CHECK(std::abs(psk.point(0b011)) == Approx(1.0));
  CHECK_THROWS_WITH(Constellation::parse("0 1\n1 -1\n10 0\n", "c.txt"),
                    Catch::Contains("c.txt:3: label '10' has 2 bits"));
  CHECK_THROWS_WITH(Constellation::parse("0 1\n0 -1\n", "c.txt"),
                    Catch::Contains("label 0 appears twice"));
  CHECK_THROWS_WITH(Constellation::parse("0 1 0\n1 1 0\n", "c.txt"),
                    Catch::Contains("share a point"));
  CHECK_THROWS_WITH(Constellation::parse("00 1\n01 2\n10 nan\n", "c.txt"),
                    Catch::Contains("c.txt:3: coordinates must be finite"));
  CHECK_THROWS_WITH(Constellation::parse("00 1\n01 2\n", "c.txt"),
                    Catch::Contains("2 points for 2-bit labels"));
}

TEST_CASE("settings text: modulations and interleavers by name", "[modulation]") {
  CHECK(parse_text<Modulation>("64qam") == Modulation{ModulationKind::qam64, {}});
  CHECK(parse_text<Modulation>("my.points") == Modulation{ModulationKind::custom, "my.points"});
  CHECK(SettingText<Modulation>::format({ModulationKind::pam8, {}}) == "8pam");
  CHECK(parse_text<Interleaver>("random:7") == Interleaver{Interleaver::random, 7, 0, 0});
  CHECK(parse_text<Interleaver>("block:3x4") == Interleaver{Interleaver::block, 0, 3, 4});
  CHECK(SettingText<Interleaver>::format({Interleaver::block, 0, 3, 4}) == "block:3x4");
  CHECK_THROWS_WITH(parse_text<Interleaver>("block:3"), Catch::Contains("interleaver"));
  CHECK(name_of(Demapper::max_log) == "max-log");
}

TEST_CASE("interleavers: a block is written by rows and read by columns; random is a permutation",
          "[modulation]") {
  // 2 x 3 block: written 0 1 2 / 3 4 5, read by columns 0 3 1 4 2 5 (common practice).
  CHECK(interleaver_order({Interleaver::block, 0, 2, 3}, 6) ==
        std::vector<std::uint32_t>{0, 3, 1, 4, 2, 5});
  CHECK_THROWS_WITH(interleaver_order({Interleaver::block, 0, 2, 3}, 7),
                    Catch::Contains("rows x cols must equal the sent bits"));
  auto order = interleaver_order({Interleaver::random, 11, 0, 0}, 1000);
  CHECK(order != interleaver_order({Interleaver::random, 12, 0, 0}, 1000));
  CHECK(order == interleaver_order({Interleaver::random, 11, 0, 0}, 1000));
  std::sort(order.begin(), order.end());
  for (std::uint32_t i = 0; i < 1000; ++i) CHECK(order[i] == i);
}

TEST_CASE("exact LLRs equal a brute-force long-double computation at random points",
          "[modulation]") {
  // The demapper works in single precision: each metric (2 a y.x - a^2 |x|^2) / 2 sigma^2 is
  // rounded to a float, so an LLR is exact to about 1e-7 of the largest metric magnitude, and
  // saturates near +-80 (a term below e^-80 of the largest is clamped there).
  std::vector<Constellation> all;
  for (ModulationKind kind : kStandard) all.push_back(Constellation::standard(kind));
  all.push_back(eight_psk());
  std::vector<double> u(4000);
  frame_uniforms(FrameId{5, 0, 0}, u);
  std::size_t next = 0, checked = 0, close = 0;
  auto uniform = [&] { return u[next++ % u.size()]; };
  for (const Constellation& c : all) {
    // 300 symbols: the received point anywhere around the constellation, the amplitude in
    // [0.2, 2], the noise variance from 0.01 to 4 (LLRs from tiny to several hundred).
    const std::size_t count = 300;
    std::vector<double> in_phase(count), quadrature(c.complex() ? count : 0), amplitude(count),
        llr(count * c.bits());
    const double variance = 0.01 * std::pow(400.0, uniform());
    for (std::size_t s = 0; s < count; ++s) {
      in_phase[s] = 3 * (2 * uniform() - 1);
      if (c.complex()) quadrature[s] = 3 * (2 * uniform() - 1);
      amplitude[s] = 0.2 + 1.8 * uniform();
    }
    demap(c, Demapper::exact, in_phase, quadrature, amplitude, variance, llr);
    for (std::size_t s = 0; s < count; ++s) {
      long double scale = 0;
      const auto expected = brute_force_llr(c, {in_phase[s], c.complex() ? quadrature[s] : 0.0},
                                            amplitude[s], variance, &scale);
      for (unsigned b = 0; b < c.bits(); ++b) {
        const double want = static_cast<double>(expected[b]), got = llr[s * c.bits() + b];
        INFO(c.size() << " points, symbol " << s << " bit " << b << " variance " << variance
                      << " largest metric " << static_cast<double>(scale));
        if (std::abs(want) < 70) {
          CHECK(std::abs(got - want) <= 1e-6 * (1 + static_cast<double>(scale)));
          ++close;
        } else {  // beyond the clamp: the sign, and at least the clamp's size
          CHECK(got * want > 0);
          CHECK(std::abs(got) > 70);
        }
        ++checked;
      }
    }
  }
  CHECK(close > checked / 2);  // mostly below the clamp: not vacuous
}

TEST_CASE("max-log and exact LLRs agree at high SNR", "[modulation]") {
  // Common practice: the max-log LLR differs from the exact one by at most log(M/2) (each sum
  // holds M/2 terms), and at high SNR by the far points' terms only, which vanish against |L|.
  for (ModulationKind kind : {ModulationKind::qam16, ModulationKind::qam64, ModulationKind::pam8}) {
    const Constellation c = Constellation::standard(kind);
    const double half_spacing = c.pam_levels()[0] - c.pam_levels()[1];
    const double variance = half_spacing * half_spacing / 40;  // 16-QAM: Es/N0 = 29 dB
    std::vector<double> z(2 * 500);
    frame_gaussians(FrameId{9, 0, static_cast<std::uint64_t>(kind)}, z);
    std::vector<double> in_phase(500), quadrature(c.complex() ? 500 : 0);
    for (std::size_t s = 0; s < 500; ++s) {
      const auto x = c.point(static_cast<std::uint32_t>(s % c.size()));
      in_phase[s] = x.real() + std::sqrt(variance) * z[2 * s];
      if (c.complex()) quadrature[s] = x.imag() + std::sqrt(variance) * z[2 * s + 1];
    }
    std::vector<double> exact(500 * c.bits()), max_log(500 * c.bits());
    demap(c, Demapper::exact, in_phase, quadrature, {}, variance, exact);
    demap(c, Demapper::max_log, in_phase, quadrature, {}, variance, max_log);
    std::size_t compared = 0;
    double gaps = 0, magnitudes = 0;
    for (std::size_t i = 0; i < exact.size(); ++i) {
      if (std::abs(max_log[i]) >= 70) continue;  // the exact LLR saturates near 80
      ++compared;
      const double gap = std::abs(exact[i] - max_log[i]);
      CHECK(gap <= std::log(static_cast<double>(c.size()) / 2) + 1e-9);
      CHECK(exact[i] * max_log[i] >= 0);
      gaps += gap;
      magnitudes += std::abs(exact[i]);
    }
    CHECK(compared > exact.size() / 4);
    INFO(name_of(kind) << ": total gap " << gaps << ", total |L| " << magnitudes);
    CHECK(gaps < 1e-4 * magnitudes);
  }
}

TEST_CASE("uncoded Gray 16- and 64-QAM bit error rates match Cho and Yoon's closed form",
          "[modulation]") {
  // K. Cho and D. Yoon, "On the general BER expression of one- and two-dimensional amplitude
  // modulations", IEEE Trans. Commun. 50(7), 2002, eq. (14): for square M-QAM with Gray labels,
  // P_b = (1 / log2 sqrt M) sum_{k=1}^{log2 sqrt M} P_b(k),
  // P_b(k) = (1 / sqrt M) sum_{i=0}^{(1 - 2^-k) sqrt M - 1} (-1)^floor(i 2^(k-1) / sqrt M)
  //          (2^(k-1) - floor(i 2^(k-1) / sqrt M + 1/2)) erfc((2i + 1) sqrt(3 log2(M) Eb/N0 /
  //          (2(M-1)))).
  auto cho_yoon = [](double m, double ebn0_db) {
    const double root = std::sqrt(m), axis_bits = std::log2(root);
    const double g = std::pow(10.0, ebn0_db / 10);
    const double a = std::sqrt(3 * std::log2(m) * g / (2 * (m - 1)));
    double total = 0;
    for (int k = 1; k <= static_cast<int>(axis_bits); ++k) {
      const double w = std::pow(2.0, k - 1);
      double pk = 0;
      for (int i = 0; i <= static_cast<int>((1 - std::pow(2.0, -k)) * root) - 1; ++i) {
        const double f = std::floor(i * w / root);
        pk += (static_cast<long>(f) % 2 ? -1 : 1) * (w - std::floor(i * w / root + 0.5)) *
              std::erfc((2 * i + 1) * a);
      }
      total += pk / root;
    }
    return total / axis_bits;
  };
  // The known 16-QAM special case, 3/8 erfc(a) + 1/4 erfc(3a) - 1/8 erfc(5a), a = sqrt(0.4 Eb/N0).
  const double a = std::sqrt(0.4 * std::pow(10.0, 0.8));
  CHECK(cho_yoon(16, 8) ==
        Approx(0.375 * std::erfc(a) + 0.25 * std::erfc(3 * a) - 0.125 * std::erfc(5 * a))
            .epsilon(1e-13));
  for (auto [kind, m, ebn0] :
       {std::tuple{ModulationKind::qam16, 16.0, 6.0}, std::tuple{ModulationKind::qam16, 16.0, 9.0},
        std::tuple{ModulationKind::qam64, 64.0, 10.0},
        std::tuple{ModulationKind::qam256, 256.0, 14.0}}) {
    const Constellation c = Constellation::standard(kind);
    const double esn0 = ebn0 + 10 * std::log10(c.bits());
    const Counts counts = uncoded(c, esn0, 200000, 17);
    INFO(m << "-QAM at Eb/N0 " << ebn0 << " dB");
    check_rate(counts.bit_errors, counts.bits, cho_yoon(m, ebn0));
  }
}

TEST_CASE("uncoded M-QAM symbol error rates match Proakis", "[modulation]") {
  // Proakis, Digital Communications (4th ed., sec. 5.2.9): P_M = 1 - (1 - P_sqrtM)^2 with
  // P_sqrtM = 2 (1 - 1/sqrt M) Q(sqrt(3 Es/N0 / (M - 1))), exact for square QAM on AWGN.
  for (auto [kind, m, esn0] :
       {std::tuple{ModulationKind::qpsk, 4.0, 7.0}, std::tuple{ModulationKind::qam16, 16.0, 15.0},
        std::tuple{ModulationKind::qam64, 64.0, 20.0},
        std::tuple{ModulationKind::qam256, 256.0, 26.0}}) {
    const Constellation c = Constellation::standard(kind);
    const double es = std::pow(10.0, esn0 / 10);
    const double p_axis = 2 * (1 - 1 / std::sqrt(m)) * q_function(std::sqrt(3 * es / (m - 1)));
    const double expected = 1 - (1 - p_axis) * (1 - p_axis);
    const Counts counts = uncoded(c, esn0, 200000, 23);
    INFO(m << "-QAM at Es/N0 " << esn0 << " dB");
    check_rate(counts.symbol_errors, counts.symbols, expected);
  }
}

TEST_CASE("links: BPSK demapping is 2y/sigma^2, fading blocks, punctured and shortened positions",
          "[modulation]") {
  // BPSK through the demapper gives the binary channel's LLRs bit for bit (common practice:
  // L = 2 a y / sigma^2).
  ChannelSpec spec;
  spec.interleaver = parse_text<Interleaver>("block:2x3");
  PunctureMap map = PunctureMap::all_sent(8);
  map.state[1] = PunctureMap::punctured;
  map.state[4] = PunctureMap::shortened;
  const Link link(spec, map);
  CHECK_FALSE(link.binary());
  CHECK(link.sent() == 6);
  CHECK(link.symbols() == 6);
  CHECK(link.snr_rate(4) == Approx(3.0 / 6));
  const std::vector<double> y{0.3, -1.2, 0.8, 2.0, -0.1, 0.5};
  std::vector<double> llr(8);
  LinkBuffers buffers;
  link.demodulate(y, {}, {}, 0.7, llr, buffers);
  // Sent positions 0 2 3 5 6 7 are sent bits 0..5; the 2 x 3 block reads slots as bits
  // 0 3 1 4 2 5: symbol j carries sent bit order[j].
  const std::uint32_t sent_position[] = {0, 2, 3, 5, 6, 7};
  const std::uint32_t order[] = {0, 3, 1, 4, 2, 5};
  for (std::size_t j = 0; j < 6; ++j) CHECK(llr[sent_position[order[j]]] == 2 / 0.7 * y[j]);
  CHECK(llr[1] == 0);
  CHECK(llr[4] == std::numeric_limits<double>::infinity());
  // The symbols sent: the same positions in the same order.
  const std::vector<std::uint8_t> word{1, 0, 0, 1, 0, 1, 1, 0};
  std::vector<std::complex<double>> symbols(6);
  link.modulate(word, symbols);
  for (std::size_t j = 0; j < 6; ++j)
    CHECK(symbols[j].real() == (word[sent_position[order[j]]] ? -1.0 : 1.0));

  // Block fading: one amplitude per 3 symbols, from the two Gaussians after the symbols' noise.
  ChannelSpec faded;
  faded.kind = ChannelKind::rayleigh;
  faded.fading_block = 3;
  faded.modulation = parse_text<Modulation>("16qam");
  const Link qam(faded, PunctureMap::all_sent(40));
  CHECK(qam.symbols() == 10);
  CHECK(qam.noise_values() == 2 * 10 + 2 * 4);
  std::vector<double> noise(qam.noise_values());
  frame_gaussians(FrameId{3, 0, 0}, noise);
  qam.receive(ChannelPoint::rayleigh(0.1), std::vector<std::uint8_t>(40, 0), noise, buffers);
  for (std::size_t s = 0; s < 10; ++s) {
    const double* g = noise.data() + 20 + 2 * (s / 3);
    CHECK(buffers.amplitude[s] == std::sqrt((g[0] * g[0] + g[1] * g[1]) / 2));
    // (Approx: this test may be compiled with fused multiply-adds, the library is not.)
    CHECK(buffers.in_phase[s] ==
          Approx(buffers.amplitude[s] * qam.constellation().point(0).real() + 0.1 * noise[2 * s])
              .epsilon(1e-15));
  }
}
