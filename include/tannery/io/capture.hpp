// Soft-bit capture files: consecutive frames of a fixed number of values.
//
// Binary encodings are little-endian with no header: f32 and f64 (IEEE 754), i8 and i16 (two's
// complement integers multiplied by a scale factor, as fixed-point receivers emit them). A file
// of f32 frames of n values reads as numpy.fromfile(path, dtype='<f4').reshape(-1, n). The text
// encoding is numbers separated by whitespace or commas; when the first line holds exactly one
// frame, every line is a frame and a line with another count is an error naming it; otherwise
// line breaks carry no meaning.
#pragma once

#include <cstdint>
#include <iosfwd>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "tannery/names.hpp"

namespace tannery {

enum class SampleFormat { f32, f64, i8, i16, text };

template <>
struct Names<SampleFormat> {
  static constexpr std::string_view setting = "input format";
  static constexpr std::pair<SampleFormat, std::string_view> table[] = {
      {SampleFormat::f32, "f32"}, {SampleFormat::f64, "f64"},   {SampleFormat::i8, "i8"},
      {SampleFormat::i16, "i16"}, {SampleFormat::text, "text"},
  };
};
std::size_t sample_bytes(SampleFormat f);  // 0 for text

// Appends the values as float32 little-endian.
void append_f32_le(std::string& out, std::span<const float> values);
// Appends values in any encoding; integers are round(value / scale), saturated to the symmetric
// range +-(2^(bits-1) - 1) (+-Inf become +-127 for i8 alike).
void append_samples(std::string& out, std::span<const double> values, SampleFormat format,
                    double scale);

// Reads frames of frame_values values, in constant memory. A bad value (NaN, not a number) or a
// trailing partial frame ends the good data: read() returns the complete frames before it and
// error() then holds a one-line message naming the byte offset, the frame and the value.
class CaptureReader {
 public:
  CaptureReader(std::istream& in, std::string source, SampleFormat format, double scale,
                std::size_t frame_values);

  // Appends up to max_frames frames (frame_values doubles each, already scaled) to out, replacing
  // its contents; returns the number of frames. 0 means the end (check error()).
  std::size_t read(std::size_t max_frames, std::vector<double>& out);
  const std::optional<std::string>& error() const noexcept { return error_; }
  std::uint64_t frames_read() const noexcept { return frames_; }
  std::uint64_t bytes_read() const noexcept { return offset_; }

 private:
  std::size_t read_binary(std::size_t max_frames, std::vector<double>& out);
  std::size_t read_text(std::size_t max_frames, std::vector<double>& out);
  bool next_token(std::string& token, std::uint64_t& at, std::uint64_t& line);
  void fail_value(std::uint64_t byte, std::uint64_t index, const std::string& what);
  // Text: the line of the tokens read so far ends; false (error_ set) when lines are frames
  // and it holds another number of values.
  bool close_line();
  // Text: skips separators; true when the line (or the input) ends before another value.
  bool line_ends_next();

  std::istream& in_;
  std::string source_;
  SampleFormat format_;
  double scale_;
  std::size_t frame_values_;
  std::uint64_t frames_ = 0;
  std::uint64_t offset_ = 0;  // bytes consumed
  std::uint64_t line_ = 1;
  int lines_are_frames_ = -1;     // text: unknown until the first line ends, 0 or 1
  std::uint64_t token_line_ = 0;  // text: line of the last token (0: none yet)
  std::size_t line_values_ = 0;   // text: values on that line
  std::vector<char> raw_;
  std::optional<std::string> error_;
  bool done_ = false;
};

// Positions of a code that a capture does not carry: punctured (not transmitted: LLR 0) or
// shortened (known to be 0: LLR +Inf). File format: lines "punctured LIST" or "shortened LIST",
// LIST being indices (0-based) and ranges A-B separated by spaces or commas; '#' comments.
struct PunctureMap {
  enum State : std::uint8_t { sent, punctured, shortened };
  static PunctureMap all_sent(std::size_t n) { return {std::vector<State>(n, sent)}; }
  std::vector<State> state;  // per code position
  std::size_t transmitted() const;
};
PunctureMap read_puncture_map(const std::string& path, std::size_t n);
// The same from the file's text; source names it in errors.
PunctureMap parse_puncture_map(std::string_view text, const std::string& source, std::size_t n);

// What the values of a capture mean: LLRs log P(0)/P(1) (positive = 0), LLRs of the opposite
// sign (positive = 1), or BPSK channel samples y = x + noise with 0 sent as x = +1 and Gaussian
// noise of variance sigma^2 per sample, whose LLR is 2y / sigma^2.
enum class SampleMeaning { llr, llr_inverted, samples };

template <>
struct Names<SampleMeaning> {
  static constexpr std::string_view setting = "meaning";
  static constexpr std::pair<SampleMeaning, std::string_view> table[] = {
      {SampleMeaning::llr, "llr"},
      {SampleMeaning::llr_inverted, "llr-inverted"},
      {SampleMeaning::samples, "samples"},
  };
};

// Captured frames to channel LLRs of the whole code: each value times the meaning's factor, then
// expanded through the puncture map (punctured positions LLR 0, shortened +Inf: known 0 whatever
// the sign convention of the capture).
class SampleConverter {
 public:
  // noise_variance: sigma^2, needed by (and only by) samples. Error naming the setting otherwise.
  SampleConverter(PunctureMap map, SampleMeaning meaning = SampleMeaning::llr,
                  std::optional<double> noise_variance = std::nullopt);

  std::size_t received() const noexcept { return received_; }   // values per captured frame
  std::size_t n() const noexcept { return map_.state.size(); }  // LLRs per frame
  double factor() const noexcept { return factor_; }            // LLR = factor() x value
  // values: frames x received(); llr: frames x n(), the same number of frames.
  void convert(std::span<const double> values, std::span<double> llr) const;

 private:
  PunctureMap map_;
  std::size_t received_;
  double factor_;
};

// Hard bits, one frame of a fixed length after another: text (characters 0/1, one frame per
// line when written, whitespace ignored when read), packed (each frame padded to whole bytes,
// first bit in the most significant bit) or bytes (one byte 0 or 1 per bit).
enum class BitFormat { text, packed, bytes };
template <>
struct Names<BitFormat> {
  static constexpr std::string_view setting = "output format";
  static constexpr std::pair<BitFormat, std::string_view> table[] = {
      {BitFormat::text, "text"}, {BitFormat::packed, "packed"}, {BitFormat::bytes, "bytes"}};
};
void append_bits(std::string& out, std::span<const std::uint8_t> bits, BitFormat format);

// Reads frames of frame_bits bits, like CaptureReader: a bad character or a partial frame ends
// the good data and error() names the byte offset and frame.
class BitFrameReader {
 public:
  BitFrameReader(std::istream& in, std::string source, BitFormat format, std::size_t frame_bits);
  std::size_t read(std::size_t max_frames, std::vector<std::uint8_t>& out);
  const std::optional<std::string>& error() const noexcept { return error_; }
  std::uint64_t frames_read() const noexcept { return frames_; }

 private:
  std::istream& in_;
  std::string source_;
  BitFormat format_;
  std::size_t frame_bits_;
  std::uint64_t frames_ = 0, offset_ = 0;
  std::vector<char> raw_;
  std::optional<std::string> error_;
  bool done_ = false;
};

}  // namespace tannery
