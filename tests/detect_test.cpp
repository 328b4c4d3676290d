// Profile detection when no built-in profile reads a file: the message names the nearest
// profile, the line (and column) where it stops, what it expected and found, and a fix.
// Inputs are the malformed-input suite's (tests/bad-inputs/), read in place; the whole
// message is asserted.
#include <string>

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

TEST_CASE("a long header without a value column is blamed on that header, at the unknown column") {
  // Before: "no built-in profile reads this file; what each found:", no line.
  CHECK(detection_message("fail_no_value_column_long.csv") ==
        "fail_no_value_column_long.csv:2:11: no built-in profile reads this file; the nearest, long-generic, stops here: "
        "expected a value column (\"value\", \"signal\", \"reading\") in this "
        "header, found \"absorbance\"\n"
        "  line 2: well,time,absorbance\n"
        "  possible fixes:\n"
        "    - if \"absorbance\" holds the values, name it \"value\" in the header, or add it to `columns.value` in a "
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
