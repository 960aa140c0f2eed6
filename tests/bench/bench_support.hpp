// Helpers for the benchmarks.
#pragma once

#include <cstdio>
#include <cstring>

namespace tannery::bench {

// Peak resident memory of this process so far, in MiB (VmHWM from /proc/self/status).
inline double peak_rss_mib() {
  std::FILE* f = std::fopen("/proc/self/status", "r");
  if (!f) return 0;
  char line[256];
  double kib = 0;
  while (std::fgets(line, sizeof line, f)) {
    if (std::strncmp(line, "VmHWM:", 6) == 0) kib = std::atof(line + 6);
  }
  std::fclose(f);
  return kib / 1024.0;
}

}  // namespace tannery::bench
