// The three shape readers and the profile options, on the demo plate and small inputs.
#include <algorithm>
#include <cmath>
#include <fstream>
#include <iterator>
#include <limits>

#include <fmt/format.h>

#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"

using namespace vzero;
using vzero::test::source;

namespace {

Run demo(const std::string& name) {
  std::string path = source("demo-data/" + name);
  return read_run(path, choose_profile(path, "").profile);
}

// Same plate, channel, times, statuses and values (values exactly: the demo writes 4 decimals).
void check_same(const Run& a, const Run& b) {
  REQUIRE(a.channels.size() == b.channels.size());
  CHECK(a.format == b.format);
  for (std::size_t k = 0; k < a.channels.size(); ++k) {
    const Channel &x = a.channels[k], &y = b.channels[k];
    CHECK(x.name == y.name);
    CHECK(x.quantity == y.quantity);
    CHECK(x.time_s == y.time_s);
    CHECK(x.wells == y.wells);
    CHECK(x.temperature_c == y.temperature_c);
    REQUIRE(x.values.rows() == y.values.rows());
    REQUIRE(x.values.cols() == y.values.cols());
    int differ = 0;
    for (Eigen::Index i = 0; i < x.values.size(); ++i) {
      if (x.status.data()[i] != y.status.data()[i])
        ++differ;
      else if (x.status.data()[i] == ReadStatus::ok && x.values.data()[i] != y.values.data()[i])
        ++differ;
    }
    CHECK(differ == 0);
  }
}

std::string message_of(const std::function<void()>& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.formatted();
  }
  return "no error";
}

Run wide(const std::string& text, const std::string& profile = "wide-generic") {
  return read_run_text("t.csv", text, load_profile(profile));
}

}  // namespace

TEST_CASE("the demo plate reads identically in every shape") {
  Run w = demo("hydrolase_wide.csv");
  CHECK(w.shape == "wide");
  CHECK(w.profile == "wide-generic");
  CHECK(w.format.wells() == 96);
  REQUIRE(w.channels.size() == 1);
  CHECK(w.channels[0].name == "A405");
  CHECK(w.channels[0].quantity == Quantity::absorbance);
  CHECK(w.channels[0].unit == "AU");
  CHECK(w.channels[0].reads() == 61);
  CHECK(w.channels[0].time_s.back() == 600);
  // The over-concentrated well A12 saturates: its late reads are overflow, never numbers.
  int a12 = w.channels[0].column_of(11);
  CHECK(w.channels[0].status(60, a12) == ReadStatus::overflow);
  CHECK(std::isnan(w.channels[0].values(60, a12)));
  CHECK(w.channels[0].values(0, 0) == 0.0463);  // demo-data/hydrolase_wide.csv line 8, A1
  Run g = demo("hydrolase_grid.txt");
  CHECK(g.shape == "grid");
  Run l = demo("hydrolase_long.csv");
  CHECK(l.shape == "long");
  Run s = demo("hydrolase_wide_semicolon.csv");
  CHECK(s.profile == "wide-semicolon-comma");
  check_same(w, g);
  check_same(w, l);
  check_same(w, s);
  {
    // The same export from a decimal-comma spreadsheet's tab-separated text: every ';' a tab.
    vzero::test::TempDir dir;
    std::ifstream in(source("demo-data/hydrolase_wide_semicolon.csv"), std::ios::binary);
    std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    std::replace(text.begin(), text.end(), ';', '\t');
    const std::string path = dir / "tabs.txt";
    std::ofstream(path, std::ios::binary) << text;
    const ProfileChoice c = choose_profile(path, "");
    CHECK(c.profile.name == "wide-tab-comma");
    check_same(w, read_run(path, c.profile));
  }
  CHECK(w.metadata == g.metadata);
  CHECK(w.metadata.size() == 3);
  CHECK(w.metadata[0] == std::pair<std::string, std::string>{"Operator", "demo"});
}

TEST_CASE("CRLF line ends and a UTF-8 BOM read the same as LF") {
  std::string lf = "Time [s],A1,A2\n0,0.1,0.2\n30,0.15,0.25\n60,0.2,0.3\n";
  std::string crlf = "\xEF\xBB\xBFTime [s],A1,A2\r\n0,0.1,0.2\r\n30,0.15,0.25\r\n60,0.2,0.3\r\n";
  check_same(wide(lf), wide(crlf));
}

