// Searching a code for the small structures behind its error floor: low-weight codewords by the
// error-impulse method (Berrou & Vaton 2002; Hu, Fossorier & Eleftheriou 2004; pairs of impulses
// as in Declercq & Fossorier 2008) and trapping sets — (a, b) structures the decoder stops in —
// seeded by the impulse outcomes (a failure's wrong bits, or the impulse's own bits when the
// decoder corrected it at every amplitude) and by failures kept from simulations, grown and
// trimmed by a local beam search.
//
//   FloorSearchSettings s;  // sum-product, the default amplitude ladder
//   FloorSearchResult r = floor_search(load_code("regular-3-6-n2016"), s);
//   r.smallest_codeword_weight();  // an upper bound on d_min (found, not proven minimal)
//
// Every impulse is decoded from the noiseless all-zero word: each bit's channel LLR is the
// background (times 1 ± dither, a fixed pattern drawn from the seed so ties break), the impulse
// bits' LLR is background * (1 - A) for amplitude A in signal units (A = 2: the bit received as
// a clean 1). For each impulse the smallest amplitude of the ladder at which decoding fails is
// found by bisection (about log2 of the ladder's length decodes, taking failure to persist at
// larger amplitudes, as the method does); the wrong bits there (undecided included) are a
// codeword when the decoder converged to it, else a trapping-set candidate. For a quasi-cyclic code
// every structure stands for its orbit under the code's cyclic shifts (all blocks shifted alike),
// counted in its multiplicity, and impulses are placed at one position per block column only.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <vector>

#include "tannery/code/analysis.hpp"
#include "tannery/code/code.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/decode/decoder.hpp"

namespace tannery {

struct FloorSearchSettings {
  DecoderSettings decoder;  // sum-product, flooding, 50 iterations by default
  double background = 2.0;  // channel LLR of every bit of the all-zero word (BPSK, sigma = 1)
  double dither = 0.05;     // relative spread of the background, from the seed
  std::vector<double> amplitudes = {2, 3, 4, 5, 6, 7, 8, 10, 12, 14, 16, 20, 24, 32};  // increasing
  // 1: single impulses; 2: also pairs of positions that share a check (every codeword of
  // weight >= 2 holds such a pair); 0: pairs when n <= 4096.
  int impulse_order = 0;
  std::uint32_t max_size = 40;  // larger failures are counted, not classified
  // Local (beam) search from each trapping-set seed: steps (0: keep the seeds only) and the
  // sets kept per step.
  unsigned search_steps = 6;
  std::size_t search_beam = 16;
  std::vector<std::vector<std::uint32_t>> seeds;  // extra trapping-set seeds (simulation failures)
  std::uint64_t seed = 1;
  unsigned threads = 0;  // 0: one per core
};

// Where a structure was first found.
enum class StructureOrigin { impulse, pair, simulation, local_search };
template <>
struct Names<StructureOrigin> {
  static constexpr std::string_view setting = "origin";
  static constexpr std::pair<StructureOrigin, std::string_view> table[] = {
      {StructureOrigin::impulse, "impulse"},
      {StructureOrigin::pair, "pair"},
      {StructureOrigin::simulation, "simulation"},
      {StructureOrigin::local_search, "local-search"}};
};

struct FoundStructure {
  std::vector<std::uint32_t> variables;  // increasing; the orbit's smallest representative
  StructureShape shape;
  std::uint64_t multiplicity = 1;  // distinct sets in its orbit (1 without quasi-cyclic structure)
  StructureOrigin origin = StructureOrigin::impulse;
  double amplitude = 0;  // impulse amplitude that found it (0: not found by an impulse)
};

struct FloorSearchResult {
  std::size_t n = 0;
  std::size_t lifting = 0;  // Z of the quasi-cyclic orbits used, 0 for none
  int impulse_order = 1;
  std::uint64_t impulses = 0, decodes = 0;
  std::uint64_t larger_failures = 0;  // impulses whose failure had more than max_size wrong bits
  std::uint64_t unbroken = 0;         // impulses that decoded correctly at every amplitude
  double seconds = 0;
  // Codewords (b = 0) and other structures, by (a, b) then variables.
  std::vector<FoundStructure> codewords, trapping_sets;

  // Smallest codeword weight found: an upper bound on d_min (0 when none was found).
  std::size_t smallest_codeword_weight() const;
  // Codewords, then trapping sets.
  std::vector<FoundStructure> all() const;
};

// The cyclic shifts of a quasi-cyclic code: shifting every block column's positions by t
// (mod Z) together with every block row's checks maps H onto itself, so a structure and its
// shifts are alike for any decoder that treats positions alike (every flooding decoder; layered
// ones whose layers are the block rows).
class CyclicOrbits {
 public:
  explicit CyclicOrbits(std::size_t lifting) : z_(lifting) {}
  std::size_t lifting() const noexcept { return z_; }
  // The set shifted by t, sorted.
  std::vector<std::uint32_t> shifted(std::span<const std::uint32_t> set, std::size_t t) const;
  // The orbit's smallest member (lexicographically, sorted) and the orbit's size.
  std::pair<std::vector<std::uint32_t>, std::uint64_t> canonical(
      std::span<const std::uint32_t> set) const;

 private:
  std::size_t z_;
};

// done of total work items (impulses, then seeds); called from the calling thread.
using FloorProgress =
    std::function<void(std::uint64_t done, std::uint64_t total, const char* stage)>;

FloorSearchResult floor_search(std::shared_ptr<const Code> code,
                               const FloorSearchSettings& settings,
                               const FloorProgress& progress = {});

// What a floor search with single impulses finds on a code: the smallest codeword weight (0:
// none found) and the smallest absorbing set's class, (a, b) lexicographically (a = UINT32_MAX:
// none), with the number of such sets.
struct FloorScore {
  std::size_t codeword = 0;
  StructureClass smallest{UINT32_MAX, UINT32_MAX};
  std::uint64_t count = 0;
};
FloorScore floor_score(const Code& code);
// Of a lifting's candidates (LiftOptions::candidates; the fewest closed cycle conditions first),
// the one whose floor score is best — no codeword found, else the largest smallest codeword;
// then the largest smallest absorbing set (a, then b); then the fewest of them; ties keep the
// earlier candidate — becomes the lifting (base, closed, girth_at_least). Deterministic.
struct LiftingChoice {
  std::size_t chosen = 0;
  std::vector<FloorScore> scores;  // per candidate
};
LiftingChoice choose_lifting_by_floor(Lifting& lift);

}  // namespace tannery
