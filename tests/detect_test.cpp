// Profile detection when no built-in profile reads a file: the message names the nearest
// profile, the line (and column) where it stops, what it expected and found, and a fix.
// Inputs are the malformed-input suite's (tests/bad-inputs/), read in place; the whole
// message is asserted. Then the shortcut for the files of a batch (the profile chosen last
// tried first): the same choice, reason and errors as detection from scratch.
#include <algorithm>
#include <filesystem>
#include <string>
#include <thread>
#include <vector>

#include "ingest/reader_common.hpp"
#include "ingest/value_bound.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/profile.hpp"

using namespace vzero::test;

namespace {

// The message choose_profile gives for a file of tests/bad-inputs, with the folder cut from
// the file name.
std::string detection_message(const std::string& name) {
  const std::string path = source("tests/bad-inputs/" + name);
  try {
    auto choice = vzero::choose_profile(path, "");
    return "detected " + choice.profile.name;
  } catch (const vzero::InputError& e) {
    std::string m = e.formatted();
    const std::string dir = source("tests/bad-inputs/");
    for (std::size_t at = m.find(dir); at != std::string::npos; at = m.find(dir)) m.erase(at, dir.size());
    return m;
  }
}

// The last fix of every such message, for the nearest profile `name`.
std::string nearest_fix(const std::string& name) {
  return "if the file has another layout, write a profile for it (instrument-profiles/README.md: start from `vzero "
         "profile show " +
         name + "`, test it with `vzero profile check FILE --profile yours.toml`) and put it in your profile folder "
         "or pass it with --profile";
}

}  // namespace

TEST_CASE("a grid read with a header and no plate row is blamed on its header line") {
  // Before: "no built-in profile reads this file; what each found:" with no line, and
  // grid-generic "found no reads: no line matches the profile's `grid.read_label`".
  CHECK(detection_message("fail_grid_header_no_rows.txt") ==
        "fail_grid_header_no_rows.txt:4: no built-in profile reads this file; the nearest, grid-generic, stops here: "
        "expected plate rows (A, B, …) after the header of the read at line 3\n"
        "  line 4: \t1\t2\t3\n"
        "  possible fixes:\n"
        "    - check that the export is complete\n"
        "    - " + nearest_fix("grid-generic"));
}

TEST_CASE("a file whose every value is an overflow token names the profile that reads its layout") {
  // Before: the list of what each profile found ("wide-generic: reads 0 values"), no line.
  CHECK(detection_message("fail_every_value_overflow.csv") ==
        "fail_every_value_overflow.csv:3:3: expected numbers among the values, found only overflow or missing "
        "tokens: the built-in profile wide-generic reads this file's layout, and all 12 values in the file are "
        "tokens (12 overflow, 0 missing)\n"
        "  line 3: 0,OVER,OVER,OVER,OVER\n"
        "  possible fixes:\n"
        "    - check that the plate was read as intended: with no number in any well there is no rate to find\n"
        "    - to read the file as it is (every well then flagged), pass --profile wide-generic");
  // The fix it offers works: the file reads with that profile, every value an overflow.
  auto run =
      vzero::read_run(source("tests/bad-inputs/fail_every_value_overflow.csv"), vzero::load_profile("wide-generic"));
  REQUIRE(run.channels.size() == 1);
  CHECK(run.channels[0].reads() == 3);
  CHECK((run.channels[0].status.array() == vzero::ReadStatus::overflow).all());
}

TEST_CASE("a file with CR-only line ends is read as its LF original") {
  // Before: the whole file was one line (a comment, here), and no profile read it.
  for (const char* shape : {"wide.csv", "long.csv", "grid.txt"}) {
    CAPTURE(shape);
    const auto cr = source(std::string("tests/bad-inputs/pass_cr_") + shape);
    const auto lf = source(std::string("tests/bad-inputs/pass_lf_") + shape);
    REQUIRE(slurp(cr).find('\n') == std::string::npos);
    auto choice = vzero::choose_profile(cr, "");
    CHECK(choice.profile.name == vzero::choose_profile(lf, "").profile.name);
    auto a = vzero::read_run(cr, choice.profile);
    auto b = vzero::read_run(lf, choice.profile);
    REQUIRE(a.channels.size() == b.channels.size());
    for (std::size_t c = 0; c < a.channels.size(); ++c) {
      CHECK(a.channels[c].time_s == b.channels[c].time_s);
      CHECK(a.channels[c].wells == b.channels[c].wells);
      CHECK((a.channels[c].status.array() == b.channels[c].status.array()).all());
      CHECK((a.channels[c].values.array().isNaN() == b.channels[c].values.array().isNaN()).all());
      CHECK(
          (a.channels[c].values.array() == b.channels[c].values.array() || a.channels[c].values.array().isNaN()).all());
    }
    CHECK(a.metadata == b.metadata);
  }
}