TEST_CASE("profile options: delimiter, decimal mark, time units, tokens, temperature") {
  SUBCASE("tab delimiter, minutes from the header, overflow and missing tokens") {
    Run r = wide("Time [min]\tTemp\tA1\tB1\n0\t25.0\t0.1\tOVER\n0.5\t25.2\t\t1.5\n");
    const Channel& c = r.channels[0];
    CHECK(c.time_s == std::vector<double>{0, 30});
    CHECK(c.temperature_c == std::vector<double>{25.0, 25.2});
    CHECK(r.format.wells() == 6);  // the smallest plate holding A1 and B1
    int a1 = c.column_of(r.format.index(*parse_well("A1")));
    int bb = c.column_of(r.format.index(*parse_well("B1")));
    CHECK(c.status(0, bb) == ReadStatus::overflow);
    CHECK(c.status(1, a1) == ReadStatus::missing);
    CHECK(c.values(1, bb) == 1.5);
  }
  SUBCASE("a degree sign after T marks the temperature column, with or without a wavelength") {
    // Common practice in exports: "T°", "T° 405" (the temperature logged with the 405 nm
    // channel), "T°C"; a T with no degree sign, or a degree sign before other text, is not one.
    for (const char* h : {"T\xc2\xb0", "T\xc2\xb0 405", "t\xc2\xb0 340 nm", "T \xc2\xb0" "C", "T\xc2\xba"}) {
      Run r = wide(std::string("Time [s]\t") + h + "\tA1\n0\t37.0\t0.1\n30\t37.1\t0.2\n");
      CAPTURE(h);
      CHECK(r.channels[0].temperature_c == std::vector<double>{37.0, 37.1});
    }
    for (const char* h : {"T 405", "T\xc2\xb0 40", "T\xc2\xb0 405 AU", "Tx\xc2\xb0"}) {
      CAPTURE(h);
      CHECK_THROWS_AS(wide(std::string("Time [s]\t") + h + "\tA1\n0\t37.0\t0.1\n30\t37.1\t0.2\n"), InputError);
    }
  }
  SUBCASE("clock times h:mm:ss and mm:ss") {
    Run r = wide("Time,A1\n0:00:00,1\n0:00:30,2\n1:00:30.5,3\n");
    CHECK(r.channels[0].time_s == std::vector<double>{0, 30, 3630.5});
    Run m = wide("Time,A1\n00:00,1\n01:30,2\n");
    CHECK(m.channels[0].time_s == std::vector<double>{0, 90});
  }
  SUBCASE("decimal comma with semicolons") {
    Run r = wide("Time [s];A1\n0;0,125\n30;1,5E-1\n", "wide-semicolon-comma");
    CHECK(r.channels[0].values(0, 0) == 0.125);
    CHECK(r.channels[0].values(1, 0) == 0.15);
  }
  SUBCASE("several channels as labelled sections, each with its own header") {
    Run r = wide("Channel: A340\nTime [s],A1\n0,1.0\n30,0.9\n\nChannel: ex485/em520\nTime [s],A1\n0,100\n30,150\n");
    REQUIRE(r.channels.size() == 2);
    CHECK(r.channels[0].name == "A340");
    CHECK(r.channels[1].name == "ex485/em520");
    CHECK(r.channels[1].quantity == Quantity::fluorescence);
    CHECK(r.channels[1].unit == "RFU");
  }
  SUBCASE("a fixed plate size in the profile") {
    Profile p = parse_profile("shape = \"wide\"\nplate = 384\n", "p.toml", "p");
    Run r = read_run_text("t.csv", "time,A1\n0,1\n", p);
    CHECK(r.format.wells() == 384);
    CHECK_FALSE(r.format_inferred);
  }
}

TEST_CASE("long shape: rows in any order, channel column, missing combinations") {
  Profile p = load_profile("long-generic");
  Run r = read_run_text("l.csv",
                        "well,time_s,channel,value\nA2,30,A340,0.8\nA1,0,A340,1.0\nA2,0,A340,0.9\nA1,0,A405,0.5\n", p);
  REQUIRE(r.channels.size() == 2);
  const Channel& c = r.channels[0];
  CHECK(c.name == "A340");
  CHECK(c.time_s == std::vector<double>{0, 30});
  CHECK(c.status(1, c.column_of(0)) == ReadStatus::missing);  // A1 has no row at 30 s
  CHECK(c.values(1, c.column_of(1)) == 0.8);
}

