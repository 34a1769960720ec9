#pragma once
// For tests that write their own input files: a scratch folder of the
// test's own, and the cullcast program run there with its standard output and
// error captured.
#include <sys/wait.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <system_error>

namespace cullcast::test {

inline std::string read_all(const std::filesystem::path& p) {
  std::ifstream in(p);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

// <temp>/cullcast-<name>-<pid>, created empty and removed on destruction
// (the pid keeps parallel CTest processes apart).
struct ScratchFolder {
  std::filesystem::path dir;
  explicit ScratchFolder(const std::string& name)
      : dir(std::filesystem::temp_directory_path() / ("cullcast-" + name + "-" + std::to_string(::getpid()))) {
    std::filesystem::remove_all(dir);
    std::filesystem::create_directories(dir);
  }
  ScratchFolder(const ScratchFolder&) = delete;
  ScratchFolder& operator=(const ScratchFolder&) = delete;
  ~ScratchFolder() {
    std::error_code ignored;
    std::filesystem::remove_all(dir, ignored);
  }
  // `cullcast <args>`, output to dir/stdout and dir/stderr; its exit status.
  int run(const std::string& args) const {
    const std::string cmd = std::string(CULLCAST_EXE) + " " + args + " >" + (dir / "stdout").string() +
                            " 2>" + (dir / "stderr").string();
    return WEXITSTATUS(std::system(cmd.c_str()));
  }
};

}  // namespace cullcast::test
