// Spreadsheet workbooks (.xlsx): read as their text twins, cells named in errors, refused
// when they are no workbook. The workbooks are written at test time by python3-openpyxl (a
// general-purpose spreadsheet library, tests/xlsx/make_workbooks.py) from the invented demo
// exports, into the build folder; each demo export is then its workbook's CSV twin.
#include <chrono>
#include <filesystem>

#include "ingest/xlsx.hpp"
#include <nlohmann/json.hpp>
#include "test_support.hpp"
#include "vzero/ingest.hpp"

using namespace vzero;
using namespace vzero::test;

namespace {

namespace fs = std::filesystem;

// The workbooks, written once per run of this program.
const std::string& books() {
  static const std::string dir = [] {
    const std::string out = (fs::current_path() / "xlsx-workbooks").string();
    const std::string cmd = std::string("'") + VZERO_PYTHON + "' '" + source("tests/xlsx/make_workbooks.py") + "' '" +
                            std::string(VZERO_SOURCE_DIR) + "' '" + out + "'";
    // python3-openpyxl is a test dependency (.ci/packages.txt).
    INFO("could not write the workbooks: " << cmd);
    REQUIRE(std::system(cmd.c_str()) == 0);
    return out;
  }();
  return dir;
}

std::string book(const std::string& name) { return books() + "/" + name; }
std::string demo(const std::string& name) { return source("demo-data/" + name); }

// rates.csv of `vzero rates FILE` on the demo plate map, with FILE's path in the source column
// written as `shown` (the one column that names the input file).
std::string rates_of(const std::string& file, const std::string& shown, const std::string& more = "") {
  TempDir dir;
  const auto r = run_vzero("rates '" + file + "' --layout '" + demo("hydrolase_map.csv") + "' --method '" +
                               demo("esterase_method.toml") + "' -q -o rates.csv " + more,
                           dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  std::string text = slurp(dir / "rates.csv");
  for (std::size_t at; (at = text.find(file)) != std::string::npos;) text.replace(at, file.size(), shown);
  return text;
}

std::size_t lines(const std::string& s) { return static_cast<std::size_t>(std::count(s.begin(), s.end(), '\n')); }

}  // namespace

TEST_CASE("a workbook and its CSV twin give byte-identical rates.csv: wide, grid and long shapes") {
  // The twin is the demo export the workbook was written from (make_workbooks.py).
  // wide_stored.xlsx holds the same parts uncompressed (zip method 0).
  for (const auto& [xlsx, twin] :
       {std::pair{"wide.xlsx", "hydrolase_wide.csv"}, std::pair{"grid.xlsx", "hydrolase_grid.txt"},
        std::pair{"long.xlsx", "hydrolase_long.csv"}, std::pair{"wide_stored.xlsx", "hydrolase_wide.csv"}}) {
    CAPTURE(xlsx);
    const std::string from_book = rates_of(book(xlsx), "EXPORT");
    const std::string from_text = rates_of(demo(twin), "EXPORT");
    // A header and a row per well of the demo's 96-well plate (demo-data/README.md).
    CHECK(lines(from_text) == 97);
    CHECK(from_book == from_text);
  }
}

TEST_CASE("times formatted h:mm:ss are day fractions read back as whole seconds") {
  // openpyxl stores 0:00:10 as 10/86400 of a day; the readers must see 10 s exactly, so the
  // rates equal those of the CSV with the same clock text, and of the demo's plain seconds.
  const std::string from_book = rates_of(book("wide_clock.xlsx"), "EXPORT");
  CHECK(from_book == rates_of(book("wide_clock.csv"), "EXPORT"));
  CHECK(from_book == rates_of(demo("hydrolase_wide.csv"), "EXPORT"));
  const auto r = run_vzero("inspect '" + book("wide_clock.xlsx") + "'");
  INFO(r.describe());
  REQUIRE(r.status == 0);
  // The demo reads every 10 s for 10 min (demo-data/README.md).
  CHECK(r.out.find("  reads   61, from 0 s to 600 s (median step 10 s)\n") != std::string::npos);
  CHECK(r.out.find("\nsheet     Sheet\n") != std::string::npos);  // openpyxl's name for a new sheet
}

TEST_CASE("cell errors (#N/A, #DIV/0!) are missing values") {
  const auto r = run_vzero("inspect '" + book("wide_errors.xlsx") + "'");
  INFO(r.describe());
  REQUIRE(r.status == 0);
  // make_workbooks.py put #N/A in A3 and #DIV/0! in B5, one read each.
  CHECK(r.out.find("  missing  2 in A3 (1), B5 (1)\n") != std::string::npos);
  // As in the demo export (A12 is the 10x-enzyme well that runs past the detector).
  CHECK(r.out.find("  overflow 39 in A12 (39)\n") != std::string::npos);
}

TEST_CASE("rich text runs are joined and a phonetic guide left out") {
  CHECK(rates_of(book("wide_rich.xlsx"), "EXPORT") == rates_of(demo("hydrolase_wide.csv"), "EXPORT"));
}

TEST_CASE("--sheet chooses the sheet; a name not in the workbook lists the sheets") {
  CHECK(rates_of(book("two_sheets.xlsx"), "EXPORT", "--sheet Plate") == rates_of(demo("hydrolase_wide.csv"), "EXPORT"));
  {
    // datapackage.json records the sheet read with the workbook's path and sha256.
    TempDir dir;
    const auto r = run_vzero("rates '" + book("two_sheets.xlsx") + "' --sheet Plate --layout '" +
                                 demo("hydrolase_map.csv") + "' -q -o rates.csv",
                             dir.path.string());
    REQUIRE(r.status == 0);
    const auto pkg = nlohmann::json::parse(slurp(dir / "datapackage.json"));
    int exports = 0;
    for (const auto& in : pkg["vzero"]["inputs"])
      if (in["kind"] == "export") {
        ++exports;
        CHECK(in["shape"] == "wide");
        CHECK(in["sheet"] == "Plate");
        CHECK(in["path"].get<std::string>().find("two_sheets.xlsx") != std::string::npos);
      }
    CHECK(exports == 1);
  }
  const auto wrong = run_vzero("inspect '" + book("two_sheets.xlsx") + "' --sheet plate");
  CHECK(wrong.status == 1);
  CHECK(wrong.err == book("two_sheets.xlsx") +
                         ": expected a sheet named \"plate\", found the sheets \"Notes\", \"Plate\"\n"
                         "  possible fix: pass one of these names with --sheet (names are case-sensitive)\n");
  // The first sheet holds a note, no reads: the error names that sheet.
  const auto first = run_vzero("inspect '" + book("two_sheets.xlsx") + "'");
  CHECK(first.status == 1);
  CHECK(first.err.find(book("two_sheets.xlsx") + "[Notes]: no built-in profile reads this file") != std::string::npos);
  // --sheet for a text export is refused, not ignored.
  const auto text = run_vzero("inspect '" + demo("hydrolase_wide.csv") + "' --sheet Plate");
  CHECK(text.status == 1);
  CHECK(text.err.find("expected a spreadsheet workbook (.xlsx) for --sheet \"Plate\", found a text export") !=
        std::string::npos);
}

TEST_CASE("an error in a cell names the cell, file.xlsx[Sheet]!B12") {
  // make_workbooks.py wrote "n.d." for well A3 (column E) at the fourth read (row 11).
  const auto r = run_vzero("inspect '" + book("wide_bad_value.xlsx") + "'");
  INFO(r.describe());
  CHECK(r.status == 1);
  CHECK(r.err.find(book("wide_bad_value.xlsx") + "[Sheet1]!E11: ") != std::string::npos);
  CHECK(r.err.find("\"n.d.\"") != std::string::npos);
}

TEST_CASE("a file that is no workbook is refused with what it is") {
  TempDir dir;
  spit(dir / "text.xlsx", "Time [s],A1\n0,0.1\n");
  const std::string whole = slurp(book("wide.xlsx"));
  spit(dir / "cut.xlsx", whole.substr(0, whole.size() / 2));
  // An encrypted workbook is an OLE compound file (MS-OFFCRYPTO 2.3.4), magic D0 CF 11 E0 A1 B1 1A E1.
  spit(dir / "locked.xlsx", std::string("\xD0\xCF\x11\xE0\xA1\xB1\x1A\xE1", 8) + std::string(504, '\0'));
  const std::string fix =
      "\n  possible fix: open the file in its spreadsheet program and save it again as .xlsx, or export the sheet as "
      "CSV and pass that\n";
  auto r = run_vzero("inspect text.xlsx", dir.path.string());
  CHECK(r.status == 1);
  CHECK(r.err ==
        "text.xlsx: expected a spreadsheet workbook (.xlsx, Office Open XML), found a file "
        "that is not a readable zip archive (Not a zip archive)" +
            fix);
  r = run_vzero("inspect cut.xlsx", dir.path.string());
  CHECK(r.status == 1);
  // A zip archive cut short has lost its central directory (at its end).
  CHECK(r.err ==
        "cut.xlsx: expected a spreadsheet workbook (.xlsx, Office Open XML), found a file that is not a "
        "readable zip archive (Not a zip archive)" +
            fix);
  r = run_vzero("inspect locked.xlsx", dir.path.string());
  CHECK(r.status == 1);
  CHECK(r.err ==
        "locked.xlsx: expected a spreadsheet workbook (.xlsx), found an encrypted "
        "(password-protected) workbook or an old binary .xls workbook\n  possible fix: remove the password "
        "in the spreadsheet program and save the workbook again as .xlsx, or export the sheet as CSV\n");
}

TEST_CASE("number formats: which hold times, date-times and dates") {
  using detail::xlsx::kind_of_format;
  using K = detail::xlsx::NumberKind;
  // Built-in ids, ECMA-376 Part 1, 18.8.30: 14 m/d/yyyy, 18-21 times, 22 date and time,
  // 45 mm:ss, 46 [h]:mm:ss, 47 mm:ss.0; 0 General, 2 0.00.
  CHECK(kind_of_format(14, "") == K::date);
  for (int id : {18, 19, 20, 21, 45, 46, 47}) CHECK(kind_of_format(id, "") == K::time);
  CHECK(kind_of_format(22, "") == K::date_time);
  CHECK(kind_of_format(0, "") == K::number);
  CHECK(kind_of_format(2, "") == K::number);
  // Custom codes (ECMA-376 Part 1, 18.8.31): quoted text, escapes, colours and locales are
  // not format letters; [h] is an elapsed time; m alone is a month.
  CHECK(kind_of_format(164, "h:mm:ss") == K::time);
  CHECK(kind_of_format(164, "[h]:mm:ss.000") == K::time);
  CHECK(kind_of_format(164, "[$-409]h:mm AM/PM") == K::time);
  CHECK(kind_of_format(164, "yyyy-mm-dd h:mm:ss") == K::date_time);
  CHECK(kind_of_format(164, "d-mmm-yy") == K::date);
  CHECK(kind_of_format(164, "mmm") == K::date);
  CHECK(kind_of_format(164, "0.0 \"min\"") == K::number);
  CHECK(kind_of_format(164, "0.00\\h") == K::number);
  CHECK(kind_of_format(164, "[Red]0.00;[Blue]-0.00") == K::number);
  CHECK(kind_of_format(164, "0.00E+00") == K::number);
}

TEST_CASE("cells of each kind become the text the readers take") {
  // ECMA-376 Part 1, 18.17.4.1: serial day n is n days after 1899-12-30 (the 1900 date
  // system, n >= 61); std::chrono's calendar gives the days to 2026-11-30.
  using namespace std::chrono;
  const long long days = (sys_days{2026y / November / 30} - sys_days{1899y / December / 30}).count();
  const std::string hours = std::to_string(days * 24 + 10);  // 2026-11-30 10:15 as hours:minutes
  // Row 1: a date, a date-time, 0:00:20.5, TRUE, 1e-05, "a,b", say "hi", #N/A, 0.1; row 3
  // holds only B3 (make_workbooks.py).
  CHECK(detail::read_workbook(book("kinds.xlsx"), "", {}).text ==
        "2026-11-30," + hours + ":15:00,0:00:20.5,TRUE,1e-05,\"a,b\",\"say \"\"hi\"\"\",,0.1\n\n,after a gap\n");
  // Written for a profile with decimal commas: ';' between the cells.
  CHECK(detail::read_workbook(book("kinds.xlsx"), "", {';', ','}).text ==
        "2026-11-30;" + hours + ":15:00;0:00:20,5;TRUE;1e-05;a,b;\"say \"\"hi\"\"\";;0,1\n\n;after a gap\n");
}
