#include <catch2/catch.hpp>
#include <cmath>
#include <string>

#include "sample_run.hpp"
#include "tannery/error.hpp"
#include "tannery/report/plot.hpp"

using namespace tannery;

namespace {

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (auto at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
  return n;
}

}  // namespace

TEST_CASE("the plot is an SVG document with the curves and references", "[report]") {
  const std::string svg = plot_svg({PlotRun{"oms", test::sample_run()}}, PlotOptions{});
  CHECK(svg.rfind("<?xml", 0) == 0);
  CHECK(svg.find("<svg xmlns=\"http://www.w3.org/2000/svg\"") != std::string::npos);
  CHECK(svg.find("uncoded BPSK BER") != std::string::npos);
  CHECK(svg.find("Shannon limit") != std::string::npos);
  CHECK(svg.find("FER oms") != std::string::npos);
  CHECK(svg.substr(svg.size() - 7) == "</svg>\n");
}

TEST_CASE("plots overlay runs of one channel and refuse others", "[plot]") {
  RunRecord a = test::sample_run(), b = test::sample_run();
  b.points[0].parameter = 2.0;
  b.points[0].frame_errors = 3;
  PlotOptions fer;
  fer.ber = false;
  fer.normal_approximation = true;
  const std::string svg = plot_svg({PlotRun{"first", a}, PlotRun{"second", b}}, fer);
  CHECK(count(svg, "FER first") == 1);
  CHECK(count(svg, "FER second") == 1);
  CHECK(count(svg, "BER first") == 0);
  // The finite-length limit of the code (n = 8, k = 4) is drawn beside the capacity limit.
  CHECK(count(svg, "normal approximation FER, n = 8, k = 4") == 1);
  // Punctured: the bits sent (6 of 8, rate 4/6) are the block; a file that does not record them
  // gets no normal approximation rather than the wrong one.
  RunRecord punctured = a;
  punctured.config.channel.puncture = "map.txt";
  punctured.sent_bits = 6;
  punctured.effective_rate = 4.0 / 6;
  CHECK(count(plot_svg({PlotRun{"p", punctured}}, fer), "normal approximation FER, n = 6, k = 4") ==
        1);
  const FerCrossing sent = fer_crossing(punctured, 0.5);
  CHECK(sent.sent_n == 6);
  CHECK(sent.sent_k == 4);
  punctured.sent_bits = 0;
  CHECK(count(plot_svg({PlotRun{"p", punctured}}, fer), "normal approximation") == 0);
  CHECK(std::isnan(fer_crossing(punctured, 0.5).normal_approximation));
  CHECK(run_label(a).find("offset-min-sum") != std::string::npos);
  // A Rayleigh 16-QAM run shares the Eb/N0 axis; the limit drawn is the first run's.
  RunRecord faded = b;
  faded.config.channel.kind = ChannelKind::rayleigh;
  faded.config.channel.modulation = parse_text<Modulation>("16qam");
  faded.rate_for_snr = 2.0;
  CHECK(count(plot_svg({PlotRun{"a", a}, PlotRun{"faded", faded}}, fer), "FER faded") == 1);
  CHECK(count(plot_svg({PlotRun{"faded", faded}}, fer),
              "16qam BICM limit (Rayleigh, ergodic), 2.000 bit/symbol (4.11)") == 1);
  b.config.channel.kind = ChannelKind::bsc;
  b.config.channel.snr_offset_db = 0;
  CHECK_THROWS_AS(plot_svg({PlotRun{"a", a}, PlotRun{"b", b}}, fer), Error);
  CHECK_THROWS_WITH(plot_svg({}, fer), Catch::Contains("no results"));
}

TEST_CASE("failure classes label the FER points when asked", "[plot]") {
  // The sample's first point: 12 failures, 5 of class (2, 4), 1 codeword (3, 0), 6 larger.
  const PlotRun run{"demo", test::sample_run()};
  PlotOptions options;
  CHECK(plot_svg({run}, options).find("(2, 4)") == std::string::npos);
  options.failure_classes = true;
  const std::string svg = plot_svg({run}, options);
  CHECK(svg.find(">(2, 4) 42%</text>") != std::string::npos);
  CHECK(svg.find("(3, 0) cw") == std::string::npos);  // not the most frequent
}
