// What a reader infers is shown and recorded, never guessed silently: the time unit rule
// (plain-number times with no unit stated), blank and text lines inside data blocks, plate
// rows off the plate's row labels, and a wrong delimiter named as one. Every file here is
// written by the test; the check values are worked from the file (a minute is 60 s, an hour
// 3600 s: SI) or are the reads the file holds.
#include <fmt/format.h>

#include <string>

#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"

using namespace vzero;

namespace {

// A wide table of a full 96-well plate: `times` as written, header `time_header`.
std::string wide96(const std::string& time_header, const std::vector<std::string>& times) {
  std::string s = time_header;
  for (int w = 0; w < 96; ++w) s += "," + well_name(WellId{w / 12, w % 12});
  s += "\n";
  for (std::size_t r = 0; r < times.size(); ++r) {
    s += times[r];
    for (int w = 0; w < 96; ++w) s += fmt::format(",{:.4f}", 0.05 + 0.001 * static_cast<double>(r) + 1e-5 * w);
    s += "\n";
  }
  return s;
}

// A long table of 96 wells with a `time` column: well, time, value.
std::string long96(const std::vector<std::string>& times) {
  std::string s = "well,time,value\n";
  for (int w = 0; w < 96; ++w)
    for (std::size_t r = 0; r < times.size(); ++r)
      s += fmt::format("{},{},{:.4f}\n", well_name(WellId{w / 12, w % 12}), times[r],
                       0.05 + 0.001 * static_cast<double>(r));
  return s;
}

std::vector<std::string> steps(int n, double step) {
  std::vector<std::string> t;
  for (int i = 0; i < n; ++i) t.push_back(fmt::format("{:g}", i * step));
  return t;
}

const ReadFact* fact(const Run& run, const std::string& name) {
  for (const auto& f : run.read_facts)
    if (f.name == name) return &f;
  return nullptr;
}

InputError read_error(const std::string& text, const Profile& p) {
  try {
    read_run_text("t.csv", text, p);
  } catch (const InputError& e) {
    return e;
  }
  FAIL("expected an InputError");
  return InputError(Where{}, "", {});
}

}  // namespace

TEST_CASE("a long table in minutes with a bare `time` header stops with the fix, and reads right with it") {
  // 0, 0.5, …, 30: 61 reads of 96 wells 0.5 apart, the file. As seconds a step of
  // 0.5 s is below 96 × 0.02 s = 1.92 s, the least a reader needs (time unit rule).
  const std::string text = long96(steps(61, 0.5));
  Profile p = load_profile("long-generic");
  const InputError e = read_error(text, p);
  CHECK(e.where().line == 1);    // the header line
  CHECK(e.where().column == 6);  // "time" is the second field: well,|time
  CHECK(std::string(e.message()).find("not seconds") != std::string::npos);
  CHECK(e.fixes().front().find("--time-unit min") != std::string::npos);
  state_time_unit(p, "min");
  const Run run = read_run_text("t.csv", text, p);
  CHECK(run.channels[0].reads() == 61);
  CHECK(run.channels[0].time_s.back() == 1800.0);  // 30 min × 60 s
  CHECK(fact(run, "time_unit")->value == "min");
  CHECK(fact(run, "time_unit")->basis == "--time-unit min");
}

TEST_CASE("a wide table in hours with a bare `Time` header stops; the profile key reads it") {
  // 0, 0.05, …, 2 h: as seconds 0.05 s between reads of 96 wells, below 1.92 s.
  const std::string text = wide96("Time", steps(41, 0.05));
  CHECK(read_error(text, load_profile("wide-generic")).where().line == 1);
  const Profile p = parse_profile("name = \"h\"\nshape = \"wide\"\ntime_unit = \"h\"\n", "hours.toml", "hours");
  const Run run = read_run_text("t.csv", text, p);
  CHECK(run.channels[0].time_s.back() == 7200.0);  // 2 h × 3600 s
  CHECK(fact(run, "time_unit")->basis == "profile hours.toml");
}

TEST_CASE("seconds with a bare `Time` header are read as seconds, and the inference is recorded") {
  // 30 s between reads of 96 wells is plausible (>= 1.92 s): read as seconds, with the basis.
  const Run run = read_run_text("t.csv", wide96("Time", steps(11, 30)), load_profile("wide-generic"));
  CHECK(run.channels[0].time_s.back() == 300.0);
  REQUIRE(fact(run, "time_unit"));
  CHECK(fact(run, "time_unit")->value == "s");
  CHECK(fact(run, "time_unit")->basis.rfind("no unit in the header or profile", 0) == 0);
  CHECK(fact(run, "delimiter")->value == "',' (comma)");
  CHECK(fact(run, "delimiter")->basis == "guessed from line 1 (the most frequent of tab, ';', ',')");
  CHECK(fact(run, "plate")->value == "96 wells (8 × 12)");
  CHECK(fact(run, "shape")->value == "wide");
  CHECK(fact(run, "decimal")->value == "'.'");
  CHECK(fact(run, "overflow_tokens")->value == "none in the file");
}

