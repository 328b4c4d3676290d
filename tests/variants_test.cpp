// Everyday export variants the built-in profiles read without --profile (issue 14, point 3).
// Fixtures are invented (tests/data/README.md); each check value is the fixture's own cell,
// or a closed form worked here. On the starting commit every case below failed: no built-in
// profile read the file, or a cell was refused.
#include <string>

#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"

using namespace vzero::test;

namespace {

vzero::Run detect_and_read(const std::string& file) {
  const auto choice = vzero::choose_profile(data(file), "");
  REQUIRE(choice.detected);
  return vzero::read_run(data(file), choice.profile);
}

std::string fact(const vzero::Run& run, const std::string& name) {
  for (const auto& f : run.read_facts)
    if (f.name == name) return f.value + " | " + f.basis;
  return "";
}

}  // namespace

TEST_CASE("temperature headers with a unit of degrees Celsius are the temperature column") {
  // Cells of the fixtures: 30.0/30.1/30.2, 25.0/25.5/26.0 and 37.0/37.0/37.1 °C.
  auto wide = detect_and_read("variant_temperature_units.csv");
  REQUIRE(wide.channels.size() == 1);
  CHECK(wide.channels[0].wells.size() == 2);
  CHECK(wide.channels[0].temperature_c == std::vector<double>{30.0, 30.1, 30.2});
  auto tab = detect_and_read("variant_temp_brackets.tsv");
  CHECK(tab.channels[0].temperature_c == std::vector<double>{25.0, 25.5, 26.0});
  auto lng = detect_and_read("variant_t_c_long.csv");
  CHECK(lng.channels[0].temperature_c == std::vector<double>{37.0, 37.0, 37.1});
  CHECK(lng.channels[0].values(2, 0) == 0.120);
}

TEST_CASE("the empty columns a spreadsheet adds at the end of each line are read through") {
  // Decimal-comma cells "0,110" = 0.110; two wells, three reads.
  auto run = detect_and_read("variant_trailing_empty.csv");
  REQUIRE(run.channels.size() == 1);
  CHECK(run.profile == "wide-semicolon-comma");
  CHECK(run.channels[0].wells.size() == 2);
  CHECK(run.channels[0].reads() == 3);
  CHECK(run.channels[0].values(1, 0) == 0.110);
  CHECK(run.channels[0].values(2, 1) == 0.240);
  // A value under such an empty header is not dropped: it stops the reading at its cell.
  TempDir dir;
  spit(dir / "x.csv", "Time [s];A1;A2;;\n0;0,1;0,2;;\n30;0,1;0,2;;0,5\n");
  try {
    vzero::read_run(dir / "x.csv", vzero::load_profile("wide-semicolon-comma"));
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(e.where().line == 3);
    CHECK(e.where().column == 13);  // "30;0,1;0,2;;" is 12 bytes: the cell "0,5" starts at 13
  }
}

TEST_CASE("overflow spellings: greater-than values, words in any case, runs of *") {
  auto run = detect_and_read("variant_overflow_spellings.csv");
  REQUIRE(run.channels.size() == 1);
  const auto& c = run.channels[0];
  using vzero::ReadStatus;
  // The fixture: A2 ">3.5", "***", ">3.5"; A3 "OVRFLW", "Overflow"; A5 "over"; A6 "*".
  CHECK(c.status(0, 1) == ReadStatus::overflow);
  CHECK(c.status(1, 1) == ReadStatus::overflow);
  CHECK(c.status(0, 2) == ReadStatus::overflow);
  CHECK(c.status(1, 2) == ReadStatus::overflow);
  CHECK(c.status(2, 2) == ReadStatus::ok);
  CHECK(c.status(0, 4) == ReadStatus::overflow);
  CHECK(c.status(1, 5) == ReadStatus::overflow);
  CHECK(c.values(2, 2) == 0.320);
  // Each spelling as written, in file order, is a read fact.
  const std::string f = fact(run, "overflow_tokens");
  CHECK(f.rfind("\">3.5\", \"OVRFLW\", \"over\", \"***\", \"Overflow\", \"*\" | ", 0) == 0);
  CHECK(f.find("a value above the range") != std::string::npos);
}

