// Whole-text number parsing shared by every reader and setting: the text must be exactly one
// number in plain decimal syntax (no blanks, no tail, no sign on a count), else the result is
// empty. Callers say in their own error message which value and where.
#pragma once

#include <cstdint>
#include <optional>
#include <string_view>

namespace tannery {

// 0, 1, 42 ... up to 2^64 - 1.
std::optional<std::uint64_t> parse_count(std::string_view text);
// Finite decimal numbers ("-2.5", "1e-3"); "inf", "nan", hex and out-of-range values are empty.
std::optional<double> parse_real(std::string_view text);

}  // namespace tannery
