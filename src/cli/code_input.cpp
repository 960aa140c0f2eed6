#include <fmt/format.h>
#include <spawn.h>
#include <sys/wait.h>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <iostream>
#include <memory>
#include <numeric>
#include <sstream>

#include "commands.hpp"
#include "settings_options.hpp"
#include "tannery/error.hpp"
#include "tannery/io/code_lookup.hpp"

namespace tannery::cli {

void CodeInput::add_to(CLI::App& sub, bool positional, const std::string& default_code) {
  const std::string help = fmt::format(
      "parity-check matrix: a file (tannery, alist, mtx, qc or dense format, detected from its "
      "content; "
      "'-' = stdin) or a shipped code name ({})",
      fmt::join(shipped_code_names(), ", "));
  code = default_code;
  auto* opt =
      positional ? sub.add_option("CODE", code, help) : sub.add_option("--code", code, help);
  if (default_code.empty())
    opt->required();
  else
    opt->capture_default_str();
  // Format options name the file they describe: --code-format (the matrix), --input-format and
  // --output-format (captures and bits); --from is convert's name, --format the older one.
  sub.add_option("--code-format,--from,--format", format,
                 "matrix format of CODE, instead of detecting it")
      ->check(names_of<MatrixFormat>());
  sub.add_option("--lifting", lifting,
                 "lifting size Z (circulant size) for a qc base table that does not state it")
      ->check(CLI::Range(1, 1 << 20));
}

std::istream& open_input(const std::string& path, std::ifstream& file) {
  if (path == "-") return std::cin;
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec))
    throw Error(fmt::format("{}: is a directory, not a file", path));
  file.open(path, std::ios::binary);
  if (!file) throw Error(fmt::format("{}: cannot open file", path));
  return file;
}

Encoder make_encoder(const Code& code, bool systematic_first) {
  Encoder chosen(code);
  if (chosen.k() == 0)
    throw Error("the code has dimension k = 0: it carries no information bits to encode or decode");
  if (!systematic_first) return chosen;
  std::vector<std::uint32_t> first(chosen.k());
  std::iota(first.begin(), first.end(), 0u);
  try {
    return Encoder(code, first);
  } catch (const Error& e) {
    throw Error(fmt::format("--systematic-first: {}", e.what()));
  }
}

namespace {

// in, out: descriptors for the program's standard input and output, -1 to inherit them.
int spawn_and_wait(const std::vector<std::string>& args, int in, int out) {
  std::vector<char*> argv;
  for (const auto& a : args) argv.push_back(const_cast<char*>(a.c_str()));
  argv.push_back(nullptr);
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  if (in >= 0) posix_spawn_file_actions_adddup2(&actions, in, STDIN_FILENO);
  if (out >= 0) posix_spawn_file_actions_adddup2(&actions, out, STDOUT_FILENO);
  pid_t pid = 0;
  const int spawned = posix_spawnp(&pid, argv[0], &actions, nullptr, argv.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  if (spawned != 0) return -1;
  int status = 0;
  while (waitpid(pid, &status, 0) < 0) {
    if (errno != EINTR) return -1;
  }
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

}  // namespace

int run_program(const std::vector<std::string>& args) {
  return spawn_and_wait(args, -1, -1);
}

int run_converter(const std::vector<std::string>& args, std::string_view input, OutputFile& out) {
  const std::unique_ptr<std::FILE, int (*)(std::FILE*)> source(std::tmpfile(), &std::fclose);
  if (!source || std::fwrite(input.data(), 1, input.size(), source.get()) != input.size() ||
      std::fflush(source.get()) != 0) {
    throw Error(
        fmt::format("cannot write a temporary file for {}: {}", args[0], std::strerror(errno)));
  }
  std::rewind(source.get());
  return spawn_and_wait(args, ::fileno(source.get()), out.descriptor());
}

const CLI::Validator kNonNegative(
    [](std::string& value) -> std::string {
      return value.find('-') == std::string::npos ? "" : "must be 0 or more, got " + value;
    },
    "", "non-negative");

std::string count_of(std::uint64_t count, std::string_view noun) {
  return fmt::format("{} {}{}", count, noun, count == 1 ? "" : "s");
}

namespace {

// Whether two path arguments name the same file (both "-" counts as the same stream).
bool same_file(const std::string& a, const std::string& b) {
  if (a == "-" || b == "-") return a == b;
  std::error_code ec;
  if (std::filesystem::exists(a, ec) && std::filesystem::exists(b, ec))
    return std::filesystem::equivalent(a, b, ec);
  return std::filesystem::weakly_canonical(a, ec) == std::filesystem::weakly_canonical(b, ec);
}

}  // namespace

void check_paths(const std::vector<PathArgument>& inputs,
                 const std::vector<PathArgument>& outputs) {
  auto used = [](const PathArgument& p) { return !p.path.empty(); };
  auto shareable = [](const PathArgument& p) {
    return p.path != "-" && OutputFile::written_in_place(p.path);
  };
  for (std::size_t i = 0; i < inputs.size(); ++i) {
    for (std::size_t j = i + 1; j < inputs.size(); ++j) {
      if (used(inputs[i]) && used(inputs[j]) && inputs[i].path == "-" && inputs[j].path == "-") {
        throw Error(fmt::format("{} and {} cannot both read standard input", inputs[i].option,
                                inputs[j].option));
      }
    }
  }
  for (std::size_t i = 0; i < outputs.size(); ++i) {
    if (!used(outputs[i]) || shareable(outputs[i])) continue;
    OutputFile::check_creatable(outputs[i].path);
    for (std::size_t j = i + 1; j < outputs.size(); ++j) {
      if (used(outputs[j]) && same_file(outputs[i].path, outputs[j].path)) {
        throw Error(fmt::format("{} and {} would both write {}", outputs[i].option,
                                outputs[j].option,
                                outputs[i].path == "-" ? "standard output" : outputs[i].path));
      }
    }
    for (const PathArgument& in : inputs) {
      if (used(in) && outputs[i].path != "-" && same_file(in.path, outputs[i].path)) {
        throw Error(fmt::format("{} {} is also the input {}: refusing to overwrite an input",
                                outputs[i].option, outputs[i].path, in.option));
      }
    }
  }
}

Code CodeInput::load() const {
  ReadOptions options;
  if (!format.empty()) options.format = from_name<MatrixFormat>(format);
  options.lifting = lifting;
  return load_code(code, options);
}

}  // namespace tannery::cli
