#include "text_reader.hpp"

#include <fmt/format.h>
#include <charconv>

#include "tannery/error.hpp"

namespace tannery::detail {

TextReader::TextReader(std::string_view text, std::string source, char comment)
    : text_(text), source_(std::move(source)), comment_(comment) {}

bool TextReader::next(Line& line, bool keep_blank) {
  while (pos_ < text_.size()) {
    std::size_t end = text_.find('\n', pos_);
    if (end == std::string_view::npos) end = text_.size();
    std::string_view raw = text_.substr(pos_, end - pos_);
    pos_ = end + 1;
    ++line_no_;
    if (comment_ != '\0') {
      const std::size_t c = raw.find(comment_);
      if (c != std::string_view::npos) raw = raw.substr(0, c);
    }
    line.number = line_no_;
    line.tokens.clear();
    std::size_t i = 0;
    while (i < raw.size()) {
      while (i < raw.size() && (raw[i] == ' ' || raw[i] == '\t' || raw[i] == '\r' || raw[i] == ','))
        ++i;
      std::size_t j = i;
      while (j < raw.size() && raw[j] != ' ' && raw[j] != '\t' && raw[j] != '\r' && raw[j] != ',')
        ++j;
      if (j > i) line.tokens.push_back(raw.substr(i, j - i));
      i = j;
    }
    if (!line.tokens.empty() || keep_blank) return true;
  }
  return false;
}

void TextReader::fail(std::size_t line, std::string_view message) const {
  throw Error(fmt::format("{}:{}: {}", source_, line, message));
}

std::int64_t TextReader::integer(const Line& line, std::string_view token) const {
  std::int64_t value = 0;
  const char* end = token.data() + token.size();
  auto [ptr, ec] = std::from_chars(token.data(), end, value);
  if (ec == std::errc::result_out_of_range)
    fail(line.number, fmt::format("number {} is too large", quote(token)));
  if (ec != std::errc() || ptr != end)
    fail(line.number, fmt::format("expected an integer, found {}", quote(token)));
  return value;
}

std::int64_t TextReader::integer_in(const Line& line, std::string_view token, std::int64_t low,
                                    std::int64_t high, std::string_view what) const {
  const std::int64_t value = integer(line, token);
  if (value < low || value > high) {
    fail(line.number, fmt::format("{} {} is out of range [{}, {}]", what, value, low, high));
  }
  return value;
}

void reject_binary(std::string_view text, const std::string& source) {
  std::size_t line = 1;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const auto b = static_cast<unsigned char>(text[i]);
    if (b == '\n') ++line;
    if (b < 0x20 && b != '\n' && b != '\r' && b != '\t' && b != '\f' && b != '\v') {
      throw Error(fmt::format("{}:{}: binary data (byte 0x{:02x} at offset {}), not a text matrix",
                              source, line, b, i));
    }
  }
}

std::string quote(std::string_view token) {
  std::string out = "'";
  for (std::size_t i = 0; i < token.size() && i < 24; ++i) {
    const auto b = static_cast<unsigned char>(token[i]);
    if (b >= 0x20 && b < 0x7f)
      out += static_cast<char>(b);
    else
      out += fmt::format("\\x{:02x}", b);
  }
  if (token.size() > 24) out += "...";
  return out + "'";
}

}  // namespace tannery::detail
