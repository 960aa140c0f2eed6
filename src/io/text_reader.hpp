// Line-oriented tokenizer shared by the text matrix readers. Tracks line numbers so every
// error names "file:line"; refuses binary data up front.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace tannery::detail {

struct Line {
  std::size_t number = 0;                // 1-based
  std::vector<std::string_view> tokens;  // whitespace-separated, comment stripped
};

class TextReader {
 public:
  // comment: character starting a comment that runs to the end of the line ('\0' for none).
  TextReader(std::string_view text, std::string source, char comment);

  // Next line with at least one token (keep_blank: also blank lines); false at end of input.
  bool next(Line& line, bool keep_blank = false);
  const std::string& source() const noexcept { return source_; }
  std::size_t line_number() const noexcept { return line_no_; }

  [[noreturn]] void fail(std::size_t line, std::string_view message) const;
  std::int64_t integer(const Line& line, std::string_view token) const;
  // Integer in [low, high]; what names the quantity in the error message.
  std::int64_t integer_in(const Line& line, std::string_view token, std::int64_t low,
                          std::int64_t high, std::string_view what) const;

 private:
  std::string_view text_;
  std::string source_;
  char comment_;
  std::size_t pos_ = 0;
  std::size_t line_no_ = 0;
};

// Throws when the text contains control bytes no text matrix has (NUL etc.), naming the offset.
void reject_binary(std::string_view text, const std::string& source);
// Printable, shortened form of a token for error messages.
std::string quote(std::string_view token);

}  // namespace tannery::detail
