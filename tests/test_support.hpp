// Helpers shared by the doctest programs.
#pragma once

#include <doctest/doctest.h>

#include <cmath>
#include <string>

// Relative tolerance, independent of magnitude (doctest's Approx has an absolute floor
// of ~1e-5 through its default scale of 1; see shared REFERENCES.md §0).
#define CHECK_REL(actual, expected, rtol) CHECK((actual) == doctest::Approx(expected).epsilon(rtol).scale(0.0))
#define REQUIRE_REL(actual, expected, rtol) REQUIRE((actual) == doctest::Approx(expected).epsilon(rtol).scale(0.0))
// For expected values that are exactly 0, or absolute tolerances.
#define CHECK_ABS(actual, expected, atol) CHECK(std::fabs((actual) - (expected)) <= (atol))

namespace vzero::test {

// Path of a file under tests/data.
inline std::string data(const std::string& name) { return std::string(VZERO_TEST_DATA) + "/" + name; }
// Path of a file in the source tree (e.g. "demo-data/hydrolase_wide.csv").
inline std::string source(const std::string& name) { return std::string(VZERO_SOURCE_DIR) + "/" + name; }

}  // namespace vzero::test

#include <sys/wait.h>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>

namespace vzero::test {

inline std::string slurp(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

inline void spit(const std::string& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
}

// A fresh folder under the system temp dir, removed when the object dies.
struct TempDir {
  std::filesystem::path path;
  TempDir() {
    std::string tmpl = (std::filesystem::temp_directory_path() / "vzero-test-XXXXXX").string();
    path = mkdtemp(tmpl.data());
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path, ec);
  }
  std::string operator/(const std::string& name) const { return (path / name).string(); }
};

struct CommandResult {
  int status = -1;
  std::string out, err, command;
  std::string describe() const {
    return "command: " + command + "\nstatus: " + std::to_string(status) + "\nstdout:\n" + out + "\nstderr:\n" + err;
  }
};

// Runs the vzero binary with `args` (a shell-quoted string) in folder `dir`.
inline CommandResult run_vzero(const std::string& args, const std::string& dir = ".") {
  TempDir io;
  CommandResult r;
  r.command = "cd '" + dir + "' && '" + std::string(VZERO_BINARY) + "' " + args;
  std::string full = r.command + " >'" + (io / "out") + "' 2>'" + (io / "err") + "' </dev/null";
  int rc = std::system(full.c_str());
  r.status = WIFEXITED(rc) ? WEXITSTATUS(rc) : -1;
  r.out = slurp(io / "out");
  r.err = slurp(io / "err");
  return r;
}

}  // namespace vzero::test
