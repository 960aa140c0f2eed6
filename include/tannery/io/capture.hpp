// Soft-bit capture files: consecutive frames of n values, little-endian binary.
#pragma once

#include <span>
#include <string>

namespace tannery {

// Appends the values as float32 little-endian (readable as numpy.fromfile(path, dtype='<f4')).
void append_f32_le(std::string& out, std::span<const float> values);

}  // namespace tannery
