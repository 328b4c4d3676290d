// Well names, plate formats and plate geometry.
#include "vzero/run.hpp"
#include "test_support.hpp"

#include <algorithm>
#include <cstdint>
#include <vector>

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
  CHECK_FALSE(parse_well("AG1"));  // beyond row AF
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

namespace {
// Expands well_set_text's output back into wells (each block to its rectangle).
std::vector<WellId> expand_set_text(const std::string& text) {
  std::vector<WellId> out;
  std::size_t start = 0;
  while (start < text.size()) {
    std::size_t end = text.find(';', start);
    if (end == std::string::npos) end = text.size();
    const std::string item = text.substr(start, end - start);
    const std::size_t colon = item.find(':');
    const WellId a = *parse_well(item.substr(0, colon));
    const WellId b = colon == std::string::npos ? a : *parse_well(item.substr(colon + 1));
    for (int r = a.row; r <= b.row; ++r)
      for (int c = a.column; c <= b.column; ++c) out.push_back(WellId{r, c});
    start = end + 1;
  }
  return out;
}
}  // namespace

TEST_CASE("sets of wells as text: lists, and rectangles as their corners") {
  std::vector<WellId> block;  // columns 45–48 of a 1536-well plate, every row
  for (int r = 0; r < 32; ++r)
    for (int c = 44; c < 48; ++c) block.push_back(WellId{r, c});
  CHECK(well_set_text(block) == "A45:AF48");
  CHECK(well_set_text({*parse_well("D2"), *parse_well("D1")}) == "D1;D2");  // two wells stay a list
  CHECK(well_set_text({*parse_well("A1"), *parse_well("B1"), *parse_well("C1"), *parse_well("A1")}) == "A1:C1");
  CHECK(well_set_text({*parse_well("H1"), *parse_well("H12"), *parse_well("A1"), *parse_well("A12")}) ==
        "A1;A12;H1;H12");
  // An L shape: the top row's run first, then the column below it.
  CHECK(well_set_text({*parse_well("A1"), *parse_well("A2"), *parse_well("A3"), *parse_well("B1"),
                       *parse_well("C1")}) == "A1:A3;B1;C1");
  CHECK(well_set_text({}).empty());
  // Property: the text names exactly the wells of the set, each once, for pseudo-random sets.
  std::uint64_t state = 12345;
  for (int trial = 0; trial < 200; ++trial) {
    std::vector<WellId> set;
    for (int r = 0; r < 16; ++r)
      for (int c = 0; c < 24; ++c) {
        state = state * 6364136223846793005ULL + 1442695040888963407ULL;
        if ((state >> 33) % 3 == 0) set.push_back(WellId{r, c});
      }
    std::vector<WellId> back = expand_set_text(well_set_text(set));
    std::sort(back.begin(), back.end());
    CHECK(std::adjacent_find(back.begin(), back.end()) == back.end());
    CHECK(back == set);
  }
}
