#include "tannery/io/capture.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <bit>
#include <charconv>
#include <cmath>
#include <cstring>
#include <fstream>
#include <istream>
#include <limits>
#include <sstream>

#include "tannery/error.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/parse.hpp"

namespace tannery {

namespace {

template <class T>
void put_le(std::string& out, T value) {
  using U = std::make_unsigned_t<
      std::conditional_t<std::is_floating_point_v<T>,
                         std::conditional_t<sizeof(T) == 4, std::int32_t, std::int64_t>, T>>;
  const U bits = std::bit_cast<U>(value);
  for (std::size_t b = 0; b < sizeof(T); ++b)
    out.push_back(static_cast<char>((bits >> (8 * b)) & 0xffu));
}

template <class T>
T get_le(const char* p) {
  using U = std::make_unsigned_t<
      std::conditional_t<std::is_floating_point_v<T>,
                         std::conditional_t<sizeof(T) == 4, std::int32_t, std::int64_t>, T>>;
  U bits = 0;
  for (std::size_t b = 0; b < sizeof(T); ++b)
    bits |= static_cast<U>(static_cast<U>(static_cast<unsigned char>(p[b])) << (8 * b));
  return std::bit_cast<T>(bits);
}

// Rounded and saturated to the symmetric range +-max (as fixed-point LLRs are: -128 has no
// positive counterpart, so +-Inf become +-127 alike).
template <class I>
I saturate(double x) {
  const double r = std::nearbyint(x), top = static_cast<double>(std::numeric_limits<I>::max());
  if (r >= top) return std::numeric_limits<I>::max();
  if (r <= -top) return static_cast<I>(-std::numeric_limits<I>::max());
  return static_cast<I>(r);
}

std::string detail_char(int c) {
  return c >= 0x20 && c < 0x7f ? std::string(1, static_cast<char>(c)) : fmt::format("\\x{:02x}", c);
}

}  // namespace

std::size_t sample_bytes(SampleFormat f) {
  switch (f) {
    case SampleFormat::f32:
      return 4;
    case SampleFormat::f64:
      return 8;
    case SampleFormat::i8:
      return 1;
    case SampleFormat::i16:
      return 2;
    case SampleFormat::text:
      return 0;
  }
  return 0;
}

void append_f32_le(std::string& out, std::span<const float> values) {
  out.reserve(out.size() + 4 * values.size());
  for (float v : values) put_le(out, v);
}

void append_samples(std::string& out, std::span<const double> values, SampleFormat format,
                    double scale) {
  switch (format) {
    case SampleFormat::f32:
      for (double v : values) put_le(out, static_cast<float>(v * scale));
      return;
    case SampleFormat::f64:
      for (double v : values) put_le(out, v * scale);
      return;
    case SampleFormat::i8:
      for (double v : values) put_le(out, saturate<std::int8_t>(v / scale));
      return;
    case SampleFormat::i16:
      for (double v : values) put_le(out, saturate<std::int16_t>(v / scale));
      return;
    case SampleFormat::text:
      for (std::size_t i = 0; i < values.size(); ++i) {
        out += fmt::format("{:.9g}{}", values[i] * scale, i + 1 == values.size() ? '\n' : ' ');
      }
      return;
  }
}

CaptureReader::CaptureReader(std::istream& in, std::string source, SampleFormat format,
                             double scale, std::size_t frame_values)
    : in_(in),
      source_(std::move(source)),
      format_(format),
      scale_(scale),
      frame_values_(frame_values) {
  if (!(std::isfinite(scale) && scale != 0))
    throw Error(fmt::format("scale must be a finite number other than 0, got {}", scale));
}

void CaptureReader::fail_value(std::uint64_t byte, std::uint64_t index, const std::string& what) {
  error_ = fmt::format("{}: byte {} (frame {}, value {}): {}", source_, byte, index / frame_values_,
                       index % frame_values_, what);
  done_ = true;
}

std::size_t CaptureReader::read(std::size_t max_frames, std::vector<double>& out) {
  out.clear();
  if (done_ || max_frames == 0) return 0;
  const std::size_t got =
      format_ == SampleFormat::text ? read_text(max_frames, out) : read_binary(max_frames, out);
  frames_ += got;
  return got;
}

std::size_t CaptureReader::read_binary(std::size_t max_frames, std::vector<double>& out) {
  const std::size_t width = sample_bytes(format_), frame_bytes = width * frame_values_;
  raw_.resize(max_frames * frame_bytes);
  in_.read(raw_.data(), static_cast<std::streamsize>(raw_.size()));
  const auto got = static_cast<std::size_t>(in_.gcount());
  if (in_.bad()) {
    error_ = fmt::format("{}: read error at byte {}", source_, offset_ + got);
    done_ = true;
  }
  std::size_t frames = got / frame_bytes;
  out.resize(frames * frame_values_);
  for (std::size_t i = 0; i < frames * frame_values_; ++i) {
    const char* p = raw_.data() + i * width;
    double v = 0;
    switch (format_) {
      case SampleFormat::f32:
        v = get_le<float>(p);
        break;
      case SampleFormat::f64:
        v = get_le<double>(p);
        break;
      case SampleFormat::i8:
        v = static_cast<double>(static_cast<std::int8_t>(*p));
        break;
      case SampleFormat::i16:
        v = get_le<std::int16_t>(p);
        break;
      case SampleFormat::text:
        break;
    }
    if (std::isnan(v)) {
      // Keep the complete frames before the bad one.
      const std::size_t frame = i / frame_values_;
      fail_value(offset_ + i * width, frames_ * frame_values_ + i, "value is NaN");
      frames = frame;
      out.resize(frames * frame_values_);
      offset_ += frames * frame_bytes;
      return frames;
    }
    out[i] = v * scale_;
  }
  offset_ += frames * frame_bytes;
  if (got < raw_.size() && !done_) {
    done_ = true;
    const std::size_t partial = got - frames * frame_bytes;
    if (partial > 0) {
      error_ = fmt::format(
          "{}: ends with a partial frame: {} bytes at byte {} after frame {} (frames are {} values "
          "of {} bytes = {} bytes)",
          source_, partial, offset_, frames_ + frames, frame_values_, width, frame_bytes);
    } else if (frames_ + frames == 0) {
      error_ = fmt::format("{}: empty input: no frames", source_);
    }
  }
  return frames;
}

bool CaptureReader::next_token(std::string& token, std::uint64_t& at, std::uint64_t& line) {
  token.clear();
  int c;
  while ((c = in_.get()) != EOF) {
    ++offset_;
    const bool end_of_line = c == '\n';
    if (c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == ',') {
      line_ += end_of_line;
      if (!token.empty()) return true;
      continue;
    }
    if (token.empty()) at = offset_ - 1, line = line_;
    if (token.size() < 64) token.push_back(static_cast<char>(c));
  }
  return !token.empty();
}

bool CaptureReader::line_ends_next() {
  for (int c = in_.peek(); c != EOF; c = in_.peek()) {
    if (c == '\n') return true;
    if (c != ' ' && c != '\t' && c != '\r' && c != ',') return false;
    in_.get();
    ++offset_;
  }
  return true;
}

bool CaptureReader::close_line() {
  if (token_line_ == 0 || error_) return true;
  if (lines_are_frames_ == -1) {
    lines_are_frames_ = line_values_ == frame_values_ ? 1 : 0;
    return true;
  }
  if (lines_are_frames_ == 1 && line_values_ != frame_values_) {
    error_ = fmt::format(
        "{}:{}: the line holds {} values, frames are {} (the first line is one frame, so every "
        "line must be)",
        source_, token_line_, line_values_, frame_values_);
    done_ = true;
    return false;
  }
  return true;
}

std::size_t CaptureReader::read_text(std::size_t max_frames, std::vector<double>& out) {
  std::string token;
  std::uint64_t at = 0, line = 0;
  std::size_t values = 0;
  out.resize(max_frames * frame_values_);
  while (values < out.size()) {
    if (!next_token(token, at, line)) {
      if (!close_line()) values -= line_values_;  // the short last line is no frame
      break;
    }
    if (line != token_line_) {
      if (!close_line()) {
        values -= line_values_;
        break;
      }
      token_line_ = line;
      line_values_ = 0;
    }
    ++line_values_;
    double v = 0;
    const auto [ptr, ec] = std::from_chars(token.data(), token.data() + token.size(), v);
    const std::uint64_t index = frames_ * frame_values_ + values;
    if (ec == std::errc::result_out_of_range) {
      v = token[0] == '-' ? -std::numeric_limits<double>::infinity()
                          : std::numeric_limits<double>::infinity();
    } else if (ec != std::errc() || ptr != token.data() + token.size()) {
      fail_value(at, index, fmt::format("line {}: '{}' is not a number", line, token));
      break;
    }
    if (std::isnan(v)) {
      fail_value(at, index, fmt::format("line {}: value is NaN", line));
      break;
    }
    out[values++] = v * scale_;
    // Lines are frames: a line's frame is complete only if the line ends here.
    if (lines_are_frames_ == 1 && line_values_ == frame_values_ && line_ == line &&
        !line_ends_next()) {
      error_ = fmt::format(
          "{}:{}: the line holds more than {} values (the first line is one frame, "
          "so every line must be)",
          source_, line, frame_values_);
      done_ = true;
      values -= frame_values_;
      break;
    }
  }
  const std::size_t frames = values / frame_values_;
  if (!done_ && values < out.size()) {
    done_ = true;
    if (values % frame_values_ != 0) {
      error_ = fmt::format(
          "{}: ends with a partial frame: {} values after frame {} (frames are {} values)", source_,
          values % frame_values_, frames_ + frames, frame_values_);
    } else if (frames_ + frames == 0) {
      error_ = fmt::format("{}: empty input: no frames", source_);
    }
  }
  out.resize(frames * frame_values_);
  return frames;
}

void append_bits(std::string& out, std::span<const std::uint8_t> bits, BitFormat format) {
  switch (format) {
    case BitFormat::text:
      for (auto b : bits) out.push_back(b ? '1' : '0');
      out.push_back('\n');
      return;
    case BitFormat::bytes:
      for (auto b : bits) out.push_back(static_cast<char>(b ? 1 : 0));
      return;
    case BitFormat::packed:
      for (std::size_t i = 0; i < bits.size(); i += 8) {
        unsigned byte = 0;
        for (std::size_t j = 0; j < 8; ++j)
          byte = (byte << 1) | (i + j < bits.size() && bits[i + j] ? 1u : 0u);
        out.push_back(static_cast<char>(byte));
      }
      return;
  }
}

BitFrameReader::BitFrameReader(std::istream& in, std::string source, BitFormat format,
                               std::size_t frame_bits)
    : in_(in), source_(std::move(source)), format_(format), frame_bits_(frame_bits) {}

std::size_t BitFrameReader::read(std::size_t max_frames, std::vector<std::uint8_t>& out) {
  out.clear();
  if (done_ || max_frames == 0) return 0;
  std::size_t frames = 0;
  if (format_ == BitFormat::text) {
    std::size_t bits = 0;
    out.resize(max_frames * frame_bits_);
    int c;
    while (bits < out.size() && (c = in_.get()) != EOF) {
      ++offset_;
      if (c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == ',') continue;
      if (c != '0' && c != '1') {
        error_ = fmt::format("{}: byte {} (frame {}, bit {}): '{}' is not a bit (0 or 1)", source_,
                             offset_ - 1, frames_ + bits / frame_bits_, bits % frame_bits_,
                             detail_char(c));
        done_ = true;
        break;
      }
      out[bits++] = c == '1';
    }
    frames = bits / frame_bits_;
    if (!done_ && bits < out.size()) {
      done_ = true;
      if (bits % frame_bits_) {
        error_ = fmt::format(
            "{}: ends with a partial frame: {} bits after frame {} (frames are {} bits)", source_,
            bits % frame_bits_, frames_ + frames, frame_bits_);
      }
    }
    out.resize(frames * frame_bits_);
  } else {
    const std::size_t frame_bytes =
        format_ == BitFormat::packed ? (frame_bits_ + 7) / 8 : frame_bits_;
    raw_.resize(max_frames * frame_bytes);
    in_.read(raw_.data(), static_cast<std::streamsize>(raw_.size()));
    const auto got = static_cast<std::size_t>(in_.gcount());
    frames = got / frame_bytes;
    out.resize(frames * frame_bits_);
    for (std::size_t f = 0; f < frames; ++f) {
      for (std::size_t i = 0; i < frame_bits_; ++i) {
        if (format_ == BitFormat::packed) {
          out[f * frame_bits_ + i] =
              (static_cast<unsigned char>(raw_[f * frame_bytes + i / 8]) >> (7 - i % 8)) & 1u;
          continue;
        }
        const auto b = static_cast<unsigned char>(raw_[f * frame_bytes + i]);
        if (b > 1) {
          error_ = fmt::format("{}: byte {} (frame {}, bit {}): value {} is not a bit (0 or 1)",
                               source_, offset_ + f * frame_bytes + i, frames_ + f, i, b);
          done_ = true;
          frames = f;
          break;
        }
        out[f * frame_bits_ + i] = b;
      }
      if (done_) break;
    }
    out.resize(frames * frame_bits_);
    offset_ += frames * frame_bytes;
    if (!done_ && got < raw_.size()) {
      done_ = true;
      if (got % frame_bytes) {
        error_ = fmt::format(
            "{}: ends with a partial frame: {} bytes at byte {} after frame {} (frames are {} "
            "bytes)",
            source_, got % frame_bytes, offset_, frames_ + frames, frame_bytes);
      }
    }
  }
  frames_ += frames;
  // No frame at all is an error, as for captures (encode of an empty input is never intended).
  if (done_ && !error_ && frames_ == 0) error_ = fmt::format("{}: empty input: no frames", source_);
  return frames;
}

std::size_t PunctureMap::transmitted() const {
  return static_cast<std::size_t>(std::count(state.begin(), state.end(), sent));
}

SampleConverter::SampleConverter(PunctureMap map, SampleMeaning meaning,
                                 std::optional<double> noise_variance)
    : map_(std::move(map)), received_(map_.transmitted()) {
  if (meaning == SampleMeaning::samples && !noise_variance) {
    throw Error(
        "meaning samples needs noise_variance (the noise variance sigma^2 per real sample)");
  }
  if (meaning != SampleMeaning::samples && noise_variance)
    throw Error("noise_variance applies to meaning samples only");
  if (noise_variance && !(*noise_variance > 0 && std::isfinite(*noise_variance)))
    throw Error(fmt::format("noise_variance must be positive, got {}", *noise_variance));
  factor_ = meaning == SampleMeaning::llr
                ? 1.0
                : (meaning == SampleMeaning::llr_inverted ? -1.0 : 2.0 / *noise_variance);
}

void SampleConverter::convert(std::span<const double> values, std::span<double> llr) const {
  const std::size_t frames = received_ ? values.size() / received_ : 0;
  if (values.size() != frames * received_ || llr.size() != frames * n()) {
    throw Error(fmt::format("convert: {} values are not whole frames of {} giving {} LLRs of {}",
                            values.size(), received_, llr.size(), n()));
  }
  for (std::size_t f = 0; f < frames; ++f) {
    const std::span<double> out = llr.subspan(f * n(), n());
    std::size_t j = 0;
    for (std::size_t i = 0; i < n(); ++i) {
      const PunctureMap::State s = map_.state[i];
      out[i] = s == PunctureMap::sent
                   ? factor_ * values[f * received_ + j++]
                   : (s == PunctureMap::punctured ? 0.0 : std::numeric_limits<double>::infinity());
    }
  }
}

PunctureMap read_puncture_map(const std::string& path, std::size_t n) {
  return parse_puncture_map(read_text_file(path), path, n);  // refuses directories, huge files
}

PunctureMap parse_puncture_map(std::string_view text, const std::string& path, std::size_t n) {
  std::istringstream in{std::string(text)};
  PunctureMap map{std::vector<PunctureMap::State>(n, PunctureMap::sent)};
  std::string line;
  for (std::size_t number = 1; std::getline(in, line); ++number) {
    line = line.substr(0, line.find('#'));
    for (char& c : line) c = c == ',' ? ' ' : c;
    std::istringstream words(line);
    std::string kind, item;
    if (!(words >> kind)) continue;
    if (kind != "punctured" && kind != "shortened") {
      throw Error(fmt::format("{}:{}: expected 'punctured' or 'shortened', found '{}'", path,
                              number, kind));
    }
    while (words >> item) {
      const auto dash = item.find('-', 1);
      const auto a = parse_count(std::string_view(item).substr(0, dash));
      const auto b = dash == std::string::npos ? a : parse_count(item.substr(dash + 1));
      if (!a || !b)
        throw Error(fmt::format("{}:{}: '{}' is not an index or a range A-B", path, number, item));
      if (*a > *b) {
        throw Error(fmt::format("{}:{}: range '{}' runs backwards (write it as {}-{})", path,
                                number, item, *b, *a));
      }
      if (*b >= n)
        throw Error(fmt::format("{}:{}: '{}' is outside 0..{}", path, number, item, n - 1));
      for (std::uint64_t i = *a; i <= *b; ++i) {
        if (map.state[i] != PunctureMap::sent)
          throw Error(fmt::format("{}:{}: position {} is listed twice", path, number, i));
        map.state[i] = kind == "punctured" ? PunctureMap::punctured : PunctureMap::shortened;
      }
    }
  }
  if (map.transmitted() == 0)
    throw Error(fmt::format("{}: every position is punctured or shortened", path));
  return map;
}

}  // namespace tannery
