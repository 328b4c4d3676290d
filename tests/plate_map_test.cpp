// Plate maps: tidy and plate-grid forms read the same; malformed maps give exact messages.
#include "vzero/plate_map.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"

using namespace vzero;
using vzero::test::source;

namespace {
std::string message_of(const std::string& text) {
  try {
    parse_plate_map("map.csv", text);
  } catch (const InputError& e) {
    return e.formatted();
  }
  return "no error";
}
}  // namespace

TEST_CASE("the demo map reads the same in tidy and plate-grid form") {
  PlateMap t = read_plate_map(source("demo-data/hydrolase_map.csv"));
  PlateMap g = read_plate_map(source("demo-data/hydrolase_map_grid.csv"));
  CHECK(t.form == "table");
  CHECK(g.form == "grid");
  CHECK(t.columns == g.columns);
  CHECK(t.columns == std::vector<std::string>{"substrate", "match", "group", "inhibitor_uM", "enzyme_nM"});
  REQUIRE(t.wells.size() == g.wells.size());
  CHECK(t.wells.size() == 61);  // 8 columns × (3 + 1 + 3 rows) + 4 buffer blanks + A12
  for (const auto& [w, a] : t.wells) {
    const WellInfo* b = g.find(w);
    REQUIRE(b != nullptr);
    CHECK(a.role == b->role);
    CHECK(a.values == b->values);
    CHECK(a.match == b->match);
  }
  const WellInfo* d3 = t.find(*parse_well("D3"));
  REQUIRE(d3);
  CHECK(d3->role == Role::blank);
  CHECK(d3->substrate == 40);
  CHECK(t.find(*parse_well("A9")) == nullptr);  // unmapped: reported as empty
}

TEST_CASE("plate map errors") {
  CHECK(message_of("well,role\nA1,sample\nA01,blank\n") ==
        "map.csv:3:1: well A1 is mapped twice (first at line 2)\n"
        "  line 3: A01,blank\n"
        "  possible fix: keep one row per well");
  CHECK(
      message_of("well,role\nA1,enzyme\n") ==
      "map.csv:2:4: expected a role (sample, blank, standard, empty, full-activity or no-activity), found \"enzyme\"\n"
      "  line 2: A1,enzyme\n"
      "  possible fix: use one of the roles in the `role` column");
  // A word labs write for a role: the likely role is offered, never assumed.
  CHECK(message_of("well,role\nA1,Buffer\n") ==
        "map.csv:2:4: expected a role (sample, blank, standard, empty, full-activity or no-activity), found "
        "\"Buffer\"\n"
        "  line 2: A1,Buffer\n"
        "  possible fixes:\n"
        "    - if \"Buffer\" means blank (a well with everything but the enzyme, or the substrate, whose signal is "
        "subtracted), write that role\n"
        "    - use one of the roles in the `role` column");
  CHECK(message_of("well,role\nA1,pos\n").find("if \"pos\" means full-activity, write that role") != std::string::npos);
  CHECK(message_of("well,role,substrate\nA1,sample,-5\n") ==
        "map.csv:2:11: expected a concentration >= 0 in `substrate`, found -5\n"
        "  line 2: A1,sample,-5\n"
        "  possible fix: concentrations cannot be negative; leave the cell empty when unknown");
  CHECK(
      message_of("well,role,substrate\nA1,sample,lots\n") ==
      "map.csv:2:11: expected a number in `substrate`, found \"lots\"\n"
      "  line 2: A1,sample,lots\n"
      "  possible fix: write the concentration as a plain number with '.' decimals; a unit goes in the column's "
        "header, e.g. `substrate (mM)`");
  CHECK(message_of("well,role\nX99,sample\n") ==
        "map.csv:2:1: expected a well name (A1 … AF48), found \"X99\"\n"
        "  line 2: X99,sample\n"
        "  possible fix: write wells as a row letter and a column number, e.g. B7 or B07");
  CHECK(message_of("well,role\nA1,sample,extra\n") ==
        "map.csv:2:11: expected 2 fields as in the header, found 3\n"
        "  line 2: A1,sample,extra\n"
        "  possible fix: make every row hold 2 fields separated by ','");
  CHECK(message_of("well,role\nA1,standard\n") ==
        "map.csv:2: standard well A1 has no `standard_conc`\n"
        "  line 2: A1,standard\n"
        "  possible fix: give every standard well its known concentration in `standard_conc`");
  CHECK(message_of("") == "map.csv: the plate map is empty\n  possible fix: check that the right file was given");
}