TEST_CASE("long shape: a value column headed by the signal's name") {
  // Long exports often head the values with the signal ("RFU", "OD (600 nm)") rather than
  // "value": with no value column, the one other column whose header names a signal holds
  // the values and names the channel (A + wavelength for absorbance, as section labels do).
  Profile p = load_profile("long-generic");
  const auto channel = [&](const std::string& header) {
    Run r = read_run_text("l.csv", "well,time_s," + header + "\nA1,0,1.0\nA1,30,1.5\n", p);
    REQUIRE(r.channels.size() == 1);
    CHECK(r.channels[0].values(1, 0) == 1.5);
    return fmt::format("{} {} {}", r.channels[0].name, to_string(r.channels[0].quantity), r.channels[0].unit);
  };
  CHECK(channel("RFU") == "RFU fluorescence RFU");
  CHECK(channel("Fluorescence (RFU)") == "Fluorescence (RFU) fluorescence RFU");
  CHECK(channel("RLU") == "RLU luminescence RLU");
  CHECK(channel("OD (600 nm)") == "A600 absorbance AU");
  CHECK(channel("A405") == "A405 absorbance AU");
  CHECK(channel("Abs 340 nm") == "A340 absorbance AU");
  CHECK(channel("Absorbance") == "Absorbance absorbance AU");
  // Not a signal's name, two of them, or a unit that contradicts the word: no value column.
  for (const char* header : {"Intensity", "RFU,RLU", "Fluorescence (AU)", "A12", "OD (mg)"}) {
    CAPTURE(header);
    const std::string text = std::string("well,time_s,") + header + "\nA1,0,1.0,1\nA1,30,1.5,1\n";
    CHECK(message_of([&] { read_run_text("l.csv", text, p); }).find("expected a value column") !=
          std::string::npos);
  }
}

TEST_CASE("reader errors name file:line:column, what was expected and found, and the fix") {
  CHECK(message_of([] { wide("Time [s],A1,A2\n0,0.1,0.2\n30,0.1\n"); }) ==
        "t.csv:3:7: expected 3 fields as in the header at line 1, found 2\n"
        "  line 3: 30,0.1\n"
        "  possible fix: check for a truncated or extra field; a file cut off mid-row must be re-exported or the "
        "incomplete last line deleted");
  CHECK(message_of([] { wide("Time [s],A1\n0,abc\n"); }) ==
        "t.csv:2:3: expected a number for well A1, found \"abc\"\n"
        "  line 2: 0,abc\n"
        "  possible fix: add \"abc\" to the profile's `overflow` or `missing` list if it marks an unusable read");
  CHECK(message_of([] { wide("Time [s];A1\n0;0,5\n"); }) ==
        "t.csv:2:3: expected a number for well A1, found \"0,5\"\n"
        "  line 2: 0;0,5\n"
        "  possible fix: set decimal = \",\" (and delimiter = \";\") in the profile, or pass --profile "
        "wide-semicolon-comma");
  CHECK(message_of([] { wide("Time [s],A1\n30,1\n0,2\n"); }) ==
        "t.csv:3:1: read time goes backwards in channel signal: 0 s after 30 s at line 2\n"
        "  line 3: 0,2\n"
        "  possible fix: check the time column and the profile's `time_unit`; reads must be in time order");
  CHECK(message_of([] { wide("Time [s],A1\n30,1\n30,2\n"); }) ==
        "t.csv:3:1: read time 30 s appears twice in channel signal (first at line 2)\n"
        "  line 3: 30,2\n"
        "  possible fix: remove the duplicated read, or check that two exports were not pasted together");
  CHECK(message_of([] { wide("Time [s],A1,A1\n0,1,2\n"); }) ==
        "t.csv:1:13: well A1 appears twice in the header (fields 2 and 3)\n"
        "  line 1: Time [s],A1,A1\n"
        "  possible fix: remove or rename the duplicated column");
  CHECK(message_of([] { wide("Time [s],A1,Q99\n0,1,2\n"); }) ==
        "t.csv:1:13: expected a well name (A1 … AF48) or a known column in the header, found \"Q99\"\n"
        "  line 1: Time [s],A1,Q99\n"
        "  possible fix: add \"Q99\" to `columns.ignore` (or `columns.temperature`) in the profile");
  CHECK(message_of([] { wide(""); }).rfind("t.csv: found no data", 0) == 0);
  CHECK(message_of([] { read_run_text("l.csv", "well,time,value\nZZ9,0,1\n", load_profile("long-generic")); }) ==
        "l.csv:2:1: expected a well name (A1 … AF48), found \"ZZ9\"\n"
        "  line 2: ZZ9,0,1\n"
        "  possible fix: check the well column; names are a row letter (A–Z, AA–AF) and a column number");
  CHECK(message_of([] { wide(std::string("Time [s],A1\n0,1\x00", 16) + "\n30,2\n"); }) ==
        "t.csv:2:4: found a NUL byte; this is not a text export\n"
        "  possible fix: export the data as text (CSV or tab-separated); UTF-16 files must be saved as UTF-8");
}

