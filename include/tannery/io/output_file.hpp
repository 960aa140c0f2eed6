// An output written progressively but published atomically: data goes to a temporary file next
// to the destination, renamed into place by commit(); "-" streams to standard output (or, when
// held, is kept in a temporary file and copied there by commit()); a destination that exists and
// is no regular file (a device such as /dev/null, a pipe) is written in place, never replaced.
#pragma once

#include <cstdio>
#include <string>
#include <string_view>

namespace tannery {

class OutputFile {
 public:
  OutputFile() = default;
  // path empty: a disabled output that ignores writes. hold_stdout: buffer "-" until commit.
  OutputFile(std::string path, bool hold_stdout);
  OutputFile(const OutputFile&) = delete;
  OutputFile& operator=(const OutputFile&) = delete;
  ~OutputFile();

  bool enabled() const noexcept { return file_ != nullptr; }
  void write(std::string_view data);
  void commit();   // publish what was written; if the rename fails, the temporary file stays
  void abandon();  // remove the temporary file

 private:
  std::string path_, temp_;
  std::FILE* file_ = nullptr;
  bool to_stdout_ = false;
  bool in_place_ = false;
};

}  // namespace tannery