TEST_CASE("a header of wells without a time column is blamed on that header") {
  // Before (both files): "no built-in profile reads this file; what each found:", no line.
  CHECK(detection_message("fail_no_time_column.csv") ==
        "fail_no_time_column.csv:2:1: no built-in profile reads this file; the nearest, wide-generic, stops here: "
        "expected a time column (\"time\", \"time [s]\", \"time (s)\", \"time_s\", "
        "\"time [min]\", \"time (min)\", \"time_min\") in this header of 3 well columns, found none\n"
        "  line 2: A1,A2,A3\n"
        "  possible fixes:\n"
        "    - add the column of read times to the export, with a header such as \"Time [s]\" (or \"Time [min]\")\n"
        "    - " + nearest_fix("wide-generic"));
  CHECK(detection_message("fail_time_column_unknown_name.csv") ==
        "fail_time_column_unknown_name.csv:2:1: no built-in profile reads this file; the nearest, wide-generic, stops here: "
        "expected a time column (\"time\", \"time [s]\", \"time (s)\", "
        "\"time_s\", \"time [min]\", \"time (min)\", \"time_min\") in this header of 3 well columns, found "
        "\"Elapsed\"\n"
        "  line 2: Elapsed,A1,A2,A3\n"
        "  possible fixes:\n"
        "    - if \"Elapsed\" holds the read times, name it \"Time [s]\" (or \"Time [min]\") in the header, or add it "
        "to `columns.time` in a profile of your own (instrument-profiles/README.md)\n"
        "    - " + nearest_fix("wide-generic"));
}

TEST_CASE("a read counter is not offered as the time column; a header that says time is") {
  // "Kinetic read" numbers the reads: renaming it "Time [s]" would make every step one
  // second, so the fix says to export the times. "Read time [s]" is a time column under a
  // name the profile does not know: the usual rename is offered.
  const auto message = [](const std::string& header) {
    try {
      vzero::read_run_text("plate.csv", header + ",A1,A2\n1,0.10,0.10\n2,0.12,0.11\n3,0.14,0.12\n",
                           vzero::load_profile("wide-generic"));
    } catch (const vzero::InputError& e) {
      return e.formatted();
    }
    return std::string("no error");
  };
  const std::string counter = message("Kinetic read");
  CHECK(counter.find("\"Kinetic read\" counts reads, it does not time them") != std::string::npos);
  CHECK(counter.find("name it \"Time [s]\"") == std::string::npos);
  const std::string timed = message("Read time [s]");
  CHECK(timed.find("if \"Read time [s]\" holds the read times, name it \"Time [s]\"") != std::string::npos);
  CHECK(timed.find("counts reads") == std::string::npos);
}

TEST_CASE("a long header without a value column is blamed on that header, at the unknown column") {
  // Before: "no built-in profile reads this file; what each found:", no line.
  CHECK(detection_message("fail_no_value_column_long.csv") ==
        "fail_no_value_column_long.csv:2:11: no built-in profile reads this file; the nearest, long-generic, stops here: "
        "expected a value column (\"value\", \"signal\", \"reading\") in this "
        "header, found \"intensity\"\n"
        "  line 2: well,time,intensity\n"
        "  possible fixes:\n"
        "    - if \"intensity\" holds the values, name it \"value\" in the header, or add it to `columns.value` in a "
        "profile of your own (instrument-profiles/README.md)\n"
        "    - " + nearest_fix("long-generic"));
}

TEST_CASE("near misses do not disturb a file another profile reads, nor a plate map's hint") {
  // A preamble line of wells (no time column) does not stop the wide header below it.
  TempDir dir;
  spit(dir / "w.csv", "Wells used,A1,A2\nTime [s],A1,A2\n0,0.1,0.2\n30,0.2,0.3\n");
  CHECK(vzero::choose_profile(dir / "w.csv", "").profile.name == "wide-generic");
  // A plate map has a well column but neither time nor value: still the plate-map hint.
  try {
    vzero::choose_profile(source("demo-data/hydrolase_map.csv"), "");
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(e.message().rfind("no built-in profile reads this file; what each found:", 0) == 0);
  }
}

