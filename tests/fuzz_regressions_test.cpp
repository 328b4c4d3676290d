// Replays every input the fuzzers found (tests/fuzz/regressions/<target>/) through the same
// bodies the libFuzzer programs run (tests/fuzz/fuzz_bodies.hpp), in the ordinary and the
// sanitized builds, and pins what each input must now give.
//
// Several of these inputs failed only in the fuzz build, whose line reader (then
// fast-cpp-csv-parser's LineReader) used 4 KiB blocks: there a file over 8 KiB without a
// final newline made the reader return lines that are not in the file and then wait
// forever. The same failure at the real 16 MiB block size is tested in
// reader_limits_test.cpp. The fuzz build's LineSource refills every 4 KiB
// (tests/fuzz/CMakeLists.txt).
#include <filesystem>
#include <string>
#include <tuple>

#include "fuzz/fuzz_bodies.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/profile.hpp"

using namespace vzero::test;
namespace fs = std::filesystem;

namespace {

std::string regression(const std::string& target, const std::string& name) {
  return slurp(source("tests/fuzz/regressions/" + target + "/" + name));
}

// The message a read gives, or "ok" with the number of reads of each channel.
std::string outcome(const std::string& text, const vzero::Profile& p) {
  try {
    auto run = vzero::read_run_text("input", text, p);
    std::string out = "ok";
    for (const auto& c : run.channels) out += " " + c.name + ":" + std::to_string(c.reads());
    return out;
  } catch (const vzero::InputError& e) {
    return e.formatted();
  }
}

}  // namespace

TEST_CASE("every saved fuzz input passes its fuzz body: no crash, no broken invariant") {
  int replayed = 0;
  for (const auto& dir : fs::directory_iterator(source("tests/fuzz/regressions"))) {
    const std::string target = dir.path().filename().string();
    for (const auto& f : fs::directory_iterator(dir.path())) {
      const std::string text = slurp(f.path().string());
      CAPTURE(f.path().string());
      std::string why;
      if (target == "profile")
        why = vzero::fuzz::fuzz_profile(text);
      else if (target == "wide")
        why = vzero::fuzz::fuzz_shape(vzero::Shape::wide, text);
      else if (target == "grid")
        why = vzero::fuzz::fuzz_shape(vzero::Shape::grid, text);
      else if (target == "long")
        why = vzero::fuzz::fuzz_shape(vzero::Shape::long_form, text);
      else if (target == "plate_map")
        why = vzero::fuzz::fuzz_plate_map(text);
      else if (target == "detect")
        why = vzero::fuzz::fuzz_detect(text);
      else if (target == "method")
        why = vzero::fuzz::fuzz_method(text);
      else if (target == "xlsx")
        why = vzero::fuzz::fuzz_xlsx(text);
      else
        FAIL("unknown fuzz target folder " << target);
      CHECK(why == "");
      ++replayed;
    }
  }
  CHECK(replayed >= 7);
}

TEST_CASE("a file without a final newline reads exactly as the same file with one") {
  // The fix adds the missing newline inside the line reader; it must be invisible.
  for (const auto& [target, name, profile] :
       {std::tuple{"wide", "no_final_newline_stale_block.csv", "wide-generic"},
        std::tuple{"grid", "no_final_newline_stale_block.txt", "grid-generic"},
        std::tuple{"long", "no_final_newline_stale_block.csv", "long-generic"},
        std::tuple{"detect", "no_final_newline_stale_block.csv", "wide-generic"}}) {
    CAPTURE(name);
    std::string text = regression(target, name);
    REQUIRE(!text.empty());
    REQUIRE(text.back() != '\n');
    auto p = vzero::load_profile(profile);
    CHECK(outcome(text, p) == outcome(text + "\n", p));
  }
  auto p = vzero::load_profile("wide-generic");
  // Same digest as the bytes given: the added newline is not hashed.
  auto a = vzero::read_run_text("x", "Time [s],A1\n0,1\n30,2", p);
  auto b = vzero::read_run_text("x", "Time [s],A1\n0,1\n30,2\n", p);
  CHECK(a.channels[0].time_s == b.channels[0].time_s);
  CHECK(a.sha256 != b.sha256);
  // sha256 of "Time [s],A1\n0,1\n30,2" (20 bytes), from `printf 'Time [s],A1\n0,1\n30,2' | sha256sum`.
  CHECK(a.sha256 == "6511d12debc88600fe26d8394e014b7ff553d0adc7e6d2355520ae070d085aef");
}

