// The run report in a real browser: headless Chromium (Debian's chromium package) opens
// the demo report and a 1536-well report from file:// with a fresh profile and no network
// services, takes a PNG screenshot, and the test fails when the page comes out blank.
// tests/report_png.py decodes the PNG with Python's standard library and counts the
// pixels that are not near-white; an empty page is the negative control.
//
// Without chromium or python3 the program exits with status 77, which ctest reports as
// skipped (SKIP_RETURN_CODE in tests/CMakeLists.txt). .ci/packages.txt installs both.
// Set VZERO_REPORT_SHOTS=DIR to keep the screenshots for a look, VZERO_CHROMIUM=PATH to use
// another Chromium binary.
#include <cstdlib>
#include <filesystem>
#include <sstream>
#include <string>

#include "report_sim.hpp"
#include "test_support.hpp"

using namespace vzero;

namespace {

bool have(const std::string& program) {
  return std::system(("command -v " + program + " >/dev/null 2>&1").c_str()) == 0;
}

std::string chromium() {
  // VZERO_CHROMIUM names another browser binary (a missing one makes the test skip).
  if (const char* env = std::getenv("VZERO_CHROMIUM"); env && *env) return have(env) ? env : "";
  for (const char* name : {"chromium", "chromium-browser"})
    if (have(name)) return name;
  return {};
}

// Skips the whole program (ctest: SKIP_RETURN_CODE 77) when a tool is missing.
void require_tools() {
  if (chromium().empty() || !have("python3")) {
    std::fprintf(stderr, "report_browser_test: skipped (needs chromium and python3; see .ci/packages.txt)\n");
    std::exit(77);
  }
}

struct Ink {
  long width = 0, height = 0, ink = 0, colours = 0;
  double fraction() const {
    return width * height > 0 ? static_cast<double>(ink) / static_cast<double>(width * height) : 0;
  }
};

// Screenshot of `html` (a file path) at 1400 × 2000 CSS pixels, and its ink count.
Ink screenshot(const test::TempDir& dir, const std::string& html, const std::string& png) {
  const std::string profile = dir / (png + ".profile");
  std::filesystem::create_directories(profile);
  const std::string url = "file://" + std::filesystem::absolute(html).string();
  const std::string cmd = "timeout 120 '" + chromium() +
                          "' --headless --no-sandbox --disable-gpu --disable-dev-shm-usage "
                          "--disable-background-networking --disable-component-update --disable-sync --no-first-run "
                          "--hide-scrollbars --user-data-dir='" +
                          profile + "' --screenshot='" + (dir / png) + "' --window-size=1400,2000 '" + url + "' >'" +
                          (dir / (png + ".log")) + "' 2>&1";
  const int rc = std::system(cmd.c_str());
  REQUIRE_MESSAGE(rc == 0, "command: " << cmd << "\nlog:\n" << test::slurp(dir / (png + ".log")));
  REQUIRE_MESSAGE(std::filesystem::exists(dir / png), "no screenshot; log:\n" << test::slurp(dir / (png + ".log")));
  if (const char* keep = std::getenv("VZERO_REPORT_SHOTS"); keep && *keep)
    std::filesystem::copy_file(dir / png, std::string(keep) + "/" + png,
                               std::filesystem::copy_options::overwrite_existing);
  const std::string out = dir / (png + ".ink");
  REQUIRE(std::system(("python3 '" + test::source("tests/report_png.py") + "' ink '" + (dir / png) + "' >'" + out + "'")
                          .c_str()) == 0);
  Ink k;
  std::istringstream in(test::slurp(out));
  in >> k.width >> k.height >> k.ink >> k.colours;
  MESSAGE(png << ": " << k.width << " x " << k.height << " px, " << k.ink << " not near-white (" << 100 * k.fraction()
              << " %), " << k.colours << " colours");
  return k;
}

void run_ok(const std::string& args, const test::TempDir& dir) {
  auto r = test::run_vzero(args, dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
}

}  // namespace

TEST_CASE("an empty page screenshots blank (negative control)") {
  require_tools();
  test::TempDir dir;
  test::spit(dir / "empty.html",
             "<!DOCTYPE html>\n<html lang=\"en\"><head><meta "
             "charset=\"utf-8\"/><title>x</title></head><body></body></html>\n");
  Ink k = screenshot(dir, dir / "empty.html", "empty.png");
  CHECK(k.width == 1400);
  CHECK(k.height == 2000);
  CHECK(k.ink < 100);
}

TEST_CASE("the demo report renders in headless Chromium") {
  require_tools();
  test::TempDir dir;
  const std::string d = test::source("demo-data");
  run_ok("rates '" + d + "/hydrolase_wide.csv' --layout '" + d + "/hydrolase_map.csv' --method '" + d +
             "/esterase_method.toml' -o rates.csv --summary summary.csv --traces traces.csv -q",
         dir);
  run_ok(
      "fit rates.csv --x substrate --inhibitor inhibitor_uM --model competitive --group enzyme_nM --json fit.json "
      "--diagnostics diag.csv -q",
      dir);
  run_ok(
      "report --rates rates.csv --traces traces.csv --summary summary.csv --fit fit.json --diagnostics diag.csv "
      "--package datapackage.json -q -o report.html",
      dir);
  Ink k = screenshot(dir, dir / "report.html", "demo_report.png");
  CHECK(k.width == 1400);
  CHECK(k.fraction() > 0.05);  // text, tables, the heat map and the first panels
  CHECK(k.colours > 40);       // the palette and the marks, not only grey text
}

TEST_CASE("a 1536-well report renders in headless Chromium") {
  require_tools();
  test::TempDir dir;
  test::write_sim_plate(dir.path.string(), PlateFormat{32, 48});
  run_ok(
      "rates sim_plate.csv --layout sim_map.csv --epsilon 18000 --path-cm 0.5 -o rates.csv --summary summary.csv "
      "--report report.html -q",
      dir);
  Ink k = screenshot(dir, dir / "report.html", "plate1536_report.png");
  CHECK(k.fraction() > 0.05);
  CHECK(k.colours > 40);
}