TEST_CASE("sub-second steps over less than a minute are not taken as seconds, even for few wells") {
  // 4 wells (least step 0.08 s): 0, 0.5, …, 30 still stops: a whole run under a minute.
  std::string text = "time,A1,A2,A3,A4\n";
  for (const auto& t : steps(61, 0.5)) text += t + ",0.1,0.2,0.3,0.4\n";
  CHECK(std::string(read_error(text, load_profile("wide-generic")).message()).find("under a minute") !=
        std::string::npos);
}

TEST_CASE("a unit in the header, a clock time and a unit in a grid read label are stated, not inferred") {
  const Run a = read_run_text("t.csv", wide96("Time [min]", steps(61, 0.5)), load_profile("wide-generic"));
  CHECK(a.channels[0].time_s.back() == 1800.0);
  CHECK(fact(a, "time_unit")->basis == "the time header \"Time [min]\"");
  const Run b = read_run_text("t.csv", wide96("Time", {"0:00:00", "0:00:30", "0:01:00"}), load_profile("wide-generic"));
  CHECK(fact(b, "time_unit")->value == "clock");
  const std::string grid = "Read 1 at 0.5 min\n\t1\t2\nA\t0.1\t0.2\n\nRead 2 at 1 min\n\t1\t2\nA\t0.2\t0.3\n";
  const Run c = read_run_text("g.txt", grid, load_profile("grid-generic"));
  CHECK(c.channels[0].time_s == std::vector<double>{30.0, 60.0});
  CHECK(fact(c, "time_unit")->value == "min");
}

TEST_CASE("a blank line inside a wide data block is read through with a note; no read is lost") {
  // On the starting code the blank line ended the table and the reads after it were lost.
  std::string text = wide96("Time [s]", steps(6, 30));
  const std::size_t third = text.find("\n60,");
  text.insert(third, "\n");
  const Run run = read_run_text("t.csv", text, load_profile("wide-generic"));
  CHECK(run.channels[0].reads() == 6);  // all six rows of the file
  REQUIRE(run.read_notes.size() == 1);
  CHECK(run.read_notes[0] == "line 4: a blank line inside the data block of line 1, read through");
}

TEST_CASE("a text line inside a wide data block is refused at its line, not taken as the end") {
  std::string text = wide96("Time [s]", steps(6, 30));
  text.insert(text.find("\n60,") + 1, "instrument paused\n");
  const InputError e = read_error(text, load_profile("wide-generic"));
  CHECK(e.where().line == 4);
  CHECK(std::string(e.message()).find("data rows of that block follow at line 5") != std::string::npos);
}

TEST_CASE("grid rows whose label is off the plate's rows are refused at their line") {
  for (const std::string bad : {"AG", "B.", "E:"}) {
    std::string text = "Read 1 at 0:00:00\n\t1\t2\nA\t0.1\t0.2\n" + bad + "\t0.3\t0.4\nC\t0.5\t0.6\n\n" +
                       "Read 2 at 0:00:30\n\t1\t2\nA\t0.1\t0.2\n" + bad + "\t0.3\t0.4\nC\t0.5\t0.6\n";
    const InputError e = read_error(text, load_profile("grid-generic"));
    CHECK(e.where().line == 4);
    CHECK(e.where().column == 1);
    CHECK(std::string(e.message()) ==
          fmt::format("expected a plate row label (A … Z, then AA … AF), found \"{}\"", bad));
  }
}

TEST_CASE("a blank line among a grid read's rows is read through; a text line there is refused") {
  const std::string head = "Read 1 at 0:00:00\n\t1\t2\nA\t0.1\t0.2\n";
  const std::string tail = "B\t0.3\t0.4\n\nRead 2 at 0:00:30\n\t1\t2\nA\t0.1\t0.2\nB\t0.3\t0.4\n";
  const Run run = read_run_text("g.txt", head + "\n" + tail, load_profile("grid-generic"));
  CHECK(run.channels[0].wells.size() == 4);  // A1, A2, B1, B2 in both reads
  CHECK(run.read_notes.size() == 1);
  const InputError e = read_error(head + "lamp check\n" + tail, load_profile("grid-generic"));
  CHECK(e.where().line == 4);
}

