// An output written progressively but published atomically: data goes to an unnamed temporary
// file in the destination's directory (nothing is left behind if the process dies), named and
// renamed into place by commit(); "-" streams to standard output (or, when
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

  // Throws Error unless a file can be created where path would be written (its directory
  // exists and is writable): checked before long work, so that no result is lost at the end.
  static void check_creatable(const std::string& path);
  // Whether path is a device, pipe or socket, which is written in place (never replaced); several
  // outputs may share one (/dev/null).
  static bool written_in_place(const std::string& path);

  bool enabled() const noexcept { return file_ != nullptr; }
  void write(std::string_view data);
  void commit();   // publish what was written; if the rename fails, the temporary file stays
  void abandon();  // remove the temporary file
  // The open file's descriptor, everything written so far flushed: for a child process that
  // writes the output itself (a renderer's standard output). -1 when disabled.
  int descriptor();

 private:
  std::string path_, temp_;
  std::FILE* file_ = nullptr;
  bool to_stdout_ = false;
  bool in_place_ = false;
  bool unnamed_ = false;  // an O_TMPFILE file, named only at commit
};

// The whole content at once, published as an OutputFile is ("-" = standard output).
void write_file_atomically(const std::string& path, std::string_view content);

}  // namespace tannery