TEST_CASE("regression: a non-ASCII mark after a profile key is a TOML syntax error, not undefined behaviour") {
  // Found by fuzz_profile: toml++ 3.3 reaches TOML_UNREACHABLE on U+033F in its whitespace
  // table (tests/fuzz/ubsan-ignorelist.txt); the shipped library reports a syntax error.
  std::string text = regression("profile", "toml_combining_mark_after_key.toml");
  try {
    vzero::parse_profile(text, "p.toml", "p");
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(e.where().line == 1);
    CHECK(e.where().column == 11);
    CHECK(e.message() ==
          "the profile is not valid TOML: Error while parsing key-value pair: expected '=', saw '\xCC\xBF'");
  }
}

TEST_CASE("regression: a grid header naming a column twice is refused, not read as a well twice") {
  // Found by fuzz_grid and fuzz_detect: "\t2\t2\t3" put well A2 twice in one channel.
  std::string text = regression("grid", "duplicate_column_in_header.txt");
  auto p = vzero::load_profile("grid-generic");
  CHECK(outcome(text, p) ==
        "input:4:4: column 2 appears twice in the header after the read label at line 3 (fields 2 and 3)\n"
        "  line 4: \t2\t2\t3\n"
        "  possible fix: remove the duplicated column; each well may appear once per read");
}

TEST_CASE("regression: a read time that overflows to infinity in seconds is refused") {
  // 1e307 min is 6e308 s: beyond a double. Found while checking the fuzz invariants. The
  // message says what is wrong: the time is out of range (beyond 1e10 s).
  auto p = vzero::load_profile("wide-generic");
  CHECK(outcome("Time [min],A1\n0,0.1\n1e307,0.2\n", p) ==
        "input:3:1: expected a read time between -1e10 and 1e10 s (about 317 years), found \"1e307\" min, which is "
        "out of range\n"
        "  line 3: 1e307,0.2\n"
        "  possible fix: check the unit of the times (in the time header, e.g. \"Time [min]\", or the profile's "
        "`time_unit`) and that the column holds read times");
  CHECK(outcome("Time [s],A1\n0,0.1\n1e308:00:00,0.2\n", p)
            .rfind("input:3:1: expected a read time between -1e10 and 1e10 s (about 317 years), found \"1e308:00:00\", "
                   "which is out of range\n",
                   0) == 0);
}

TEST_CASE("regression: a plate given as a float beyond int64 is refused without undefined behaviour") {
  // Found by fuzz_profile: toml++'s value<int64_t>() casts 4.6e83 to int64 unchecked.
  std::string text = regression("profile", "plate_float_beyond_int64.toml");
  try {
    vzero::parse_profile(text, "p.toml", "p");
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(std::string(e.what()) ==
          "p.toml:2:9: profile key `plate` is \"4.5555555555555557e+83\"; expected 0 (infer) or one of 6, 12, 24, 48, "
          "96, 384, 1536");
  }
  // A whole float of a standard plate still reads.
  CHECK(vzero::parse_profile("shape = \"wide\"\nplate = 96.0\n", "p.toml", "p").plate_wells == 96);
}

TEST_CASE("regression: plate = 2^32 + 96 in a profile is refused, not read as 96") {
  try {
    vzero::parse_profile("shape = \"wide\"\nplate = 4294967392\n", "p.toml", "p");
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(
        std::string(e.what()) ==
        "p.toml:2:9: profile key `plate` is \"4294967392\"; expected 0 (infer) or one of 6, 12, 24, 48, 96, 384, 1536");
  }
}

TEST_CASE("regression: a grid read whose header is followed by no plate row quotes that header, not freed memory") {
  // The grid reader kept a view of the header line while it fetched the next line, and
  // quoted it in this message. When that fetch refilled the line buffer (at the end of a
  // file without a final newline, and every 1 MiB) the view pointed into freed memory:
  // `vzero inspect --profile grid-generic` on the second file crashed (SIGSEGV). fuzz_grid
  // found the first file once LineSource hands out each line in its own copy under ASan.
  auto p = vzero::load_profile("grid-generic");
  CHECK(outcome(regression("grid", "header_then_no_plate_row_no_final_newline.txt"), p) ==
        "input:2: expected plate rows (A, B, …) after the header of the read at line 1\n"
        "  line 2: \t1\t2\n"
        "  possible fix: check that the export is complete");
  CHECK(outcome(regression("grid", "header_then_no_plate_row.txt"), p) ==
        "input:9: expected plate rows (A, B, …) after the header of the read at line 8\n"
        "  line 9: '\t1\t2\t3\n"
        "  possible fix: check that the export is complete");
}
