// Constructions of parity-check matrices, deterministic for a given seed.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <map>
#include <string>
#include <string_view>
#include <vector>

#include "tannery/code/code.hpp"

namespace tannery {

// Random (dv, dc)-regular code of length n (Gallager's ensemble, built by matching edge
// sockets at random) with every 4-cycle and double edge removed by re-wiring edge pairs.
// Requires n * dv divisible by dc. Throws Error when the cycles cannot be removed.
Code construct_regular(std::size_t n, std::size_t dv, std::size_t dc, std::uint64_t seed);

// Hamming code with r parity bits: n = 2^r - 1, column j (1-based) is j in binary. r in [2, 20].
Code construct_hamming(std::size_t r);
// Repetition code of length n: checks x0 + xi = 0.
Code construct_repetition(std::size_t n);
// Single parity-check code of length n.
Code construct_single_parity(std::size_t n);

// Lifts a base graph (0/1 pattern, rows x cols, row-major) into a quasi-cyclic code with lifting
// size z. A cycle of 2l blocks r0 c0 r1 c1 ... closes in the lifted graph exactly when its shifts
// satisfy s(r0,c0) - s(r1,c0) + s(r1,c1) - ... = 0 mod Z (Fossorier, IEEE Trans. IT 2004); every
// simple block cycle of length 4, 6 and 8 (and every 4-cycle walked twice, length 8) is listed
// and the shifts are chosen to satisfy none of length 4 (required), then as few as possible of
// length 6, then of length 8. First a greedy pass (each entry in column order takes the first
// shift from a random offset that closes no 4-cycle with those already chosen and fewest
// 6-cycles), then `passes` rounds of coordinate descent (each entry in turn takes the shift
// closing the fewest conditions, weighted 4 >> 6 >> 8, given all others) from the greedy result
// and from `restarts` random starts; the best is kept. Deterministic for a seed. Throws Error
// when no shift avoids 4-cycles.
struct LiftOptions {
  int passes = 20;   // 0: the greedy pass alone
  int restarts = 4;  // random starts besides the greedy one
  // Pattern entries (index i * cols + j) whose shift is fixed, and pairs of entries that must
  // share their shift (the conditions of an encodable parity part).
  std::vector<std::pair<std::size_t, std::int64_t>> fixed;
  std::vector<std::pair<std::size_t, std::size_t>> equal;
  std::vector<std::size_t> units;  // entries whose shift must be coprime to Z
  // false: block 4-cycles that fixed shifts close are kept (an intermediate step of a multi-step
  // lifting); true: any 4-cycle left throws.
  bool require_no_four_cycles = true;
  // Keep up to this many of the starts' results, distinct, best first (Lifting::candidates), for
  // a choice by other criteria (construct lift --trapping-sets); 0: none.
  std::size_t candidates = 0;
};
struct Lifting {
  QuasiCyclic base;
  std::size_t girth_at_least = 6;  // 8 when no block 6-cycle condition holds either
  // Block cycle conditions the shifts satisfy, by cycle length 4, 6, 8: each stands for Z cycles
  // of the lifted graph (fewer when its shifts repeat with a period).
  std::array<std::size_t, 3> closed{};
  // LiftOptions::candidates > 0: the distinct results of the starts by weighted closed
  // conditions, best (= base) first, and those counts (4-, 6-, 8-cycle conditions) for each.
  std::vector<QuasiCyclic> candidates;
  std::vector<std::array<std::size_t, 3>> candidate_closed;
};
Lifting lift_base_graph(std::size_t rows, std::size_t cols,
                        const std::vector<std::uint8_t>& pattern, std::size_t z, std::uint64_t seed,
                        const LiftOptions& options = {});

// The parity part of an encodable pattern, one system per copy: M >= 4 rows r[0..M-1] and columns
// c[0..M-1], c[0] the weight-3 column (rows r[0], r[M-2], r[M-1]) and c[k] in rows r[k-1], r[k]
// (a dual diagonal). Lifted with shift 0 on the dual diagonal and on c[0] in rows r[0] and
// r[M-2], and a shift s coprime to Z on c[0] in row r[M-1], such a system encodes by peeling
// with one freed bit: from a known bit x of c[0] the checks down the staircase determine one bit
// of every other column and finally bit x + s of c[0], so the chain visits all of c[0]; the one
// check left (closing the chain) is the system's only dense equation. The block cycle through
// r[0] .. r[M-2] and c[0] closes (length 2(M-1)), a price of the structure.
struct ParitySystem {
  std::vector<std::size_t> rows, cols;
};
// The systems after each node became `factor` copies, copy a of node x being x * factor + a,
// with the parity entries lifted by identity blocks (shift 0), as split_multiplicities does and
// as parity_lift_options asks of an intermediate step.
std::vector<ParitySystem> expand_parity_systems(const std::vector<ParitySystem>& systems,
                                                std::size_t factor);
// The conditions above for the lifting of a pattern with `cols` columns: final: shifts as above;
// not final (a step before the last): every parity shift 0, so the next step sees the systems.
LiftOptions parity_lift_options(const std::vector<ParitySystem>& systems, std::size_t cols,
                                bool final);

// Removes parallel edges from a protograph given as a multiplicity table (rows x cols, entries
// >= 0): each node is copied t times (t = the largest entry) and an entry k becomes k cyclic
// offsets 0..k-1 among the t copies, so every copy keeps its degree and no block holds two
// edges. Returns the 0/1 pattern, (rows t) x (cols t). t = 1 returns the table itself.
std::vector<std::uint8_t> split_multiplicities(std::size_t rows, std::size_t cols,
                                               const std::vector<std::uint8_t>& multiplicity,
                                               std::size_t t);

// A protograph: a base matrix of edge multiplicities (rows: check types, columns: variable
// types) and the variable types that are punctured (in the code but never transmitted).
struct Protograph {
  std::size_t rows = 0, cols = 0;
  std::vector<std::uint8_t> cells;     // row-major multiplicities
  std::vector<std::size_t> punctured;  // 0-based columns, increasing

