// Well names, plate formats and plate geometry.
#include "test_support.hpp"
#include "vzero/run.hpp"

using namespace vzero;

TEST_CASE("well names follow the ANSI/SLAS 4-2004 row/column convention") {
  // Source: ANSI/SLAS 4-2004 "Microplates — Well Positions": rows A–Z then AA–AF, columns from 1.
  CHECK(well_name(WellId{0, 0}) == "A1");
  CHECK(well_name(WellId{7, 11}) == "H12");
  CHECK(well_name(WellId{26, 0}) == "AA1");
  CHECK(well_name(WellId{31, 47}) == "AF48");
  CHECK(parse_well("A01") == WellId{0, 0});
  CHECK(parse_well(" b7 ") == WellId{1, 6});
  CHECK(parse_well("AF48") == WellId{31, 47});
  CHECK_FALSE(parse_well("AG1"));   // beyond row AF
  CHECK_FALSE(parse_well("A0"));
  CHECK_FALSE(parse_well("A49"));
  CHECK_FALSE(parse_well("1A"));
  CHECK_FALSE(parse_well("time"));
  CHECK_FALSE(parse_well(""));
}

TEST_CASE("plate formats and row-major indices") {
  // Source: shared REFERENCES.md §6 name/index checks (0-based index = row·cols + col).
  auto p96 = *plate_format_for(96), p384 = *plate_format_for(384), p1536 = *plate_format_for(1536);
  CHECK(p96.index(*parse_well("B2")) == 13);
  CHECK(p384.index(*parse_well("B2")) == 25);
  CHECK(p1536.index(*parse_well("AA1")) == 1248);
  CHECK(p1536.index(*parse_well("AF48")) == 1535);
  CHECK_FALSE(plate_format_for(100));
  CHECK(plate_format_for(6)->rows == 2);
  CHECK(smallest_format_holding({*parse_well("A1"), *parse_well("H12")})->wells() == 96);
  CHECK(smallest_format_holding({*parse_well("I1")})->wells() == 384);
  CHECK(smallest_format_holding({*parse_well("B3")})->wells() == 6);
}

TEST_CASE("well centres from ANSI/SLAS 4-2004 offsets") {
  // Source: ANSI/SLAS 4-2004 offsets as commonly quoted (shared REFERENCES.md §6); each grid is
  // centred on the 127.76 × 85.48 mm footprint of ANSI/SLAS 1-2004, checked below too.
  auto c = [](int wells, const char* w) { return *well_centre_mm(*plate_format_for(wells), *parse_well(w)); };
  CHECK_ABS(c(96, "A1").first, 14.38, 1e-9);
  CHECK_ABS(c(96, "A1").second, 11.24, 1e-9);
  CHECK_ABS(c(96, "H12").first, 113.38, 1e-9);
  CHECK_ABS(c(96, "H12").second, 74.24, 1e-9);
  CHECK_ABS(c(96, "B2").first, 23.38, 1e-9);
  CHECK_ABS(c(384, "P24").first, 115.63, 1e-9);
  CHECK_ABS(c(384, "P24").second, 76.49, 1e-9);
  CHECK_ABS(c(1536, "AA1").second, 66.365, 1e-9);
  CHECK_ABS(c(1536, "AF48").first, 116.755, 1e-9);
  CHECK_ABS(c(1536, "AF48").second, 77.615, 1e-9);
  for (int wells : {96, 384, 1536}) {
    auto f = *plate_format_for(wells);
    auto a = *well_centre_mm(f, WellId{0, 0});
    auto z = *well_centre_mm(f, WellId{f.rows - 1, f.columns - 1});
    CHECK_ABS((a.first + z.first) / 2, 127.76 / 2, 1e-9);
    CHECK_ABS((a.second + z.second) / 2, 85.48 / 2, 1e-9);
  }
}
