// `vzero profile list|show|check` and the user's profile folders (VZERO_PROFILES, then
// $XDG_CONFIG_HOME/vzero/profiles), tried by detection before the built-in profiles.
// Profiles and exports written here are invented.
#include <cstdlib>
#include <filesystem>
#include <nlohmann/json.hpp>

#include "test_support.hpp"

using namespace vzero::test;

namespace {

std::string demo(const std::string& f) { return "'" + source("demo-data/" + f) + "'"; }

// Each test case starts with no profile folder: a config folder of its own, no VZERO_PROFILES.
struct Folders {
  TempDir config;
  Folders() {
    ::setenv("XDG_CONFIG_HOME", config.path.c_str(), 1);
    ::unsetenv("VZERO_PROFILES");
  }
  ~Folders() { ::unsetenv("VZERO_PROFILES"); }
};

// A wide profile whose time column is called "Elapsed", which no built-in profile knows.
const char* k_elapsed = R"(name = "lab-elapsed"
description = "Our reader: time column Elapsed"
shape = "wide"
[columns]
time = ["Elapsed"]
)";
const char* k_elapsed_export = "Elapsed,A1,A2\n0,0.100,0.200\n30,0.110,0.220\n60,0.120,0.240\n";

}  // namespace

TEST_CASE("profile list names the built-ins and, once there are any, the user's profiles and folders") {
  Folders f;
  auto none = run_vzero("profile list");
  INFO(none.describe());
  CHECK(none.status == 0);
  for (const char* name : {"wide-generic", "wide-semicolon-comma", "grid-generic", "long-generic"})
    CHECK(none.out.find(std::string("  ") + name) != std::string::npos);
  CHECK(none.out.find("your profiles (tried first):\n  none\n") != std::string::npos);
  CHECK(none.out.find("none yet: set VZERO_PROFILES to a folder, or create " + (f.config / "vzero/profiles")) !=
        std::string::npos);
  TempDir lab;
  spit(lab / "elapsed.toml", k_elapsed);
  ::setenv("VZERO_PROFILES", lab.path.c_str(), 1);
  auto some = run_vzero("profile list");
  INFO(some.describe());
  CHECK(some.status == 0);
  CHECK(some.out.find("  lab-elapsed ") != std::string::npos);
  CHECK(some.out.find("from " + (lab / "elapsed.toml") + " (VZERO_PROFILES)") != std::string::npos);
  CHECK(some.out.find(lab.path.string() + " (VZERO_PROFILES)") != std::string::npos);
}

TEST_CASE("detection tries the profile folders first, and records the profile file it used") {
  Folders f;
  TempDir work;
  spit(work / "plate.csv", k_elapsed_export);
  // No built-in profile reads a time column called "Elapsed".
  auto before = run_vzero("inspect plate.csv", work.path.string());
  CHECK(before.status == 1);
  // In the config folder, the lab's profile reads it without --profile.
  const std::string folder = f.config / "vzero/profiles";
  std::filesystem::create_directories(folder);
  spit(folder + "/elapsed.toml", k_elapsed);
  auto after = run_vzero("inspect plate.csv", work.path.string());
  INFO(after.describe());
  REQUIRE(after.status == 0);
  CHECK(after.out.find("profile   lab-elapsed (" + folder + "/elapsed.toml; detected, from your profile folder") !=
        std::string::npos);
  CHECK(after.out.find("reads   3, from 0 s to 60 s") != std::string::npos);  // the file's three times
  // --profile finds it by name too.
  CHECK(run_vzero("inspect plate.csv --profile lab-elapsed", work.path.string()).status == 0);
  // A folder profile that reads a file wins over a built-in that reads it as well.
  std::string copy = slurp(source("instrument-profiles/wide-generic.toml"));
  copy.replace(copy.find("name = \"wide-generic\""), 21, "name = \"lab-wide\"");
  spit(folder + "/lab-wide.toml", copy);
  auto demo_run = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") +
                                " --method " + demo("esterase_method.toml") + " -o rates.csv",
                            work.path.string());
  INFO(demo_run.describe());
  REQUIRE(demo_run.status == 0);
  auto j = nlohmann::json::parse(slurp(work / "datapackage.json"));
  int listed = 0;
  for (const auto& in : j["vzero"]["inputs"]) {
    if (in["kind"] == "export") CHECK(in["profile"] == "lab-wide");
    if (in["kind"] == "profile" && in["path"] == folder + "/lab-wide.toml") ++listed;
  }
  CHECK(listed == 1);
}

TEST_CASE("a broken profile folder or profile stops with its place, never skipped") {
  Folders f;
  ::setenv("VZERO_PROFILES", "/no/such/folder", 1);
  auto missing = run_vzero("inspect " + demo("hydrolase_wide.csv"));
  CHECK(missing.status == 1);
  CHECK(missing.err.find("expected a folder of profiles (*.toml) in VZERO_PROFILES, found \"/no/such/folder\"") !=
        std::string::npos);
  TempDir lab;
  spit(lab / "bad.toml", "name = \"bad\"\nshape = \"round\"\n");
  ::setenv("VZERO_PROFILES", lab.path.c_str(), 1);
  auto bad = run_vzero("inspect " + demo("hydrolase_wide.csv"));
  CHECK(bad.status == 1);
  CHECK(bad.err.rfind(lab / "bad.toml" + ":2:9: profile key `shape` is \"round\"", 0) == 0);  // line 2, column 9
}

TEST_CASE("profile show prints a built-in as a template that, copied, reads the same exports") {
  Folders f;
  auto shown = run_vzero("profile show grid-generic");
  INFO(shown.describe());
  REQUIRE(shown.status == 0);
  CHECK(shown.out.rfind("# Template made from the built-in vzero profile \"grid-generic\"", 0) == 0);
  CHECK(shown.out.find("name = \"my-grid-generic\"") != std::string::npos);
  // Keys the built-in leaves at their defaults are written out, commented.
  CHECK(shown.out.find("\n# overflow = [\"OVER\", \"overflow\", \"SAT\"]\n") != std::string::npos);
  TempDir work;
  spit(work / "mine.toml", shown.out);
  auto check = run_vzero("profile check " + demo("hydrolase_grid.txt") + " --profile mine.toml", work.path.string());
  INFO(check.describe());
  CHECK(check.status == 0);
  CHECK(check.out.find("check     my-grid-generic reads this file\n") != std::string::npos);
  CHECK(run_vzero("profile show no-such").status == 1);
  CHECK(run_vzero("profile").status == 2);
  CHECK(run_vzero("profile frobnicate").status == 2);
}

TEST_CASE("profile check names the first problem and exits 1 when the profile cannot read the file") {
  Folders f;
  auto r = run_vzero("profile check " + demo("hydrolase_wide_semicolon.csv") + " --profile wide-generic");
  INFO(r.describe());
  CHECK(r.status == 1);
  CHECK(r.out.find("check     wide-generic does not read") != std::string::npos);
  CHECK(r.err.find("hydrolase_wide_semicolon.csv:") != std::string::npos);
  CHECK(r.err.find("possible fix") != std::string::npos);
  auto usage = run_vzero("profile check " + demo("hydrolase_wide.csv"));
  CHECK(usage.status == 2);
}
