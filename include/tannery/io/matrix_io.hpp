// Reading and writing parity-check matrices. Formats (specified in the README):
//   tannery  the project's sparse text format: "tannery-h 1 n=N m=M", then one line per check
//   alist    the sparse adjacency-list exchange format (1-based, zero padding accepted)
//   mtx      Matrix Market coordinate files (pattern, integer or real; 1-based)
//   qc       quasi-cyclic base table of circulant shifts, -1 or '-' for a zero block, "Z = ..."
//   dense    rows of 0/1, separated or compact
// Every reader names file and line in its errors and refuses sizes over the limits below
// before allocating anything for them.
#pragma once

#include <cstddef>
#include <iosfwd>
#include <optional>
#include <string>
#include <string_view>

#include "tannery/code/code.hpp"
#include "tannery/names.hpp"

namespace tannery {

enum class MatrixFormat { tannery, alist, mtx, qc, dense };
template <>
struct Names<MatrixFormat> {
  static constexpr std::string_view setting = "format";
  static constexpr std::pair<MatrixFormat, std::string_view> table[] = {
      {MatrixFormat::tannery, "tannery"},
      {MatrixFormat::alist, "alist"},
      {MatrixFormat::mtx, "mtx"},
      {MatrixFormat::qc, "qc"},
      {MatrixFormat::dense, "dense"}};
};

inline constexpr std::size_t kMaxCodeDimension = 10'000'000;  // n and m
inline constexpr std::size_t kMaxFileBytes = std::size_t{1} << 30;

// By file extension (.tanner, .alist, .mtx, .qc, .dense); empty when unknown.
std::optional<MatrixFormat> format_from_extension(std::string_view path);

struct ReadOptions {
  std::optional<MatrixFormat> format;  // detect from content when empty
  std::optional<std::size_t> lifting;  // Z for base tables that do not state it
};

// Content-based detection; throws Error (naming source) when nothing fits.
MatrixFormat detect_format(std::string_view text, const std::string& source);
Code parse_code(std::string_view text, const std::string& source, const ReadOptions& options = {});
// Reads a file ("-" = standard input).
Code read_code_file(const std::string& path, const ReadOptions& options = {});

void write_code(const Code& code, MatrixFormat format, std::ostream& out);
// Writes atomically (temporary name, then rename); "-" = standard output.
void write_code_file(const Code& code, MatrixFormat format, const std::string& path);

// Reads a whole file, refusing more than max_bytes; "-" = standard input.
std::string read_text_file(const std::string& path, std::size_t max_bytes = kMaxFileBytes);

}  // namespace tannery
