#include "tannery/io/output_file.hpp"

#include <fmt/format.h>
#include <unistd.h>
#include <cerrno>
#include <cstring>
#include <filesystem>

#include "tannery/error.hpp"

namespace tannery {

OutputFile::OutputFile(std::string path, bool hold_stdout) : path_(std::move(path)) {
  if (path_.empty()) return;
  if (path_ == "-" && !hold_stdout) {
    file_ = stdout;
    to_stdout_ = true;
    return;
  }
  // A device, pipe or socket is written in place: renaming a temporary file over it would
  // replace it by a regular file (e.g. /dev/null when run as root).
  std::error_code ec;
  const auto status = std::filesystem::status(path_, ec);
  if (!ec && std::filesystem::exists(status) && !std::filesystem::is_regular_file(status) &&
      !std::filesystem::is_directory(status)) {
    file_ = std::fopen(path_.c_str(), "wb");
    if (!file_) throw Error(fmt::format("{}: cannot open for writing", path_));
    in_place_ = true;
    return;
  }
  temp_ = path_ == "-"
              ? fmt::format("/tmp/tannery-stdout.{}.{}", ::getpid(), static_cast<const void*>(this))
              : fmt::format("{}.tmp.{}", path_, ::getpid());
  file_ = std::fopen(temp_.c_str(), "wb");
  if (!file_) throw Error(fmt::format("{}: cannot create file", path_ == "-" ? temp_ : path_));
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
  const bool ok = std::fflush(file_) == 0;
  std::fclose(file_);
  file_ = nullptr;
  if (!ok) throw Error(fmt::format("{}: write failed: {}", path_, std::strerror(errno)));
  if (in_place_) return;
  if (path_ == "-") {
    std::FILE* in = std::fopen(temp_.c_str(), "rb");
    char buffer[1 << 16];
    for (std::size_t got; in && (got = std::fread(buffer, 1, sizeof buffer, in)) > 0;)
      std::fwrite(buffer, 1, got, stdout);
    if (in) std::fclose(in);
    std::fflush(stdout);
    std::remove(temp_.c_str());
    return;
  }
  std::error_code ec;
  std::filesystem::rename(temp_, path_, ec);
  if (ec) {
    // Nothing computed is lost: the finished output stays in the temporary file.
    throw Error(fmt::format("{}: cannot rename into place ({}); the output is kept in {}", path_,
                            ec.message(), temp_));
  }
}

void OutputFile::abandon() {
  if (!file_) return;
  if (to_stdout_) {
    std::fflush(stdout);
  } else {
    std::fclose(file_);
    if (!in_place_) std::remove(temp_.c_str());
  }
  file_ = nullptr;
}

}  // namespace tannery