TEST_CASE("a wrong delimiter is reported as a delimiter problem, not as no data") {
  const std::string text = wide96("Time [s]", steps(3, 30));
  const InputError e = read_error(text, load_profile("wide-semicolon-comma"));
  CHECK(e.where().line == 1);
  CHECK(std::string(e.message()).find("a delimiter problem") != std::string::npos);
  std::string one = text;
  const std::size_t row = one.find("\n30,") + 1;
  std::replace(one.begin() + static_cast<std::ptrdiff_t>(row),
               one.begin() + static_cast<std::ptrdiff_t>(one.find('\n', row)), ',', ';');
  const InputError f = read_error(one, load_profile("wide-generic"));
  CHECK(f.where().line == 3);
  CHECK(std::string(f.message()).find("a delimiter problem") != std::string::npos);
}

TEST_CASE("overflow tokens as the file writes them and the channel's source are recorded") {
  const std::string text = "Channel: A405\nTime [s],A1,A2\n0,0.1,OVER\n30,SAT,0.2\n60,0.3,OVER\n";
  const Run run = read_run_text("t.csv", text, load_profile("wide-generic"));
  CHECK(fact(run, "overflow_tokens")->value == "\"OVER\", \"SAT\"");
  CHECK(fact(run, "channel")->value == "A405");
  CHECK(fact(run, "channel")->basis == "the section label at line 1");
}

TEST_CASE(
    "long tables: blank and comment lines read through with notes; rows with no header or another delimiter refused") {
  const std::string text = "well,time_s,value\nA1,0,0.1\n\nA1,30,0.2\n# lamp check\nA1,60,0.3\n";
  const Run run = read_run_text("l.csv", text, load_profile("long-generic"));
  CHECK(run.channels[0].reads() == 3);  // the three rows of the file
  CHECK(run.read_notes == std::vector<std::string>{"line 3: a blank line inside the table, read through",
                                                   "line 5: a comment line inside the table, read through"});
  const InputError headless = read_error("A1,0,0.1\nA1,30,0.2\n", load_profile("long-generic"));
  CHECK(headless.where().line == 1);
  CHECK(std::string(headless.message()).find("expected a header line") == 0);
  const InputError delim =
      read_error("well,time_s,value\nA1,0,0.1\nA1;30;0.2\nA1,60,0.3\n", load_profile("long-generic"));
  CHECK(delim.where().line == 3);
  CHECK(std::string(delim.message()).find("a delimiter problem") != std::string::npos);
}

TEST_CASE("a grid read label's unit (\"at 30 s\") states the unit; a bare number is checked by the rule") {
  const std::string stated = "Read 1 at 0 s\n\t1\nA\t0.1\n\nRead 2 at 30 s\n\t1\nA\t0.2\n";
  const Run a = read_run_text("g.txt", stated, load_profile("grid-generic"));
  CHECK(fact(a, "time_unit")->basis == "the read label at line 1 (\"Read 1 at 0 s\")");
  const std::string bare = "Read 1 at 0\n\t1\nA\t0.1\n\nRead 2 at 0.5\n\t1\nA\t0.2\n\nRead 3 at 1\n\t1\nA\t0.3\n";
  const InputError e = read_error(bare, load_profile("grid-generic"));
  CHECK(e.where().line == 1);  // the first read label
  CHECK(std::string(e.message()).find("not seconds") != std::string::npos);
  const Run ms = read_run_text("g.txt", "Read 1 at 0 ms\n\t1\nA\t0.1\n\nRead 2 at 30000 ms\n\t1\nA\t0.2\n",
                               load_profile("grid-generic"));
  CHECK(ms.channels[0].time_s == std::vector<double>{0, 30});  // 1 ms = 0.001 s (SI)
}

TEST_CASE("--time-unit that contradicts the unit in the time header is refused, not overridden in silence") {
  Profile p = load_profile("wide-generic");
  state_time_unit(p, "min");
  const InputError e = read_error(wide96("Time [s]", steps(3, 30)), p);
  CHECK(e.where().line == 1);
  CHECK(std::string(e.message()) ==
        "expected times in min as --time-unit min states, found the time header \"Time [s]\" stating s");
  state_time_unit(p, "s");
  CHECK(read_run_text("t.csv", wide96("Time [s]", steps(3, 30)), p).channels[0].time_s.back() == 60.0);
}

