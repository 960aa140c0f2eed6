#include <catch2/catch.hpp>

#include "tannery/error.hpp"
#include "tannery/sim/mpi_run.hpp"

using namespace tannery;

// What a rank sends rank 0 must come back field for field (rank 0 adds it to the in-order
// totals as if it had computed the chunk itself).
TEST_CASE("chunk results survive the trip between ranks", "[mpi]") {
  ChunkResult a;
  a.counts.frames = 64;
  a.counts.frame_errors = 2;
  a.counts.bit_errors = 17;
  a.counts.bits = 64 * 324;
  a.counts.coded_bit_errors = 40;
  a.counts.coded_bits = 64 * 648;
  a.counts.undetected_errors = 1;
  a.counts.iterations = 700;
  a.counts.bit_error_squares = 145.0;
  a.counts.iteration_histogram = {0, 0, 3, 50, 0, 11};
  a.counts.failed_frames = {130, 171};
  a.counts.failure_classes[StructureClass{3, 0}] = FailureClassCount{1, {{4, 9, 600}}, 1};
  a.counts.failure_classes[StructureClass{8, 2}] = FailureClassCount{1, {}};
  a.counts.larger_failures = 0;
  a.kept.push_back(KeptFrame{2, 130, {1.5f, -0.25f, 3.0f}});
  ChunkResult b;
  b.counts.frames = 10;
  b.counts.iteration_histogram = {0, 10};
  std::vector<char> message;
  mpi::append_chunk(message, 2, 5, a);
  mpi::append_chunk(message, 3, 0, b);
  const auto back = mpi::parse_chunks(message.data(), message.size());
  REQUIRE(back.size() == 2);
  CHECK(back[0].point == 2);
  CHECK(back[0].chunk == 5);
  const PointResult& c = back[0].result.counts;
  CHECK(c.frames == 64);
  CHECK(c.frame_errors == 2);
  CHECK(c.bit_errors == 17);
  CHECK(c.bits == 64 * 324);
  CHECK(c.coded_bit_errors == 40);
  CHECK(c.coded_bits == 64 * 648);
  CHECK(c.undetected_errors == 1);
  CHECK(c.iterations == 700);
  CHECK(c.bit_error_squares == 145.0);
  CHECK(c.iteration_histogram == a.counts.iteration_histogram);
  CHECK(c.failed_frames == a.counts.failed_frames);
  CHECK(c.failure_classes == a.counts.failure_classes);
  CHECK(c.larger_failures == a.counts.larger_failures);
  REQUIRE(back[0].result.kept.size() == 1);
  CHECK(back[0].result.kept[0].point == 2);
  CHECK(back[0].result.kept[0].frame == 130);
  CHECK(back[0].result.kept[0].llr == a.kept[0].llr);
  CHECK(back[1].point == 3);
  CHECK(back[1].result.counts.iteration_histogram == b.counts.iteration_histogram);
  // A truncated message is an error, never a read past its end.
  for (std::size_t cut : {std::size_t{1}, std::size_t{20}, message.size() - 1})
    CHECK_THROWS_AS(mpi::parse_chunks(message.data(), cut), Error);
}
