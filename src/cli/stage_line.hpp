// A one-line progress display for commands that run in stages (floor search, protograph search).
#pragma once

#include <fmt/format.h>
#include <cstdio>
#include <string>

namespace tannery::cli {

// A progress line on standard error (only on a terminal), ended by finish().
class StageLine {
 public:
  explicit StageLine(bool enabled) : enabled_(enabled) {}
  void show(const std::string& text) {
    if (!enabled_) return;
    fmt::print(stderr, "\r  {:<70}", text);
    std::fflush(stderr);
    open_ = true;
  }
  void finish() {
    if (open_) fmt::print(stderr, "\n");
    open_ = false;
  }

 private:
  bool enabled_, open_ = false;
};

}  // namespace tannery::cli