TEST_CASE("grid: a plate layout block of text is no data; a header and rows with no read label are refused") {
  const std::string reads = "Read 1 at 0:00:00\n\t1\t2\nA\t0.1\t0.2\n\nRead 2 at 0:00:30\n\t1\t2\nA\t0.2\t0.3\n";
  const Run run = read_run_text("g.txt", "Layout\n\t1\t2\nA\tS1\tS2\n\n" + reads, load_profile("grid-generic"));
  CHECK(run.channels[0].reads() == 2);
  const InputError e = read_error(reads + "\n\t1\t2\nA\t0.3\t0.4\n", load_profile("grid-generic"));
  CHECK(e.where().line == 9);  // the header of column numbers of the read whose label is missing
  CHECK(std::string(e.message()).find("expected a read label") == 0);
}

TEST_CASE("well columns with a channel tag are read as one channel per tag, and the inference is recorded") {
  // Two absorbance channels in one header: "A1 (340)" and "A1 (405 nm)"; the section label
  // above names only one of them. Each value must land in its own channel and well.
  const std::string text =
      "Channel: A405\nTime [s],Temp [C],A1 (340),B2 (340),A1 (405 nm),B2 (405 nm)\n"
      "0,25.0,0.10,0.20,0.30,OVER\n30,25.1,0.11,0.21,0.31,0.41\n";
  const Run run = read_run_text("t.csv", text, load_profile("wide-generic"));
  REQUIRE(run.channels.size() == 2);
  const Channel& a340 = run.channels[0];
  const Channel& a405 = run.channels[1];
  CHECK(a340.name == "A340");
  CHECK(a405.name == "A405");
  CHECK(a340.quantity == Quantity::absorbance);
  CHECK(a405.unit == "AU");
  const int a1 = 0, b2 = run.format.index(WellId{1, 1});
  CHECK(a340.values(0, a340.column_of(a1)) == 0.10);
  CHECK(a340.values(1, a340.column_of(b2)) == 0.21);
  CHECK(a405.values(1, a405.column_of(a1)) == 0.31);
  CHECK(a405.status(0, a405.column_of(b2)) == ReadStatus::overflow);
  CHECK(a405.values(1, a405.column_of(b2)) == 0.41);
  CHECK(a340.temperature_c[1] == 25.1);
  REQUIRE(run.read_notes.size() == 1);
  CHECK(run.read_notes[0] ==
        "line 2: well columns named with a channel tag (\"A1 (340)\" is well A1): read as A340, A405");
  std::vector<std::string> bases;
  for (const auto& f : run.read_facts)
    if (f.name == "channel") bases.push_back(f.value + ": " + f.basis);
  CHECK(bases == std::vector<std::string>{"A340: the tag \"340\" of the well columns in the header at line 2",
                                          "A405: the tag \"405 nm\" of the well columns in the header at line 2"});
}

TEST_CASE("a word beside every well is no channel; fluorescence tags name theirs; mixed headers are refused") {
  const Run well_word =
      read_run_text("t.csv", "Channel: A405\nTime [s],Well A1,Well A2\n0,0.1,0.2\n30,0.2,0.3\n", load_profile("wide-generic"));
  REQUIRE(well_word.channels.size() == 1);
  CHECK(well_word.channels[0].name == "A405");  // the section label's, as with bare well names
  CHECK(well_word.channels[0].wells.size() == 2);
  CHECK(well_word.read_notes ==
        std::vector<std::string>{"line 2: well columns named with a channel tag (\"Well A1\" is well A1): read as A405"});
  const Run fl = read_run_text("t.csv", "Time [s],ex485/em520 A1,ex560/em590 A1\n0,100,200\n30,110,220\n",
                               load_profile("wide-generic"));
  REQUIRE(fl.channels.size() == 2);
  CHECK(fl.channels[1].name == "ex560/em590");
  CHECK(fl.channels[1].quantity == Quantity::fluorescence);
  CHECK(fl.channels[1].values(1, 0) == 220);
  const InputError mixed = read_error("Time [s],A1,A2 (405)\n0,0.1,0.2\n30,0.2,0.3\n", load_profile("wide-generic"));
  CHECK(mixed.where().column == 13);
  CHECK(std::string(mixed.message()).find("expected a bare well name like the header's other well columns") == 0);
  const InputError twice = read_error("Time [s],A1 (340),A1 (340)\n0,0.1,0.2\n", load_profile("wide-generic"));
  CHECK(std::string(twice.message()) == "well A1 tagged \"340\" appears twice in the header (fields 2 and 3)");
}