TEST_CASE("read times written with their units, 0 min 20 s") {
  auto run = detect_and_read("variant_worded_times.csv");
  REQUIRE(run.channels.size() == 1);
  // 0 min 20 s = 20 s; 1 min 0 s = 60 s.
  CHECK(run.channels[0].time_s == std::vector<double>{0, 20, 40, 60});
  CHECK(run.read_notes.empty());
}

TEST_CASE("an error in a long line shows the part of the line around the column it names") {
  // 60 wells: the header is far longer than the 160 bytes an excerpt shows.
  std::string header = "Time [s]", row = "0";
  for (int c = 1; c <= 12; ++c)
    for (char r : std::string("ABCDE")) {
      header += "," + std::string(1, r) + std::to_string(c);
      row += "," + std::string(r == 'E' && c == 12 ? "bad" : "0.100");
    }
  TempDir dir;
  spit(dir / "long.csv", header + "\n" + row + "\n");
  try {
    vzero::read_run(dir / "long.csv", vzero::load_profile("wide-generic"));
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(e.where().column == static_cast<int>(row.size()) - 2);  // "bad" is the last cell
    const std::string shown = e.formatted();
    CHECK(shown.find("  line 2: ...") != std::string::npos);
    CHECK(shown.find(",bad\n") != std::string::npos);
  }
}

TEST_CASE("a channel no section names is named from the one wavelength of the preamble") {
  auto run = detect_and_read("variant_wavelength_preamble.csv");
  REQUIRE(run.channels.size() == 1);
  CHECK(run.channels[0].name == "A340");  // "340 nm" -> A340 (common practice: A + wavelength in nm)
  CHECK(run.channels[0].quantity == vzero::Quantity::absorbance);
  CHECK(run.channels[0].unit == "AU");
  CHECK(fact(run, "channel") ==
        "A340 | no section label; the wavelength \"340 nm\" at line 2, the only one outside the data, read as an "
        "absorbance channel");
  // Two wavelengths (excitation and emission): which one names the channel is not guessed.
  auto two = detect_and_read("variant_two_wavelengths.csv");
  CHECK(two.channels[0].name == "signal");
}

TEST_CASE("grid read labels in other wordings: a counter, a clock or worded time, a temperature") {
  auto cycle = detect_and_read("variant_grid_cycle_labels.txt");
  REQUIRE(cycle.channels.size() == 1);
  CHECK(cycle.profile == "grid-labels");
  CHECK(cycle.channels[0].time_s == std::vector<double>{0, 20, 40});  // 0:00:20 = 20 s
  CHECK(cycle.channels[0].temperature_c == std::vector<double>{30.0, 30.1, 30.2});
  CHECK(cycle.channels[0].wells.size() == 6);   // rows A-B x columns 1-3
  CHECK(cycle.channels[0].values(2, 5) == 0.350);  // B3 of the third read
  auto tab = detect_and_read("variant_grid_tab_labels.txt");
  CHECK(tab.channels[0].time_s == std::vector<double>{0, 20, 40});  // 0 min 40 s = 40 s
  CHECK(tab.channels[0].temperature_c == std::vector<double>{37.0, 37.0, 37.1});
  auto semi = detect_and_read("variant_grid_semicolon_labels.txt");
  CHECK(semi.profile == "grid-labels");
  CHECK(semi.channels[0].time_s == std::vector<double>{0, 30, 60});  // "time 30 s"
  CHECK(semi.channels[0].temperature_c == std::vector<double>{37.0, 37.0, 37.2});
  CHECK(semi.channels[0].values(2, 5) == 0.390);  // B3 of the third read
}

TEST_CASE("two channel sections labelled by wavelength, each with its own time column") {
  auto run = detect_and_read("variant_two_sections.csv");
  REQUIRE(run.channels.size() == 2);
  CHECK(run.channels[0].name == "A340");  // "Wavelength: 340 nm" (common practice: A + nm)
  CHECK(run.channels[1].name == "A405");
  CHECK(run.channels[1].quantity == vzero::Quantity::absorbance);
  CHECK(run.channels[1].unit == "AU");
  CHECK(run.channels[0].time_s == std::vector<double>{0, 30, 60});
  CHECK(run.channels[1].time_s == std::vector<double>{5, 35, 65});  // the section's own times
  CHECK(run.channels[1].values(2, 1) == 0.240);
}
