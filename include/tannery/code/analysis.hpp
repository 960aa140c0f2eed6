// Structure of a code: degree distributions, girth and short cycles, redundant rows, and for
// small dimensions the exact weight enumerator and minimum distance.
#pragma once

#include <cstddef>
#include <cstdint>
#include <map>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "tannery/code/code.hpp"
#include "tannery/code/gf2.hpp"

namespace tannery {

// Degree -> number of nodes. The edge-perspective coefficients used in density evolution are
// lambda_d = d * count_d / E (variables) and rho_d = d * count_d / E (checks).
struct DegreeProfile {
  std::map<std::size_t, std::size_t> variable;
  std::map<std::size_t, std::size_t> check;
  std::size_t edges = 0;
};
DegreeProfile degree_profile(const Code& code);

struct CycleCensus {
  std::optional<std::size_t> girth;  // length of a shortest cycle; empty when the graph is a forest
  std::uint64_t count = 0;           // number of distinct cycles of that length
};
// Exact girth by breadth-first search from every variable node, each search cut at the
// shortest cycle found so far; cycles of that length are counted by shortest-path counts.
// Roughly O(n * neighbourhood of radius girth/2).
CycleCensus cycle_census(const Code& code);

// Nodes around one shortest cycle, in order: variables as v (is_check false), checks as c.
struct CycleNode {
  bool is_check = false;
  std::uint32_t index = 0;
};
std::vector<CycleNode> shortest_cycle(const Code& code);

// Graphviz description of the Tanner graph: variables as circles, checks as squares (as factor
// graphs are drawn); the nodes and edges of highlight drawn in colour.
std::string tanner_dot(const Code& code, const std::vector<CycleNode>& highlight);

struct RowRedundancy {
  std::vector<std::size_t> empty;                             // checks with no variable
  std::vector<std::pair<std::size_t, std::size_t>> repeated;  // (first, later copy)
};
RowRedundancy row_redundancy(const Code& code);

// Number of codewords of each Hamming weight 0..n, by enumerating all 2^k codewords in Gray-code
// order (k <= max_dimension, at most 30). Empty when k is larger.
std::optional<std::vector<std::uint64_t>> weight_enumerator(const Code& code,
                                                            const Encoder& encoder,
                                                            std::size_t max_dimension = 24);
// Smallest nonzero weight with a codeword; empty when k = 0.
std::optional<std::size_t> minimum_distance(const std::vector<std::uint64_t>& enumerator);

// Everything `tannery inspect` reports about a code, computed once.
struct CodeReport {
  std::size_t n = 0, m = 0, rank = 0, k = 0, edges = 0;
  DegreeProfile degrees;
  CycleCensus cycles;
  RowRedundancy redundancy;
  std::optional<std::vector<std::uint64_t>> enumerator;  // when k <= max_dimension
  std::optional<std::size_t> distance;
  std::vector<std::uint32_t> info_positions;  // where the default encoder puts information bits
  bool systematic_first_possible = false;     // positions 0..k-1 form an information set
  std::size_t encoder_dense_checks = 0, encoder_free_bits = 0;  // see Encoder
  std::optional<QuasiCyclic> quasi_cyclic;
  double rate() const { return n ? static_cast<double>(k) / static_cast<double>(n) : 0.0; }
  double design_rate() const {
    return n ? 1.0 - static_cast<double>(m) / static_cast<double>(n) : 0.0;
  }
};
// The (a, b) class of a set of variables (the trapping-set notation of Richardson, "Error floors
// of LDPC codes", 2003): a = its size, b = the checks of odd degree in the subgraph it induces.
// b = 0: the set is the support of a nonzero codeword.
struct StructureClass {
  std::uint32_t a = 0, b = 0;
  auto operator<=>(const StructureClass&) const = default;
};

// A set's class and the shape of the subgraph it induces.
struct StructureShape {
  StructureClass cls;
  // Every variable of the set has more checks of even degree than of odd degree in the subgraph
  // (an absorbing set, Dolecek et al., "Analysis of absorbing sets and fully absorbing sets of
  // array-based LDPC codes", 2010): bit flipping cannot leave it.
  bool absorbing = false;
  bool elementary = false;                // every check of the subgraph has degree 1 or 2
  std::vector<std::uint32_t> odd_checks;  // the b checks of odd degree, increasing
};

// Classifies variable sets of one code, reusing its buffers (one per thread).
class StructureClassifier {
 public:
  explicit StructureClassifier(const Code& code);
  // variables: distinct indices below n (Error otherwise).
  StructureClass classify(std::span<const std::uint32_t> variables);
  StructureShape shape(std::span<const std::uint32_t> variables);

 private:
  // Counts the set's edges into each check (listed in touched_); Error for a bad index.
  void load(std::span<const std::uint32_t> variables);
  void clear(std::span<const std::uint32_t> variables);

  const Code& code_;
  std::vector<std::uint32_t> degree_;  // per check: the set's edges into it
  std::vector<std::uint8_t> in_set_;
  std::vector<std::uint32_t> touched_;
};

CodeReport inspect_code(const Code& code, std::size_t max_dimension = 24);
// The report as one JSON document (the schema of `tannery inspect --json`); source names the code.
std::string code_report_json(const CodeReport& report, const std::string& source);

}  // namespace tannery