namespace {

// Every export of the demo, the fixtures and the malformed-input suite (and the plate maps
// and odd files among them, which no profile reads), in name order.
std::vector<std::string> detection_inputs() {
  std::vector<std::string> out;
  for (const char* dir : {"demo-data", "tests/data", "tests/bad-inputs"}) {
    for (const auto& e : std::filesystem::directory_iterator(source(dir))) {
      const std::string ext = e.path().extension().string();
      if (ext == ".csv" || ext == ".txt" || ext == ".tsv" || ext == ".bin") out.push_back(e.path().string());
    }
  }
  std::sort(out.begin(), out.end());
  return out;
}

// What detection gives for a file: the profile, whether detected and why, or the error.
std::string detection_of(const std::string& path) {
  try {
    const auto c = vzero::choose_profile(path, "");
    return c.profile.name + " | " + (c.detected ? "detected" : "given") + " | " + c.reason;
  } catch (const vzero::InputError& e) {
    return "error: " + e.formatted();
  }
}

// Detection on a thread of its own, after `before` (the file the thread chose for last; ""
// for none: detection from scratch).
std::string detection_after(const std::string& before, const std::string& path) {
  std::string out;
  std::thread t([&] {
    if (!before.empty()) detection_of(before);
    out = detection_of(path);
  });
  t.join();
  return out;
}

long long ok_values(const vzero::Run& run) {
  long long n = 0;
  for (const auto& c : run.channels) n += (c.status.array() == vzero::ReadStatus::ok).count();
  return n;
}

}  // namespace

TEST_CASE("a profile reads no more values than its bound, on every export and malformed input") {
  for (const auto& path : detection_inputs()) {
    const std::string text = slurp(path);
    for (const auto& name : vzero::builtin_profile_names()) {
      CAPTURE(path);
      CAPTURE(name);
      const vzero::Profile p = *vzero::builtin_profile(name);
      long long n = 0;
      try {
        n = ok_values(vzero::read_run_text(path, text, p));
      } catch (const vzero::InputError&) {
      }
      CHECK(n <= vzero::detail::value_bound(vzero::detail::CompiledProfile(p), text));
    }
  }
  // Each bound on a small wide export worked out by hand: 3 lines; 2 commas and 4 more per
  // data row; no read label; no semicolon.
  const std::string wide = "Time [s],A1,A2\n0,0.1,0.2\n30,0.2,0.3\n";
  const auto bound = [&](const char* name) {
    const vzero::Profile p = *vzero::builtin_profile(name);
    return vzero::detail::value_bound(vzero::detail::CompiledProfile(p), wide);
  };
  CHECK(bound("long-generic") == 3);
  CHECK(bound("wide-generic") == 3 + 6);
  CHECK(bound("wide-semicolon-comma") == 3);
  CHECK(bound("grid-generic") == 0);
  CHECK(bound("grid-labels") == 0);
  CHECK(vzero::detail::value_bound(vzero::detail::CompiledProfile(*vzero::builtin_profile("grid-generic")),
                                   "Read 1 at 0:00:00\n") == vzero::detail::k_no_value_bound);
}

TEST_CASE("detection after another file gives what detection from scratch gives") {
  // The shortcut tries the profile chosen for the thread's last file first; whatever that
  // was (a file of each built-in profile, or one no profile reads), the next file's profile,
  // reason and error are those of detection from scratch.
  const auto inputs = detection_inputs();
  std::vector<std::string> last;  // the first file each profile detects, and the first none reads
  std::vector<std::string> seen;  // their profiles ("error" for none)
  for (const auto& path : inputs) {
    const std::string d = detection_after("", path);
    const std::string key = d.rfind("error: ", 0) == 0 ? "error" : d.substr(0, d.find(" | "));
    if (std::find(seen.begin(), seen.end(), key) != seen.end()) continue;
    seen.push_back(key);
    last.push_back(path);
  }
  CHECK(std::count(seen.begin(), seen.end(), "wide-generic") == 1);
  CHECK(std::count(seen.begin(), seen.end(), "grid-generic") == 1);
  CHECK(std::count(seen.begin(), seen.end(), "long-generic") == 1);
  CHECK(std::count(seen.begin(), seen.end(), "wide-semicolon-comma") == 1);
  CHECK(std::count(seen.begin(), seen.end(), "error") == 1);
  for (const auto& path : inputs) {
    const std::string fresh = detection_after("", path);
    for (const auto& before : last) {
      CAPTURE(before);
      CAPTURE(path);
      CHECK(detection_after(before, path) == fresh);
    }
  }
}

TEST_CASE("a wide export's later files are shown to keep the profile without trying the others") {
  // The demo's wide export: wide-generic reads 96 wells × 61 reads in it, 39 of them "OVER"
  // (as `vzero inspect` says); every other built-in profile's bound is below that, so the
  // shortcut holds there.
  const std::string text = slurp(source("demo-data/hydrolase_wide.csv"));
  const long long n = ok_values(vzero::read_run_text("w", text, *vzero::builtin_profile("wide-generic")));
  CHECK(n == 96 * 61 - 39);
  for (const auto& name : vzero::builtin_profile_names()) {
    if (name == "wide-generic") continue;
    CAPTURE(name);
    CHECK(vzero::detail::value_bound(vzero::detail::CompiledProfile(*vzero::builtin_profile(name)), text) < n);
  }
}
