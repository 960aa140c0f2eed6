#include "tannery/io/matrix_io.hpp"

#include <fmt/format.h>
#include <unistd.h>
#include <algorithm>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <iterator>
#include <map>
#include <sstream>

#include "tannery/base/output_file.hpp"
#include "tannery/error.hpp"
#include "text_reader.hpp"

namespace tannery {

using detail::Line;
using detail::quote;
using detail::TextReader;

namespace {

constexpr std::int64_t kMaxDim = static_cast<std::int64_t>(kMaxCodeDimension);
constexpr std::int64_t kMaxLifting = 1 << 20;

// File extensions of the formats.
constexpr std::pair<MatrixFormat, std::string_view> kExtensions[] = {
    {MatrixFormat::tannery, ".tanner"}, {MatrixFormat::alist, ".alist"},
    {MatrixFormat::mtx, ".mtx"},        {MatrixFormat::qc, ".qc"},
    {MatrixFormat::dense, ".dense"},
};

// Sorts a check's variables and refuses a repeated one, naming the line.
void check_row(const TextReader& in, std::size_t line, std::vector<std::uint32_t>& row,
               std::size_t check, bool one_based) {
  std::sort(row.begin(), row.end());
  for (std::size_t i = 1; i < row.size(); ++i) {
    if (row[i] == row[i - 1]) {
      in.fail(line, fmt::format("check {} lists variable {} twice", check + one_based,
                                row[i] + one_based));
    }
  }
}

// ---- tannery sparse text --------------------------------------------------------------------

// "n=7" -> 7
std::int64_t keyed(const TextReader& in, const Line& line, std::string_view token,
                   std::string_view key) {
  if (token.size() <= key.size() + 1 || token.substr(0, key.size()) != key ||
      token[key.size()] != '=') {
    in.fail(line.number,
            fmt::format("expected {}=<count> in the header, found {}", key, quote(token)));
  }
  return in.integer_in(line, token.substr(key.size() + 1), 0, kMaxDim, key);
}

Code read_tannery(TextReader& in) {
  Line line;
  if (!in.next(line)) in.fail(in.line_number(), "empty file: no header line");
  if (line.tokens.size() != 4 || line.tokens[0] != "tannery-h") {
    in.fail(line.number, "expected the header 'tannery-h 1 n=<variables> m=<checks>'");
  }
  if (line.tokens[1] != "1") {
    in.fail(line.number, fmt::format("unsupported format version {}", quote(line.tokens[1])));
  }
  const auto n = static_cast<std::size_t>(keyed(in, line, line.tokens[2], "n"));
  const auto m = static_cast<std::size_t>(keyed(in, line, line.tokens[3], "m"));
  std::vector<std::vector<std::uint32_t>> checks;
  checks.reserve(std::min<std::size_t>(m, 1 << 16));
  while (in.next(line)) {
    if (checks.size() == m) {
      in.fail(line.number, fmt::format("more check lines than the header's m={}", m));
    }
    auto& row = checks.emplace_back();
    if (!(line.tokens.size() == 1 && line.tokens[0] == "-")) {
      for (auto token : line.tokens) {
        row.push_back(static_cast<std::uint32_t>(
            in.integer_in(line, token, 0, static_cast<std::int64_t>(n) - 1, "variable index")));
      }
    }
    check_row(in, line.number, row, checks.size() - 1, false);
  }
  if (checks.size() != m) {
    in.fail(in.line_number(),
            fmt::format("header says m={} checks but the file has {}", m, checks.size()));
  }
  return Code::from_checks(n, checks);
}

void write_tannery(const Code& code, std::ostream& out) {
  out << fmt::format("tannery-h 1 n={} m={}\n", code.n(), code.m());
  for (std::size_t c = 0; c < code.m(); ++c) {
    auto vars = code.check_variables(c);
    out << (vars.empty() ? "-" : fmt::format("{}", fmt::join(vars, " "))) << '\n';
  }
}

// ---- alist ------------------------------------------------------------------------------------

// Reads one line of exactly count integers (or fewer when allow_short).
Line expect_line(TextReader& in, std::string_view what) {
  Line line;
  if (!in.next(line)) in.fail(in.line_number(), fmt::format("file ends before the {}", what));
  return line;
}

Code read_alist(TextReader& in) {
  Line line = expect_line(in, "size line 'n m'");
  if (line.tokens.size() != 2) in.fail(line.number, "alist: expected 'n m' on the first line");
  const auto n = static_cast<std::size_t>(in.integer_in(line, line.tokens[0], 0, kMaxDim, "n"));
  const auto m = static_cast<std::size_t>(in.integer_in(line, line.tokens[1], 0, kMaxDim, "m"));
  line = expect_line(in, "maximum degrees line");
  if (line.tokens.size() != 2) in.fail(line.number, "alist: expected the two maximum degrees");
  const auto max_col =
      in.integer_in(line, line.tokens[0], 0, static_cast<std::int64_t>(m), "maximum column degree");
  const auto max_row =
      in.integer_in(line, line.tokens[1], 0, static_cast<std::int64_t>(n), "maximum row degree");
  auto degrees = [&](std::size_t count, std::int64_t max, std::string_view what) {
    Line l = expect_line(in, what);
    if (l.tokens.size() != count) {
      in.fail(l.number,
              fmt::format("alist: {} has {} entries, expected {}", what, l.tokens.size(), count));
    }
    std::vector<std::size_t> d;
    d.reserve(count);
    for (auto t : l.tokens)
      d.push_back(static_cast<std::size_t>(in.integer_in(l, t, 0, max, "degree")));
    return d;
  };
  // Empty codes put no tokens on the degree lines.
  const auto col_deg = n ? degrees(n, max_col, "column degree list") : std::vector<std::size_t>{};
  const auto row_deg = m ? degrees(m, max_row, "row degree list") : std::vector<std::size_t>{};
  auto list = [&](std::size_t index, std::size_t degree, std::int64_t max_degree, std::size_t bound,
                  std::string_view what) {
    Line l = expect_line(in, fmt::format("{} {}", what, index + 1));
    std::vector<std::uint32_t> entries;
    for (auto t : l.tokens) {
      const std::int64_t v = in.integer_in(l, t, 0, static_cast<std::int64_t>(bound), "index");
      if (v == 0) continue;  // padding
      entries.push_back(static_cast<std::uint32_t>(v - 1));
    }
    if (entries.size() != degree ||
        l.tokens.size() > static_cast<std::size_t>(std::max<std::int64_t>(max_degree, 1))) {
      in.fail(l.number, fmt::format("alist: {} {} has {} entries, its degree is {}", what,
                                    index + 1, entries.size(), degree));
    }
    check_row(in, l.number, entries, index, true);
    return std::pair{entries, l.number};
  };
  std::vector<std::vector<std::uint32_t>> cols(n);
  for (std::size_t v = 0; v < n; ++v) cols[v] = list(v, col_deg[v], max_col, m, "column").first;
  std::vector<std::vector<std::uint32_t>> checks(m);
  std::vector<std::size_t> row_line(m);
  for (std::size_t c = 0; c < m; ++c)
    std::tie(checks[c], row_line[c]) = list(c, row_deg[c], max_row, n, "row");
  if (in.next(line)) in.fail(line.number, "alist: unexpected data after the last row list");
  // The column lists must describe the same matrix as the row lists.
  std::size_t from_cols = 0;
  for (std::size_t v = 0; v < n; ++v) {
    for (std::uint32_t c : cols[v]) {
      ++from_cols;
      if (!std::binary_search(checks[c].begin(), checks[c].end(), static_cast<std::uint32_t>(v))) {
        in.fail(row_line[c],
                fmt::format("alist: column {} lists row {} but row {} does not list column {}",
                            v + 1, c + 1, c + 1, v + 1));
      }
    }
  }
  std::size_t from_rows = 0;
  for (const auto& r : checks) from_rows += r.size();
  if (from_rows != from_cols) {
    in.fail(in.line_number(), fmt::format("alist: row lists hold {} entries but column lists {}",
                                          from_rows, from_cols));
  }
  return Code::from_checks(n, checks);
}

void write_alist(const Code& code, std::ostream& out) {
  out << code.n() << ' ' << code.m() << '\n'
      << code.max_variable_degree() << ' ' << code.max_check_degree() << '\n';
  std::string line;
  for (std::size_t v = 0; v < code.n(); ++v)
    line += fmt::format("{}{}", v ? " " : "", code.variable_degree(v));
  out << line << '\n';
  line.clear();
  for (std::size_t c = 0; c < code.m(); ++c)
    line += fmt::format("{}{}", c ? " " : "", code.check_degree(c));
  out << line << '\n';
  for (std::size_t v = 0; v < code.n(); ++v) {
    line.clear();
    for (std::uint32_t e : code.variable_edges(v))
      line += fmt::format("{} ", code.edge_check(e) + 1);
    for (std::size_t i = code.variable_degree(v); i < code.max_variable_degree(); ++i) line += "0 ";
    if (!line.empty()) line.pop_back();
    out << (line.empty() ? "0" : line) << '\n';  // an empty list as one pad: no blank line
  }
  for (std::size_t c = 0; c < code.m(); ++c) {
    line.clear();
    for (std::uint32_t v : code.check_variables(c)) line += fmt::format("{} ", v + 1);
    for (std::size_t i = code.check_degree(c); i < code.max_check_degree(); ++i) line += "0 ";
    if (!line.empty()) line.pop_back();
    out << (line.empty() ? "0" : line) << '\n';
  }
}

// ---- Matrix Market ----------------------------------------------------------------------------

// A Matrix Market value as a binary entry: any integer or real spelling of 0 or 1 (scipy writes
// "1.000000000000000e+00" for float matrices); any other value is an error naming the line.
bool mtx_binary_value(const TextReader& in, const Line& line, std::string_view token) {
  const std::string text(token);
  char* end = nullptr;
  const double v = std::strtod(text.c_str(), &end);
  const bool number = !text.empty() && end == text.c_str() + text.size();
  if (number && v == 1) return true;
  if (number && v == 0) return false;
  in.fail(line.number, fmt::format("value {} is not a binary entry (0 or 1)", quote(token)));
}

Code read_mtx(TextReader& in, std::string_view text) {
  Line line;
  // The banner starts with '%', the comment character, so read it before the tokenizer.
  const std::string_view banner = text.substr(0, text.find('\n'));
  std::istringstream words{std::string(banner)};
  std::string tag, object, layout, field, symmetry;
  words >> tag >> object >> layout >> field >> symmetry;
  for (auto* s : {&object, &layout, &field, &symmetry}) {
    std::transform(s->begin(), s->end(), s->begin(),
                   [](unsigned char ch) { return std::tolower(ch); });
  }
  if (tag != "%%MatrixMarket" || object != "matrix")
    in.fail(1, "expected a '%%MatrixMarket matrix' banner");
  if (layout != "coordinate" && layout != "array") {
    in.fail(1, fmt::format("Matrix Market layout '{}' is not supported (use coordinate or array)",
                           layout));
  }
  const bool array = layout == "array";
  if (field != "integer" && field != "real" && (array || field != "pattern")) {
    in.fail(1, fmt::format("Matrix Market field '{}' is not supported (use {}integer or real)",
                           field, array ? "" : "pattern, "));
  }
  if (symmetry != "general")
    in.fail(1, fmt::format("Matrix Market symmetry '{}' is not supported (use general)", symmetry));
  if (!in.next(line)) in.fail(in.line_number(), "Matrix Market: file ends before the size line");
  if (line.tokens.size() != (array ? 2u : 3u)) {
    in.fail(line.number, array ? "Matrix Market: expected 'rows columns'"
                               : "Matrix Market: expected 'rows columns entries'");
  }
  const auto m = static_cast<std::size_t>(in.integer_in(line, line.tokens[0], 0, kMaxDim, "rows"));
  const auto n =
      static_cast<std::size_t>(in.integer_in(line, line.tokens[1], 0, kMaxDim, "columns"));
  std::vector<std::vector<std::uint32_t>> checks(m);
  if (array) {
    // Every entry, column after column (the format's column-major order), one or more per line.
    const std::size_t total = m * n;
    std::size_t at = 0;
    while (in.next(line)) {
      for (std::string_view token : line.tokens) {
        if (at == total)
          in.fail(line.number, fmt::format("more values than the {} x {} declared", m, n));
        if (mtx_binary_value(in, line, token))
          checks[at % m].push_back(static_cast<std::uint32_t>(at / m));
        ++at;
      }
    }
    if (at != total) {
      in.fail(in.line_number(),
              fmt::format("size line declares {} x {} = {} values but the file has {}", m, n, total,
                          at));
    }
    return Code::from_checks(n, checks);
  }
  const auto nnz = static_cast<std::size_t>(
      in.integer_in(line, line.tokens[2], 0, std::int64_t{1} << 31, "entries"));
  const std::size_t want = field == "pattern" ? 2 : 3;
  std::map<std::pair<std::uint32_t, std::uint32_t>, std::size_t> seen;
  std::size_t entries = 0;
  while (in.next(line)) {
    if (line.tokens.size() != want) {
      in.fail(line.number, fmt::format("Matrix Market: expected {} numbers per entry, found {}",
                                       want, line.tokens.size()));
    }
    if (++entries > nnz)
      in.fail(line.number, fmt::format("more entries than the {} declared", nnz));
    const auto r = static_cast<std::uint32_t>(
        in.integer_in(line, line.tokens[0], 1, static_cast<std::int64_t>(m), "row") - 1);
    const auto c = static_cast<std::uint32_t>(
        in.integer_in(line, line.tokens[1], 1, static_cast<std::int64_t>(n), "column") - 1);
    if (want == 3 && !mtx_binary_value(in, line, line.tokens[2])) continue;
    auto [it, fresh] = seen.emplace(std::pair{r, c}, line.number);
    if (!fresh) {
      in.fail(line.number,
              fmt::format("entry ({}, {}) repeats the one on line {}", r + 1, c + 1, it->second));
    }
    checks[r].push_back(c);
  }
  if (entries != nnz)
    in.fail(in.line_number(),
            fmt::format("size line declares {} entries but the file has {}", nnz, entries));
  return Code::from_checks(n, checks);
}

void write_mtx(const Code& code, std::ostream& out) {
  out << "%%MatrixMarket matrix coordinate pattern general\n% parity-check matrix written by "
         "tannery\n";
  out << code.m() << ' ' << code.n() << ' ' << code.edges() << '\n';
  for (std::size_t c = 0; c < code.m(); ++c) {
    for (std::uint32_t v : code.check_variables(c)) out << c + 1 << ' ' << v + 1 << '\n';
  }
}

// ---- quasi-cyclic base table ------------------------------------------------------------------

// A lifting line "Z = 54", "Z=54" or "Z 54": empty optional when the line is not one; an empty
// value when it is one but malformed.
std::optional<std::string_view> lifting_token(const Line& line) {
  const auto& t = line.tokens;
  if (t.empty() || t[0].empty() || (t[0][0] != 'Z' && t[0][0] != 'z')) return std::nullopt;
  std::vector<std::string_view> parts;
  if (t[0].size() > 1) parts.push_back(t[0].substr(1));
  parts.insert(parts.end(), t.begin() + 1, t.end());
  if (!parts.empty() && parts[0].starts_with('=')) {
    parts[0].remove_prefix(1);
    if (parts[0].empty()) parts.erase(parts.begin());
  }
  return parts.size() == 1 ? parts[0] : std::string_view();
}

Code read_qc(TextReader& in, std::optional<std::size_t> lifting) {
  QuasiCyclic base;
  std::optional<std::size_t> declared;
  std::size_t declared_line = 0;
  std::vector<std::size_t> row_lines;
  Line line;
  while (in.next(line)) {
    if (auto z = lifting_token(line)) {
      if (z->empty()) in.fail(line.number, "malformed lifting line: expected 'Z = <size>'");
      if (declared)
        in.fail(line.number,
                fmt::format("lifting size given twice (first on line {})", declared_line));
      declared =
          static_cast<std::size_t>(in.integer_in(line, *z, 1, kMaxLifting, "lifting size Z"));
      declared_line = line.number;
      continue;
    }
    if (base.block_rows == 0) base.block_cols = line.tokens.size();
    if (line.tokens.size() != base.block_cols) {
      in.fail(line.number, fmt::format("base table row has {} entries, the first row has {}",
                                       line.tokens.size(), base.block_cols));
    }
    for (auto t : line.tokens) {
      base.shifts.push_back(t == "-" ? -1 : in.integer_in(line, t, -1, kMaxLifting - 1, "shift"));
    }
    ++base.block_rows;
    row_lines.push_back(line.number);
  }
  if (base.block_rows == 0) in.fail(in.line_number(), "base table has no rows");
  if (declared && lifting && *declared != *lifting) {
    in.fail(declared_line,
            fmt::format("file says Z = {} but Z = {} was requested", *declared, *lifting));
  }
  if (!declared && !lifting) {
    in.fail(in.line_number(),
            "base table needs a lifting size: add a line 'Z = <size>' or give the lifting setting");
  }
  base.lifting = declared ? *declared : *lifting;
  if (base.block_cols * base.lifting > kMaxCodeDimension ||
      base.block_rows * base.lifting > kMaxCodeDimension) {
    in.fail(
        declared ? declared_line : in.line_number(),
        fmt::format("lifted size {} x {} exceeds the limit of {}", base.block_rows * base.lifting,
                    base.block_cols * base.lifting, kMaxCodeDimension));
  }
  for (std::size_t i = 0; i < base.shifts.size(); ++i) {
    if (base.shifts[i] >= static_cast<std::int64_t>(base.lifting)) {
      in.fail(row_lines[i / base.block_cols],
              fmt::format("base table entry (row {}, column {}) has shift {} >= Z = {}",
                          i / base.block_cols + 1, i % base.block_cols + 1, base.shifts[i],
                          base.lifting));
    }
  }
  return Code::from_quasi_cyclic(base);
}

void write_qc(const Code& code, std::ostream& out) {
  if (!code.quasi_cyclic()) {
    throw Error(
        "this code has no quasi-cyclic structure to write as a base table (H is no lifting of a "
        "base table: not every Z x Z block, for any Z >= 2 dividing m and n, is zero or a "
        "circulant permutation)");
  }
  const QuasiCyclic& base = *code.quasi_cyclic();
  out << fmt::format("# quasi-cyclic base table: {} x {} blocks, -1 = zero block\nZ = {}\n",
                     base.block_rows, base.block_cols, base.lifting);
  const std::size_t width = fmt::format("{}", base.lifting - 1).size() + 1;
  for (std::size_t i = 0; i < base.block_rows; ++i) {
    std::string line;
    for (std::size_t j = 0; j < base.block_cols; ++j) {
      line +=
          fmt::format("{}{:>{}}", j ? " " : "", base.shift(i, j), std::max<std::size_t>(width, 2));
    }
    out << line << '\n';
  }
}

// ---- dense 0/1 --------------------------------------------------------------------------------

bool is_binary_token(std::string_view t) {
  return !t.empty() && std::all_of(t.begin(), t.end(), [](char c) { return c == '0' || c == '1'; });
}

// Bits of a dense row: "0 1 1" or "011".
std::vector<bool> dense_bits(const TextReader& in, const Line& line) {
  std::vector<bool> bits;
  const bool compact = line.tokens.size() == 1;
  for (auto t : line.tokens) {
    if (!is_binary_token(t) || (!compact && t.size() != 1)) {
      in.fail(line.number, fmt::format("dense matrix entry {} is not 0 or 1", quote(t)));
    }
    for (char c : t) bits.push_back(c == '1');
  }
  return bits;
}

Code read_dense(TextReader& in) {
  Line line;
  std::vector<std::vector<std::uint32_t>> checks;
  std::size_t n = 0;
  while (in.next(line)) {
    const std::vector<bool> bits = dense_bits(in, line);
    if (checks.empty()) n = bits.size();
    if (bits.size() != n)
      in.fail(line.number, fmt::format("row has {} columns, the first row has {}", bits.size(), n));
    if (checks.size() >= kMaxCodeDimension) in.fail(line.number, "too many rows");
    auto& row = checks.emplace_back();
    for (std::size_t j = 0; j < bits.size(); ++j) {
      if (bits[j]) row.push_back(static_cast<std::uint32_t>(j));
    }
  }
  if (checks.empty()) in.fail(in.line_number(), "empty file: no matrix rows");
  if (n > kMaxCodeDimension) in.fail(1, "too many columns");
  return Code::from_checks(n, checks);
}

void write_dense(const Code& code, std::ostream& out) {
  if (code.n() == 0 && code.m() > 0) {
    throw Error(
        fmt::format("the dense format cannot hold {} rows without columns (they would be "
                    "blank lines, which no reader can count); use tannery, alist or mtx",
                    code.m()));
  }
  std::string line;
  for (std::size_t c = 0; c < code.m(); ++c) {
    line.assign(code.n() == 0 ? 0 : 2 * code.n() - 1, ' ');
    for (std::size_t j = 0; j < code.n(); ++j) line[2 * j] = '0';
    for (std::uint32_t v : code.check_variables(c)) line[2 * v] = '1';
    out << line << '\n';
  }
}

}  // namespace

std::optional<MatrixFormat> format_from_extension(std::string_view path) {
  for (const auto& [format, extension] : kExtensions) {
    if (path.size() > extension.size() && path.ends_with(extension)) return format;
  }
  return std::nullopt;
}

MatrixFormat detect_format(std::string_view text, const std::string& source) {
  detail::reject_binary(text, source);
  if (text.starts_with("%%MatrixMarket")) return MatrixFormat::mtx;
  TextReader in(text, source, '#');
  Line line;
  if (!in.next(line)) throw Error(fmt::format("{}: empty file: no matrix in it", source));
  if (line.tokens[0] == "tannery-h") return MatrixFormat::tannery;
  bool all_binary = true, has_zero_block = false, has_lifting = false;
  std::size_t width = 0, rows = 0;
  bool same_width = true;
  do {
    if (lifting_token(line)) {
      has_lifting = true;
      continue;
    }
    std::size_t row_width = 0;
    for (auto t : line.tokens) {
      if (t == "-" || t == "-1") has_zero_block = true;
      if (!is_binary_token(t)) all_binary = false;
      row_width += line.tokens.size() == 1 ? t.size() : 1;
    }
    if (rows++ == 0) width = row_width;
    if (row_width != width) same_width = false;
  } while (in.next(line));
  if (has_lifting || has_zero_block) return MatrixFormat::qc;
  // Nothing but 0/1 is a dense matrix even with rows of different widths (the reader then names
  // the ragged row); an alist of 0/1 numbers only could describe no more than a 1 x 1 matrix.
  if (all_binary && (same_width || rows > 2)) return MatrixFormat::dense;
  return MatrixFormat::alist;
}

Code parse_code(std::string_view text, const std::string& source, const ReadOptions& options) {
  const MatrixFormat format = options.format ? *options.format : detect_format(text, source);
  detail::reject_binary(text, source);
  if (format != MatrixFormat::qc && options.lifting) {
    throw Error(
        fmt::format("{}: a lifting size only applies to quasi-cyclic base tables, not to {} files",
                    source, name_of(format)));
  }
  TextReader in(text, source, format == MatrixFormat::mtx ? '%' : '#');
  switch (format) {
    case MatrixFormat::tannery:
      return read_tannery(in);
    case MatrixFormat::alist:
      return read_alist(in);
    case MatrixFormat::mtx:
      return read_mtx(in, text);
    case MatrixFormat::qc:
      return read_qc(in, options.lifting);
    case MatrixFormat::dense:
      return read_dense(in);
  }
  throw Error("unknown matrix format");
}

std::string read_text_file(const std::string& path, std::size_t max_bytes) {
  std::string data;
  if (path == "-") {
    data.assign(std::istreambuf_iterator<char>(std::cin), std::istreambuf_iterator<char>());
  } else {
    std::error_code ec;
    if (std::filesystem::is_directory(path, ec))
      throw Error(fmt::format("{}: is a directory, not a file", path));
    std::ifstream file(path, std::ios::binary);
    if (!file) throw Error(fmt::format("{}: cannot open file", path));
    const auto size = std::filesystem::file_size(path, ec);
    if (!ec && size > max_bytes) {
      throw Error(
          fmt::format("{}: file is {} bytes, more than the limit of {}", path, size, max_bytes));
    }
    data.assign(std::istreambuf_iterator<char>(file), std::istreambuf_iterator<char>());
    if (file.bad()) throw Error(fmt::format("{}: read error", path));
  }
  if (data.size() > max_bytes)
    throw Error(fmt::format("{}: input larger than {} bytes", path, max_bytes));
  return data;
}

Code read_code_file(const std::string& path, const ReadOptions& options) {
  const std::string text = read_text_file(path);
  return parse_code(text, path == "-" ? std::string("<stdin>") : path, options);
}

void write_code(const Code& code, MatrixFormat format, std::ostream& out) {
  switch (format) {
    case MatrixFormat::tannery:
      return write_tannery(code, out);
    case MatrixFormat::alist:
      return write_alist(code, out);
    case MatrixFormat::mtx:
      return write_mtx(code, out);
    case MatrixFormat::qc:
      return write_qc(code, out);
    case MatrixFormat::dense:
      return write_dense(code, out);
  }
}

void write_code_file(const Code& code, MatrixFormat format, const std::string& path) {
  std::ostringstream out;
  write_code(code, format, out);
  write_file_atomically(path, out.str());
}

}  // namespace tannery
