#include "fuzz/fuzz_support.hpp"

#include "core/rational.hpp"

#include <sys/mman.h>
#include <unistd.h>

#include <CLI/CLI.hpp>

#include <stdexcept>

#ifndef PLEAT_SOURCE_DIR
#error "PLEAT_SOURCE_DIR must name the source tree (fuzz/CMakeLists.txt)"
#endif

namespace pleat::fuzz {

InputFile::InputFile(const std::uint8_t* data, std::size_t size) {
  descriptor_ = memfd_create("pleat-fuzz-input", MFD_CLOEXEC);
  if (descriptor_ < 0) throw std::runtime_error("memfd_create failed");
  for (std::size_t written = 0; written < size;) {
    const ssize_t count = ::write(descriptor_, data + written, size - written);
    if (count <= 0) throw std::runtime_error("writing the fuzz input failed");
    written += static_cast<std::size_t>(count);
  }
  path_ = "/proc/self/fd/" + std::to_string(descriptor_);
}

InputFile::~InputFile() { ::close(descriptor_); }

std::string source_file(std::string_view relative) { return std::string(PLEAT_SOURCE_DIR) + "/" + std::string(relative); }

std::string scratch_path(std::string_view name) {
  return "/tmp/pleat-fuzz-" + std::to_string(::getpid()) + "-" + std::string(name);
}

int run_subcommand(void (*register_command)(cli::CommandTable&), const std::vector<std::string>& arguments) {
  CLI::App app{"pleat (fuzz)", "pleat"};
  app.require_subcommand(1, 1);
  cli::CommandTable commands(app);
  register_command(commands);
  std::vector<const char*> argv{"pleat"};
  for (const auto& argument : arguments) argv.push_back(argument.c_str());
  try {
    app.parse(static_cast<int>(argv.size()), const_cast<char**>(argv.data()));
    return commands.run_selected();
  } catch (const CLI::ParseError&) {
    return 2;
  } catch (const input_error&) {
    return 2;
  } catch (const usage_error&) {
    return 2;
  }
}

}  // namespace pleat::fuzz
