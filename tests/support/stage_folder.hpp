#pragma once
// For tests that run the cullcast program itself on files they write: a
// scratch folder of the test's own, and the program run with its standard
// output and error captured there.
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

// <temp>/cullcast-<name>-<pid>, emptied on construction and removed on
// destruction (the pid keeps parallel CTest processes apart).
struct StageFolder {
  std::filesystem::path dir;
  explicit StageFolder(const std::string& name)
      : dir(std::filesystem::temp_directory_path() / ("cullcast-" + name + "-" + std::to_string(::getpid()))) {
    std::filesystem::remove_all(dir);
  }
  StageFolder(const StageFolder&) = delete;
  StageFolder& operator=(const StageFolder&) = delete;
  ~StageFolder() {
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
