// The wide shape laid the other way (src/ingest/wide_across.cpp): one row per well, the read
// times across the header. Every file here is written by the test; the check values are the
// reads each file holds, and the same reads laid out one row per read (the wide shape the
// reader already knew) must give the same channel.
#include <fmt/format.h>

#include <cmath>
#include <string>

#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"

using namespace vzero;

namespace {

InputError read_error(const std::string& text) {
  try {
    read_run_text("t.csv", text, load_profile("wide-generic"));
  } catch (const InputError& e) {
    return e;
  }
  FAIL("expected an InputError");
  return InputError(Where{}, "", {});
}

bool same_channel(const Channel& a, const Channel& b) {
  if (a.name != b.name || a.time_s != b.time_s || a.wells != b.wells || a.values.rows() != b.values.rows() ||
      a.values.cols() != b.values.cols() || a.status != b.status)
    return false;
  for (int r = 0; r < a.values.rows(); ++r)
    for (int c = 0; c < a.values.cols(); ++c)
      if (!(a.values(r, c) == b.values(r, c) || (std::isnan(a.values(r, c)) && std::isnan(b.values(r, c)))))
        return false;
  return a.temperature_c.size() == b.temperature_c.size();
}

}  // namespace

TEST_CASE("one row per well with the read times across reads as the same channel as one row per read") {
  const std::string down =
      "Channel: A405\nTime [s],Temp [C],A1,A2,B1\n0,25.0,0.10,0.20,OVER\n30,25.1,0.11,,0.31\n60,25.2,0.12,0.22,0.32\n";
  const std::string across =
      "Channel: A405\nTime [s],0,30,60\nTemp [C],25.0,25.1,25.2\nA1,0.10,0.11,0.12\nA2,0.20,,0.22\n"
      "B1,OVER,0.31,0.32\n";
  const Run a = read_run_text("down.csv", down, load_profile("wide-generic"));
  const Run b = read_run_text("across.csv", across, load_profile("wide-generic"));
  REQUIRE(b.channels.size() == 1);
  CHECK(same_channel(a.channels[0], b.channels[0]));
  CHECK(b.channels[0].temperature_c == std::vector<double>{25.0, 25.1, 25.2});
  const int a2 = b.channels[0].column_of(b.format.index(WellId{0, 1}));
  CHECK(b.channels[0].status(1, a2) == ReadStatus::missing);
  CHECK(b.read_notes ==
        std::vector<std::string>{"line 2: one row per well and the read times across the header: read as such"});
}

TEST_CASE("across: a well header with times in minutes, a read-number row, blank lines and two channels") {
  // "Well" heads the first column; the times carry their unit ("0.5 min" = 30 s); a "Cycle"
  // row (an ignored name) holds read numbers; a blank line before B1 is read through; a blank
  // line and a section label start the second channel.
  const std::string text =
      "Channel: A340\nWell,0 min,0.5 min,1 min\nCycle,1,2,3\nA1,1.0,0.9,0.8\n\nB1,2.0,1.9,1.8\n\n"
      "Channel: A405\nWell,0 min,0.5 min,1 min\nA1,0.1,0.2,0.3\n";
  const Run run = read_run_text("t.csv", text, load_profile("wide-generic"));
  REQUIRE(run.channels.size() == 2);
  CHECK(run.channels[0].name == "A340");
  CHECK(run.channels[0].time_s == std::vector<double>{0, 30, 60});
  CHECK(run.channels[0].wells.size() == 2);
  CHECK(run.channels[0].values(2, 1) == 1.8);  // B1 at 60 s
  CHECK(run.channels[1].name == "A405");
  CHECK(run.channels[1].values(1, 0) == 0.2);
  CHECK(run.read_notes == std::vector<std::string>{
                              "line 2: one row per well and the read times across the header: read as such",
                              "line 5: a blank line among the well rows of line 2, read through",
                              "line 9: one row per well and the read times across the header: read as such"});
}

TEST_CASE("across: bare numbers keep the time unit rule; rows that cannot be read are refused at their place") {
  // Plain numbers 0, 1, 2 under a bare "Well" header: steps of 1 s between reads of a plate are
  // implausible for seconds, and nothing states the unit, so the file stops (README's time
  // unit rule), as a wide table with a bare "Time" header does.
  std::string minutes = "Well,0,1,2,3,4\n";
  for (int w = 0; w < 96; ++w) minutes += well_name(WellId{w / 12, w % 12}) + ",0.1,0.2,0.3,0.4,0.5\n";
  CHECK(std::string(read_error(minutes).message()).find("time") != std::string::npos);
  const InputError twice = read_error("Well,0,30,60\nA1,0.1,0.2,0.3\nA1,0.1,0.2,0.3\n");
  CHECK(twice.where().line == 3);
  CHECK(std::string(twice.message()) == "well A1 has two rows (lines 2 and 3)");
  const InputError short_row = read_error("Well,0,30,60\nA1,0.1,0.2\n");
  CHECK(short_row.where().line == 2);
  CHECK(std::string(short_row.message()) ==
        "expected 4 fields as in the header at line 1 (the row's name and a value for each of its 3 reads), found 3");
  const InputError bad = read_error("Well,0,30,60\nA1,0.1,x,0.3\n");
  CHECK(bad.where().column == 8);  // "A1,0.1," is 7 characters
  const InputError unknown = read_error("Well,0,30,60\nA1,0.1,0.2,0.3\nAverage,0.1,0.2,0.3\n");
  CHECK(unknown.where().line == 3);
  CHECK(std::string(unknown.message()).find("expected a well name (A1 … AF48), a temperature row or a row name") == 0);
  const InputError none = read_error("Well,0,30,60\n\n");
  CHECK(std::string(none.message()).find("expected a row per well") == 0);
}

TEST_CASE("across: a read-number line above the times and a 'Temp. [C]' row") {
  const Run run = read_run_text("t.csv",
                                "Cycle,1,2,3\nTime [s],0,30,60\nTemp. [C],25.0,25.1,25.0\nA1,0.1,0.2,0.3\n",
                                load_profile("wide-generic"));
  REQUIRE(run.channels.size() == 1);
  CHECK(run.channels[0].time_s == std::vector<double>{0, 30, 60});
  CHECK(run.channels[0].temperature_c == std::vector<double>{25.0, 25.1, 25.0});
}