  std::uint8_t at(std::size_t i, std::size_t j) const noexcept { return cells[i * cols + j]; }
  std::size_t variable_degree(std::size_t j) const noexcept;
  std::size_t check_degree(std::size_t i) const noexcept;
  std::size_t edges() const noexcept;  // sum of the multiplicities
  bool is_punctured(std::size_t j) const noexcept;
  // (cols - rows) / (cols - punctured): the rate of a lifted code whose checks are independent.
  double design_rate() const noexcept;
  // Throws Error unless every variable type has an edge, every check type has degree >= 2 and the
  // design rate is in (0, 1).
  void validate() const;
};
// A protograph from text: one line per base row, entries 0..255 separated by blanks or commas,
// '#' comments, every row as long as the first; a line "punctured C1 C2 ..." (1-based columns)
// marks punctured variable types. source names the text in errors ("file:line: ...").
Protograph parse_protograph(std::string_view text, const std::string& source);
// The text parse_protograph reads: a row per line, entries aligned, then the "punctured" line when
// there is one.
std::string protograph_text(const Protograph& p);
// Node fractions (degree -> fraction of the n variables, summing to 1) -> one degree per
// variable, lowest degrees first, counts rounded so that they add up to n.
std::vector<std::size_t> degree_sequence(const std::map<std::size_t, double>& fractions,
                                         std::size_t n);
// Progressive edge growth (Hu, Eleftheriou, Arnold, IEEE Trans. IT 2005): variables in order of
// increasing degree; each new edge goes to a check as far as possible from the variable in the
// graph built so far (outside its breadth-first neighbourhood when one is left), the check of
// lowest current degree among those, ties broken by the seed. degrees: one per variable.
Code construct_peg(const std::vector<std::size_t>& degrees, std::size_t m, std::uint64_t seed);

// Small deterministic generator for constructions (splitmix64).
class SplitMix {
 public:
  explicit SplitMix(std::uint64_t seed) : state_(seed) {}
  std::uint64_t next() noexcept {
    std::uint64_t z = (state_ += 0x9e3779b97f4a7c15ull);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
    return z ^ (z >> 31);
  }
  // Uniform in [0, bound) by Lemire's multiply-shift (bias below 2^-32 for bound < 2^32).
  std::size_t below(std::size_t bound) noexcept {
    __extension__ using u128 = unsigned __int128;
    return static_cast<std::size_t>((static_cast<u128>(next()) * bound) >> 64);
  }

 private:
  std::uint64_t state_;
};

}  // namespace tannery
