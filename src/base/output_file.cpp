#include "tannery/base/output_file.hpp"

#include <fcntl.h>
#include <fmt/format.h>
#include <unistd.h>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <utility>

#include "tannery/error.hpp"

namespace tannery {

namespace {

// Copies a file from its beginning to another stream; false on a read or write error.
bool copy_from_start(std::FILE* from, std::FILE* to) {
  std::rewind(from);
  char buffer[1 << 16];
  for (std::size_t got; (got = std::fread(buffer, 1, sizeof buffer, from)) > 0;) {
    if (std::fwrite(buffer, 1, got, to) != got) return false;
  }
  return !std::ferror(from) && std::fflush(to) == 0;
}

}  // namespace

OutputFile::OutputFile(std::string path, bool hold_stdout) : path_(std::move(path)) {
  if (path_.empty()) return;
  if (path_ == "-" && !hold_stdout) {
    file_ = stdout;
    to_stdout_ = true;
    return;
  }
  // A device, pipe or socket is written in place: renaming a temporary file over it would
  // replace it by a regular file (e.g. /dev/null when run as root).
  if (written_in_place(path_)) {
    file_ = std::fopen(path_.c_str(), "wb");
    if (!file_) throw Error(fmt::format("{}: cannot open for writing", path_));
    in_place_ = true;
    return;
  }
  if (path_ == "-") {  // held standard output: an unnamed file, copied out by commit()
    file_ = std::tmpfile();
    if (!file_)
      throw Error(fmt::format("-: cannot create a temporary file: {}", std::strerror(errno)));
    return;
  }
  // An unnamed file in the destination's directory (O_TMPFILE): a process killed before commit()
  // leaves nothing behind. It gets a name only in commit(), just before the rename. Where the file
  // system has no unnamed files, a named temporary file is written instead.
  const std::filesystem::path dir = std::filesystem::path(path_).parent_path();
  const int fd = ::open(dir.empty() ? "." : dir.c_str(), O_TMPFILE | O_RDWR | O_CLOEXEC, 0666);
  if (fd >= 0) {
    file_ = ::fdopen(fd, "w+b");
    if (!file_) ::close(fd);
    unnamed_ = file_ != nullptr;
  }
  temp_ = fmt::format("{}.tmp.{}", path_, ::getpid());
  if (!file_) file_ = std::fopen(temp_.c_str(), "wb");
  if (!file_) throw Error(fmt::format("{}: cannot create file: {}", path_, std::strerror(errno)));
}

bool OutputFile::written_in_place(const std::string& path) {
  std::error_code ec;
  const auto status = std::filesystem::status(path, ec);
  return !ec && std::filesystem::exists(status) && !std::filesystem::is_regular_file(status) &&
         !std::filesystem::is_directory(status);
}

void OutputFile::check_creatable(const std::string& path) {
  std::error_code ec;
  if (path.empty() || path == "-" || written_in_place(path) ||
      std::filesystem::is_directory(path, ec)) {
    return;  // standard output, or a device or directory that opening will judge
  }
  const std::filesystem::path parent = std::filesystem::path(path).parent_path();
  const std::string dir = parent.empty() ? "." : parent.string();
  const int fd = ::open(dir.c_str(), O_TMPFILE | O_WRONLY | O_CLOEXEC, 0600);
  if (fd >= 0) {
    ::close(fd);
    return;
  }
  if ((errno == EOPNOTSUPP || errno == EISDIR) && ::access(dir.c_str(), W_OK | X_OK) == 0) return;
  throw Error(fmt::format("{}: cannot create a file in {}: {}", path, dir, std::strerror(errno)));
}

OutputFile::~OutputFile() {
  abandon();
}

void OutputFile::write(std::string_view data) {
  if (!file_ || data.empty()) return;
  if (std::fwrite(data.data(), 1, data.size(), file_) != data.size()) {
    throw Error(fmt::format("{}: write failed: {}", path_, std::strerror(errno)));
  }
}

void OutputFile::commit() {
  if (!file_) return;
  if (to_stdout_) {
    std::fflush(stdout);
    file_ = nullptr;
    return;
  }
  if (std::fflush(file_) != 0) {
    const int error = errno;
    abandon();
    throw Error(fmt::format("{}: write failed: {}", path_, std::strerror(error)));
  }
  if (in_place_) return;
  std::FILE* file = std::exchange(file_, nullptr);
  if (path_ == "-") {
    copy_from_start(file, stdout);
    std::fclose(file);
    std::fflush(stdout);
    return;
  }
  if (unnamed_) {
    // Named by a hard link to the open file; without /proc, by a copy.
    std::remove(temp_.c_str());  // left by an earlier process with this pid
    const std::string self = fmt::format("/proc/self/fd/{}", ::fileno(file));
    if (::linkat(AT_FDCWD, self.c_str(), AT_FDCWD, temp_.c_str(), AT_SYMLINK_FOLLOW) != 0) {
      std::FILE* named = std::fopen(temp_.c_str(), "wb");
      bool copied = named && copy_from_start(file, named);
      if (named) copied = std::fclose(named) == 0 && copied;
      if (!copied) {
        const int error = errno;
        std::fclose(file);
        std::remove(temp_.c_str());
        throw Error(
            fmt::format("{}: cannot name the finished file: {}", path_, std::strerror(error)));
      }
    }
  }
  std::fclose(file);
  std::error_code ec;
  std::filesystem::rename(temp_, path_, ec);
  if (ec) {
    // Nothing computed is lost: the finished output stays in the temporary file.
    throw Error(fmt::format("{}: cannot rename into place ({}); the output is kept in {}", path_,
                            ec.message(), temp_));
  }
}

int OutputFile::descriptor() {
  if (!file_) return -1;
  if (std::fflush(file_) != 0)
    throw Error(fmt::format("{}: write failed: {}", path_, std::strerror(errno)));
  return ::fileno(file_);
}

void OutputFile::abandon() {
  if (!file_) return;
  if (to_stdout_) {
    std::fflush(stdout);
  } else {
    std::fclose(file_);
    if (!in_place_ && !unnamed_ && path_ != "-") std::remove(temp_.c_str());
  }
  file_ = nullptr;
}

void write_file_atomically(const std::string& path, std::string_view content) {
  OutputFile out(path, false);
  out.write(content);
  out.commit();
}

}  // namespace tannery