TEST_CASE("a plate map given as the export is recognised") {
  try {
    choose_profile(source("demo-data/hydrolase_map.csv"), "");
    FAIL("expected an error");
  } catch (const InputError& e) {
    REQUIRE(e.fixes().size() == 2);
    CHECK(e.fixes()[0] == "this looks like a plate map (it has `well` and `role` columns): pass it with --layout");
  }
}

TEST_CASE("a number too small for a double reads as 0; one too large is refused, saying so") {
  // IEEE 754 round to nearest: below half the smallest subnormal (2^-1075, about 2.5e-324)
  // a decimal rounds to a zero of its sign (from memory); std::from_chars reports it as
  // result_out_of_range all the same. 1.7976931348623157e308 is DBL_MAX (C11 §5.2.4.2.2).
  Run r = wide("Time [s],A1,A2,A3\n0,1e-400,-1e-400,4.9e-324\n30,0.000000000000000000000000000000001e-300,1,2\n");
  const Channel& c = r.channels.at(0);
  CHECK(c.status(0, 0) == ReadStatus::ok);
  CHECK(c.values(0, 0) == 0.0);
  CHECK_FALSE(std::signbit(c.values(0, 0)));
  CHECK(c.values(0, 1) == 0.0);
  CHECK(std::signbit(c.values(0, 1)));
  CHECK(c.values(0, 2) == std::numeric_limits<double>::denorm_min());
  CHECK(c.values(1, 0) == 0.0);
  CHECK(message_of([] { wide("Time [s],A1\n0,1e400\n"); }) ==
        "t.csv:2:3: expected a number for well A1, found \"1e400\", which is too large for a double (the largest is "
        "1.7976931348623157e308)\n"
        "  line 2: 0,1e400\n"
        "  possible fix: correct the cell; if the instrument writes \"1e400\" for a saturated read, add it to the "
        "profile's `overflow` list");
  CHECK(message_of([] { wide("Time [s];A1\n0;-2,5e999\n", "wide-semicolon-comma"); }) ==
        "t.csv:2:3: expected a number for well A1, found \"-2,5e999\", which is too large for a double (the largest is "
        "1.7976931348623157e308)\n"
        "  line 2: 0;-2,5e999\n"
        "  possible fix: correct the cell; if the instrument writes \"-2,5e999\" for a saturated read, add it to the "
        "profile's `overflow` list");
}