TEST_CASE("a map naming wells the export lacks is an error") {
  Run run = read_run_text("plate.csv", "Time [s],A1,A2\n0,1,2\n30,1,2\n", load_profile("wide-generic"));
  PlateMap ok = parse_plate_map("map.csv", "well,role\nA1,sample\n");
  CHECK_NOTHROW(check_plate_map(ok, run));
  PlateMap extra = parse_plate_map("map.csv", "well,role\nA1,sample\nB3,blank\n");
  try {
    check_plate_map(extra, run);
    FAIL("expected an error");
  } catch (const InputError& e) {
    CHECK(e.formatted() ==
          "map.csv:3:1: well B3 is in the plate map but plate.csv has no reads for it\n"
          "  line 3: B3,blank\n"
          "  possible fix: remove the well from the map, or check that the map belongs to this export");
  }
  // A well beyond the plate: file:line:column of its well name (the audit found only file:line).
  PlateMap beyond = parse_plate_map("map.csv", "role,well\nsample,A1\nblank,H12\n");
  try {
    check_plate_map(beyond, run);
    FAIL("expected an error");
  } catch (const InputError& e) {
    CHECK(e.formatted() ==
          "map.csv:3:7: well H12 is not on the 6-well plate (rows A–B, columns 1–3) read from plate.csv\n"
          "  line 3: blank,H12\n"
          "  possible fix: check the well name in the plate map, or set `plate` in the profile");
  }
  // Plate-grid form: the place of the well's role cell.
  PlateMap grid = parse_plate_map("map.csv", "role\n,1,2,3\nA,sample,,\nC,,blank,\n");
  try {
    check_plate_map(grid, run);
    FAIL("expected an error");
  } catch (const InputError& e) {
    CHECK(e.where().line == 4);
    CHECK(e.where().column == 4);
    CHECK(e.message() == "well C2 is not on the 6-well plate (rows A–B, columns 1–3) read from plate.csv");
  }
}

TEST_CASE("a sample at substrate 0 is read: the no-substrate control of a kinetics series") {
  // Common practice: a series of substrate concentrations includes a no-substrate control.
  PlateMap m = parse_plate_map("map.csv", "well,role,substrate\nA1,sample,0\nA2,sample,20\nB1,blank,0\n");
  REQUIRE(m.find(*parse_well("A1")) != nullptr);
  CHECK(m.find(*parse_well("A1"))->role == Role::sample);
  CHECK(m.find(*parse_well("A1"))->substrate == 0);
  CHECK(m.find(*parse_well("B1"))->substrate == 0);
  // Only a negative concentration is refused.
  CHECK(message_of("well,role,substrate\nA1,sample,-0.5\n") ==
        "map.csv:2:11: expected a concentration >= 0 in `substrate`, found -0.5\n"
        "  line 2: A1,sample,-0.5\n"
        "  possible fix: concentrations cannot be negative; leave the cell empty when unknown");
  // A concentration too large for a double says so (1.7976931348623157e308 = DBL_MAX, C11 §5.2.4.2.2).
  CHECK(
      message_of("well,role,substrate\nA1,sample,1e400\n") ==
      "map.csv:2:11: expected a number in `substrate`, found \"1e400\", which is too large for a double (the largest "
      "is 1.7976931348623157e308)\n"
      "  line 2: A1,sample,1e400\n"
      "  possible fix: write the concentration as a plain number with '.' decimals; a unit goes in the column's "
        "header, e.g. `substrate (mM)`");
}
