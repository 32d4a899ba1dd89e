// Running the built command-line tool from a test: a scratch folder per test (removed
// afterwards), the tool's view-factor cache inside it, stdout and stderr captured. Header-only:
// the tool's path comes from the HEARTHRAY_CLI macro of the test executable including it.
#pragma once

#include <sys/wait.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#ifndef HEARTHRAY_CLI
#error "cli_run.hpp needs HEARTHRAY_CLI, the path of the built hearthray executable"
#endif

namespace hearthray::testing {

struct CliResult {
  // Exit status; a crash shows as 128 + signal (the shell reports it so), or -1.
  int status = -1;
  std::string out, err;
};

inline std::string slurp(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

inline void write_text(const std::filesystem::path& p, const std::string& text) {
  std::ofstream(p, std::ios::binary) << text;
}

// A fresh folder under the system's temporary folder, named after the test and the process
// (tests of several builds may run at once), removed when the object goes.
class ScratchDir {
 public:
  explicit ScratchDir(const std::string& name)
      : path_(std::filesystem::temp_directory_path() /
              ("hearthray-" + name + "-" + std::to_string(::getpid()))) {
    std::filesystem::remove_all(path_);
    std::filesystem::create_directories(path_);
  }
  ~ScratchDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  ScratchDir(const ScratchDir&) = delete;
  ScratchDir& operator=(const ScratchDir&) = delete;

  const std::filesystem::path& path() const { return path_; }
  std::filesystem::path operator/(const std::string& name) const { return path_ / name; }
  std::string cache() const { return (path_ / "cache").string(); }

 private:
  std::filesystem::path path_;
};

// Runs `hearthray <args>` with HEARTHRAY_CACHE set to the scratch folder's cache.
inline CliResult run_cli(const std::string& args, const ScratchDir& dir) {
  const std::string out = (dir / "stdout.txt").string(), err = (dir / "stderr.txt").string();
  const std::string cmd = "HEARTHRAY_CACHE='" + dir.cache() + "' " + HEARTHRAY_CLI + " " + args +
                          " >'" + out + "' 2>'" + err + "'";
  CliResult r;
  const int raw = std::system(cmd.c_str());
  r.status = WIFEXITED(raw) ? WEXITSTATUS(raw) : -1;
  r.out = slurp(out);
  r.err = slurp(err);
  return r;
}

}  // namespace hearthray::testing
