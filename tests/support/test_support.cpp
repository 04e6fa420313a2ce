#include "test_support.hpp"

#include <atomic>
#include <cstdio>
#include <fstream>
#include <random>
#include <sstream>
#include <sys/wait.h>
#include <unistd.h>

namespace fulcrum::test {

std::filesystem::path temp_dir(const std::string& tag) {
  static std::atomic<int> counter{0};
  auto base = std::filesystem::temp_directory_path() /
              ("fulcrum-test-" + std::to_string(::getpid()));
  auto dir = base / (tag + "-" + std::to_string(counter++));
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir;
}

CommandResult run_shell(const std::string& command) {
  auto dir = temp_dir("cmd");
  auto out = dir / "stdout.txt";
  auto err = dir / "stderr.txt";
  std::string full = command + " >" + out.string() + " 2>" + err.string() + " </dev/null";
  int status = std::system(full.c_str());
  CommandResult r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
  r.out = slurp(out);
  r.err = slurp(err);
  std::filesystem::remove_all(dir);
  return r;
}

CommandResult run_fulcrum(const std::string& args) {
  return run_shell(std::string("OMP_NUM_THREADS=1 ") + FULCRUM_BINARY + " " + args);
}

CommandResult run_python(const std::string& script, const std::string& args) {
  return run_shell(std::string(FULCRUM_PYTHON) + " " + FULCRUM_SOURCE_DIR + "/tests/python/" +
                   script + " " + args);
}

std::string source_dir() { return FULCRUM_SOURCE_DIR; }

std::string slurp(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

std::vector<std::string> error_lines(const std::string& err) {
  std::vector<std::string> out;
  std::istringstream in(err);
  for (std::string l; std::getline(in, l);)
    if (l.rfind("fulcrum: ", 0) == 0 && l.rfind("fulcrum: warning", 0) != 0) out.push_back(l);
  return out;
}

}  // namespace fulcrum::test