TEST_CASE("a long table's well column under another name: the one header with the word well, noted") {
  const Run run = read_run_text("l.csv", "Well ID,Time (s),A405\nA1,0,0.1\nA1,30,0.2\nB2,0,0.3\nB2,30,0.5\n",
                                load_profile("long-generic"));
  REQUIRE(run.channels.size() == 1);
  CHECK(run.channels[0].name == "A405");
  CHECK(run.channels[0].wells.size() == 2);
  CHECK(run.channels[0].values(1, 1) == 0.5);  // B2 at 30 s
  CHECK(run.read_notes == std::vector<std::string>{"line 1: the well column is \"Well ID\", the one header with "
                                                   "the word well (`columns.well` names none of this file's headers)"});
  // Two headers with the word: neither is taken.
  const InputError two =
      read_error("Well ID,Well type,Time (s),A405\nA1,sample,0,0.1\n", load_profile("long-generic"));
  CHECK(two.where().line == 2);
  // "Well A1" names a well: a wide table's column, never a long table's well column.
  const InputError wide =
      read_error("Time [s],Well A1,Foo\n0,0.1,0.2\n", load_profile("long-generic"));
  CHECK(std::string(wide.message()) == "found no header naming the well, time and value columns");
}

TEST_CASE("time headers with a unit in brackets; clock times with one ':' that cannot be seconds stop") {
  // "Time (minutes)": 0, 0.5, 1 are 0, 30, 60 s, and the header states it.
  const Run minutes = read_run_text("t.csv", "Time (minutes),A1,A2\n0,0.1,0.2\n0.5,0.11,0.22\n1,0.12,0.24\n",
                                    load_profile("wide-generic"));
  CHECK(minutes.channels[0].time_s == std::vector<double>{0, 30, 60});
  CHECK(fact(minutes, "time_unit")->basis == "the time header \"Time (minutes)\"");
  const Run clock = read_run_text("t.csv", "Well,Time [hh:mm:ss],Value\nA1,0:00:00,0.1\nA1,0:01:00,0.2\n",
                                  load_profile("long-generic"));
  CHECK(clock.channels[0].time_s == std::vector<double>{0, 60});
  // "[hh:mm]" is refused: "0:01" reads as 1 s, so a rename would make every rate 60 × too fast.
  const InputError hm = read_error("Time [hh:mm],A1,A2\n0:00,0.1,0.2\n0:01,0.11,0.22\n", load_profile("wide-generic"));
  REQUIRE(!hm.fixes().empty());
  CHECK(hm.fixes()[0].find("holds hours and minutes, which vzero would read as minutes and seconds") !=
        std::string::npos);
  // 96 wells read at "0:00", "0:01", … one ':' and no hours: 1 s steps as m:ss, under the
  // 1.92 s a plate reader needs for 96 wells (read_facts.cpp): not told apart, so it stops.
  const InputError short_clock =
      read_error(wide96("Time", {"0:00", "0:01", "0:02", "0:03"}), load_profile("wide-generic"));
  CHECK(std::string(short_clock.message()).find("expected clock times that can be told apart") == 0);
  // The same times with their hours are minutes apart, and read so.
  const Run long_clock = read_run_text("t.csv", wide96("Time", {"0:00:00", "0:01:00", "0:02:00"}),
                                       load_profile("wide-generic"));
  CHECK(long_clock.channels[0].time_s == std::vector<double>{0, 60, 120});
}

TEST_CASE("milliseconds in the time header are read; a unit vzero does not read is not renamed away") {
  const Run ms = read_run_text("t.csv", "Time [ms],A1,A2\n0,0.1,0.2\n30000,0.11,0.22\n60000,0.12,0.24\n",
                               load_profile("wide-generic"));
  CHECK(ms.channels[0].time_s == std::vector<double>{0, 30, 60});  // 1 ms = 0.001 s (SI)
  CHECK(fact(ms, "time_unit")->value == "ms");
  CHECK(ms.read_warnings.empty());
  // The same numbers as seconds are 8.3 h apart: read as stated, but said out loud.
  for (const char* header : {"Time [s]", "Time"}) {
    const Run s = read_run_text("t.csv", std::string(header) + ",A1,A2\n0,0.1,0.2\n30000,0.11,0.22\n60000,0.12,0.24\n",
                                load_profile("wide-generic"));
    REQUIRE(s.read_warnings.size() == 1);
    CHECK(s.read_warnings[0].find("a median step of 8.33 h between reads: if they are milliseconds, every rate is "
                                  "1000 × too slow") != std::string::npos);
  }
  const InputError days = read_error("Time [days],A1,A2\n0,0.1,0.2\n1,0.11,0.22\n", load_profile("wide-generic"));
  REQUIRE(!days.fixes().empty());
  CHECK(days.fixes()[0].find("convert them to s, min, h or ms") != std::string::npos);
}