TEST_CASE("a read time beyond 1e10 s is out of range, and the message says so") {
  // 1e10 s is the limit (reader_common.hpp, k_max_time_s); 1e10 s = 166666666.67 min.
  CHECK(wide("Time [s],A1\n0,1\n1e10,2\n").channels.at(0).time_s.back() == 1e10);
  CHECK(wide("Time [s],A1\n-1e10,1\n0,2\n").channels.at(0).time_s.front() == -1e10);
  CHECK(message_of([] { wide("Time [min],A1\n0,1\n166666667,2\n"); }) ==
        "t.csv:3:1: expected a read time between -1e10 and 1e10 s (about 317 years), found \"166666667\" min, which is "
        "out of range\n"
        "  line 3: 166666667,2\n"
        "  possible fix: check the unit of the times (in the time header, e.g. \"Time [min]\", or the profile's "
        "`time_unit`) and that the column holds read times");
  // h:mm:ss: 2777777:46:40 is 1e10 s exactly, one second more is out of range.
  CHECK(wide("Time [s],A1\n0,1\n2777777:46:40,2\n").channels.at(0).time_s.back() == 1e10);
  CHECK(message_of([] { wide("Time [s],A1\n0,1\n2777777:46:41,2\n"); })
            .rfind("t.csv:3:1: expected a read time between -1e10 and 1e10 s (about 317 years), found "
                   "\"2777777:46:41\", which "
                   "is out of range\n",
                   0) == 0);
  // Not a time at all: the message stays as it was.
  CHECK(message_of([] {
          wide("Time [s],A1\n0,1\n1.5:00:00,2\n");
        }).rfind("t.csv:3:1: expected a read time, found \"1.5:00:00\"\n", 0) == 0);
  CHECK(message_of([] {
          wide("Time [s],A1\n0,1\n1:75,2\n");
        }).rfind("t.csv:3:1: expected a read time, found \"1:75\"\n", 0) == 0);
  // The grid shape's read label, and the long shape.
  CHECK(message_of(
            [] { read_run_text("g.txt", "Read 1 at 99999999999 s\n\t1\nA\t0.5\n", load_profile("grid-generic")); }) ==
        "g.txt:1:1: expected a read time in the read label between -1e10 and 1e10 s (about 317 years), found "
        "\"99999999999\" s, which is out of range\n"
        "  line 1: Read 1 at 99999999999 s\n"
        "  possible fix: check the unit of the times (in the time header, e.g. \"Time [min]\", or the profile's "
        "`time_unit`) and that the column holds read times");
  CHECK(message_of([] {
          read_run_text("l.csv", "well,time_min,value\nA1,0,1\nA1,1e300,2\n", load_profile("long-generic"));
        }) ==
        "l.csv:3:4: expected a read time between -1e10 and 1e10 s (about 317 years), found \"1e300\" min, which is "
        "out of range\n"
        "  line 3: A1,1e300,2\n"
        "  possible fix: check the unit of the times (in the time header, e.g. \"Time [min]\", or the profile's "
        "`time_unit`) and that the column holds read times");
}

TEST_CASE("a well off a fixed plate is named with file:line:column in every shape") {
  // Common practice: a 6-well plate has rows A–B and columns 1–3.
  Profile w = load_profile("wide-generic");
  w.plate_wells = 6;
  CHECK(message_of([&] { read_run_text("w.csv", "Time [s],A1,B4\n0,1,2\n", w); }) ==
        "w.csv:1:13: well B4 does not exist on a 6-well plate (rows A–B, columns 1–3)\n"
        "  line 1: Time [s],A1,B4\n"
        "  possible fix: set `plate` in the profile to the plate used (now 6), or 0 to infer it");
  Profile l = load_profile("long-generic");
  l.plate_wells = 6;
  CHECK(message_of([&] { read_run_text("l.csv", "well,time,value\nA1,0,1\nC1,0,2\n", l); }) ==
        "l.csv:3:1: well C1 does not exist on a 6-well plate (rows A–B, columns 1–3)\n"
        "  line 3: C1,0,2\n"
        "  possible fix: set `plate` in the profile to the plate used (now 6), or 0 to infer it");
  Profile g = load_profile("grid-generic");
  g.plate_wells = 6;
  CHECK(message_of([&] { read_run_text("g.txt", "Read 1 at 0 s\n\t1\t4\nA\t1\t2\n", g); }) ==
        "g.txt:2:4: column 4 does not exist on a 6-well plate (rows A–B, columns 1–3)\n"
        "  line 2: \t1\t4\n"
        "  possible fix: set `plate` in the profile to the plate used (now 6), or 0 to infer it");
  CHECK(message_of([&] { read_run_text("g.txt", "Read 1 at 0 s\n\t1\t2\nA\t1\t2\nC\t3\t4\n", g); }) ==
        "g.txt:4:1: row C does not exist on a 6-well plate (rows A–B, columns 1–3)\n"
        "  line 4: C\t3\t4\n"
        "  possible fix: set `plate` in the profile to the plate used (now 6), or 0 to infer it");
}
