// The output tables (include/vzero/outputs.hpp, src/outputs/output_tables.hpp, fit tables) and the one
// CSV writer (src/core/csv_write.hpp): a column is declared once, and its header name, its
// cells and its Table Schema field follow from that one entry.
#include <fmt/format.h>
#include <algorithm>
#include <nlohmann/json.hpp>

#include "core/columns.hpp"
#include "core/csv_write.hpp"
#include "core/text.hpp"
#include "outputs/output_tables.hpp"
#include "test_support.hpp"
#include "vzero/fit.hpp"
#include "vzero/ingest.hpp"
#include "vzero/outputs.hpp"
#include "vzero/summary.hpp"
#include "vzero/table.hpp"

using namespace vzero;

namespace {

// Three wells read every 30 s for 5 min (invented): A1 a blank at 0.0450, A2 rising 0.0006
// and A3 0.0012 per read, exactly linear.
std::string linear_plate() {
  std::string s = "Time [s],A1,A2,A3\n";
  for (int i = 0; i <= 10; ++i)
    s += fmt::format("{},0.0450,{},{}\n", 30 * i, format_number(0.0450 + 0.0006 * i),
                     format_number(0.0450 + 0.0012 * i));
  return s;
}

// A map with a passed-through text column whose values need quotes, and an enzyme mass.
constexpr const char* k_map =
    "well,role,substrate,enzyme_mg,note\n"
    "A1,blank,,,\"blank; buffer only\"\n"
    "A2,sample,100,0.002,\"first, with a comma\"\n"
    "A3,sample,200,0.004,\"says \"\"two\"\"\"\n";

// OLS over the first 4 reads, so the window is 0 s to 90 s for every well.
AnalysisOptions leading_ols(bool activity) {
  AnalysisOptions o;
  o.convert.mode = ConvertMode::beer_lambert;
  o.convert.epsilon_per_m_cm = 6220;
  o.convert.path_cm = 0.5;
  o.rates.window = WindowMethod::leading;
  o.rates.estimator = Estimator::ols;
  o.rates.min_points = 4;
  o.rates.tangent = TangentMode::never;
  if (activity) {
    o.well_volume_ul = 200;
    o.enzyme_mg_column = "enzyme_mg";
  }
  return o;
}

std::vector<std::string> names_of(const nlohmann::json& fields) {
  std::vector<std::string> out;
  for (const auto& f : fields) out.push_back(f["name"].get<std::string>());
  return out;
}

// The header is the schema's field names in order, and every cell is of its field's type.
void check_agrees(const std::string& name, const std::string& csv, const std::vector<FieldSpec>& fields) {
  INFO("table ", name);
  const Table t = parse_table(name, csv);
  std::vector<std::string> names;
  for (const auto& f : fields) names.push_back(f.name);
  CHECK(t.header == names);
  REQUIRE(t.header.size() == fields.size());
  REQUIRE_FALSE(t.rows.empty());
  for (std::size_t r = 0; r < t.rows.size(); ++r) {
    for (std::size_t c = 0; c < fields.size(); ++c) {
      const std::string& cell = t.rows[r][c];
      if (cell.empty() || fields[c].type == "string") continue;
      INFO("row ", r + 1, ", column ", fields[c].name, ": \"", cell, "\"");
      if (fields[c].type == "boolean") {
        CHECK((cell == "true" || cell == "false"));
        continue;
      }
      const auto v = detail::parse_number(cell);
      REQUIRE(v.has_value());
      if (fields[c].type == "integer")
        CHECK(*v == std::trunc(*v));
      else
        CHECK(fields[c].type == "number");
    }
  }
}

}  // namespace

TEST_CASE("an output column added by one entry is in the header, every row and the Table Schema, at one place") {
  const Run run = read_run_text("plate.csv", linear_plate(), load_profile("wide-generic"));
  const PlateMap map = parse_plate_map("map.csv", k_map);
  const RunAnalysis a = analyse_run(run, map, leading_ols(false));

  using namespace vzero::detail;
  std::vector<RateEntry> entries(rate_declaration().begin(), rate_declaration().end());
  const auto t_end =
      std::find_if(entries.begin(), entries.end(), [](const RateEntry& e) { return e.name == "t_end_s"; });
  REQUIRE(t_end != entries.end());
  // The one entry: the middle of the window, after t_end_s.
  entries.insert(t_end + 1, RateEntry{"t_mid_s", FieldType::number, "s", "middle of the window",
                                      [](CsvOut& o, const RateRowRef& x, std::size_t) {
                                        o.number((x.row.rate.t_start_s + x.row.rate.t_end_s) / 2);
                                      }});
  // An entry whose condition does not hold here (no well volume) is in none of the three.
  entries.push_back({.name = "activity_twice",
                     .type = FieldType::number,
                     .unit = "U",
                     .description = "twice",
                     .write = [](CsvOut& o, const RateRowRef& x, std::size_t) { o.number(2 * x.row.activity_u); },
                     .when = [](const RatesContext& c) { return c.with_activity; }});

  const auto columns = columns_for(std::span<const RateEntry>(entries), RatesContext{map.columns, false, false});
  CsvOut out;
  write_header(out, columns);
  write_rate_rows(out, columns, a);
  const Table t = parse_table("rates.csv", out.str());
  const auto package =
      nlohmann::json::parse(datapackage_json({{"rates", "rates.csv", schema_fields(columns)}}, Provenance{}, {a}));
  const auto& fields = package["resources"][0]["schema"]["fields"];

  CHECK(names_of(fields) == t.header);
  const int k = t.column("t_mid_s");
  REQUIRE(k == t.column("t_end_s") + 1);
  CHECK(t.column("activity_twice") == -1);
  const auto& f = fields[static_cast<std::size_t>(k)];
  CHECK(f["type"] == "number");
  CHECK(f["unit"] == "s");
  CHECK(f["description"] == "middle of the window");
  REQUIRE(t.rows.size() == 3);
  for (const auto& row : t.rows) {
    // Reads 0 to 3 at 30 s: the window runs from 0 s to 90 s, its middle is 45 s (worked here).
    if (row[static_cast<std::size_t>(t.column("role"))] == "sample") CHECK(row[static_cast<std::size_t>(k)] == "45");
  }
  // Everything else is what rates_csv writes, cell for cell.
  Table plain = parse_table("plain.csv", rates_csv({a}, map.columns, false));
  Table without = t;
  without.header.erase(without.header.begin() + k);
  for (auto& row : without.rows) row.erase(row.begin() + k);
  CHECK(without.header == plain.header);
  CHECK(without.rows == plain.rows);
  CHECK(t.rows[1][static_cast<std::size_t>(t.column("note"))] == "first, with a comma");
}

TEST_CASE("every table vzero writes: header and Table Schema agree, and each cell is of its field's type") {
  const Run run = read_run_text("plate.csv", linear_plate(), load_profile("wide-generic"));
  const PlateMap map = parse_plate_map("map.csv", k_map);
  for (bool activity : {false, true}) {
    const RunAnalysis a = analyse_run(run, map, leading_ols(activity));
    check_agrees("rates", rates_csv({a}, map.columns, activity, activity),
                 rate_fields(map.columns, activity, activity));
    const auto rows_only = rates_csv_rows(a, map.columns, activity, activity);
    CHECK(rates_csv({a}, map.columns, activity, activity) ==
          rates_csv({}, map.columns, activity, activity) + rows_only);
  }
  const Table with =
      parse_table("rates.csv", rates_csv({analyse_run(run, map, leading_ols(true))}, map.columns, true, true));
  CHECK(with.header.back() == "specific_activity_U_per_mg");
  CHECK(with.column("activity_nkat") == with.column("activity_U") + 1);

  const RunAnalysis a = analyse_run(run, map, leading_ols(false));
  check_agrees("traces", traces_csv({a}), trace_fields());
  const SummaryTable s = summarise({a}, map.columns, {});
  check_agrees("summary", summary_csv(s), summary_fields(s));

  FitTableOptions o;
  o.x_column = "substrate_ppm";
  o.group_columns = {"state"};
  o.enzyme_column = "enzyme_nM";
  o.models = {find_model("mm"), find_model("hill")};
  const TableFit fit = fit_table(read_table(test::data("fit_puromycin_rates.csv")), o);
  check_agrees("fit", fit_csv(fit), fit_fields(fit));
  check_agrees("fit diagnostics", fit_diagnostics_csv(fit), fit_diagnostics_fields(fit));
  // Units the fitted table gives reach the diagnostics schema (fit_puromycin_rates.csv: ppm).
  const auto diag = fit_diagnostics_fields(fit);
  CHECK(std::find_if(diag.begin(), diag.end(), [](const FieldSpec& x) { return x.name == "s"; })->unit == "ppm");
}

TEST_CASE("the CSV writer quotes by one rule (RFC 4180 section 2, plus ';' and tab) and the reader reads it back") {
  // RFC 4180 §2.6: fields holding line breaks, double quotes or commas are enclosed in double
  // quotes; §2.7: a double quote inside is written twice. vzero also quotes ';' and tab.
  const std::pair<std::string, std::string> cases[] = {
      {"plain", "plain"},
      {"a,b", "\"a,b\""},
      {"say \"hi\"", "\"say \"\"hi\"\"\""},
      {"a;b", "\"a;b\""},
      {"a\tb", "\"a\tb\""},
      {"two\nlines", "\"two\nlines\""},
      {"cr\rhere", "\"cr\rhere\""},
      {"", ""},
      {"µmol/min", "µmol/min"},
  };
  for (const auto& [text, written] : cases) {
    CHECK(csv_field(text) == written);
    // Long fields take another path (a remembered last field): the same rule.
    const std::string pad(40, 'x');
    CHECK(csv_field(pad + text) == (written == text ? pad + text : "\"" + pad + written.substr(1)));
    CHECK(csv_field(pad + text) == (written == text ? pad + text : "\"" + pad + written.substr(1)));
  }
  // A long list of wells with ';' after one without, and back: each decided on its own.
  const std::string wells(40, 'A'), listed = wells + ";B1";
  CHECK(csv_field(wells) == wells);
  CHECK(csv_field(listed) == "\"" + listed + "\"");
  CHECK(csv_field(wells) == wells);

  detail::CsvOut out;
  out.field("a,b");
  out.separator();
  out.joined({"lag", "outliers"}, ';');
  out.separator();
  out.number(0.1);
  out.separator();
  out.number(-0.0);
  out.separator();
  out.number(NAN);
  out.separator();
  out.integer(-42);
  out.end_row();
  CHECK(out.view() == "\"a,b\",\"lag;outliers\",0.1,0,,-42\n");
  const Table back = parse_table("back.csv", "h1,h2,h3,h4,h5,h6\n" + out.str());
  CHECK(back.rows[0] == std::vector<std::string>{"a,b", "lag;outliers", "0.1", "0", "", "-42"});
}

TEST_CASE("numbers are written as the shortest text that reads back to the same double") {
  // Shortest round trip (Steele & White; fmt's default): 0.1 is "0.1", not 0.1000000000000000055511.
  CHECK(format_number(0.1) == "0.1");
  CHECK(format_number(1e-6) == "1e-06");
  CHECK(format_number(6.551845646783069) == "6.551845646783069");
  CHECK(format_number(-0.0) == "0");
  CHECK(format_number(NAN).empty());
  for (double v : {1.0 / 3, 2.0 / 3 * 1e300, 5e-324, 123456789012345680.0})
    CHECK(detail::parse_number(format_number(v)) == v);
}

TEST_CASE("text a spreadsheet would run as a formula gets a leading apostrophe; numbers stay numbers") {
  // The guard the OWASP page on CSV injection describes (cells beginning with = + - @, tab or
  // CR); from memory. A plate-map value, a file or a channel name can begin so.
  CHECK(csv_field("=HYPERLINK(\"x\")") == "\"'=HYPERLINK(\"\"x\"\")\"");
  CHECK(csv_field("+cmd") == "'+cmd");
  CHECK(csv_field("-plate.csv") == "'-plate.csv");
  CHECK(csv_field("@SUM(A1)") == "'@SUM(A1)");
  CHECK(csv_field("\tx") == "\"'\tx\"");
  CHECK(csv_field("-0.5") == "-0.5");
  CHECK(csv_field("+12") == "+12");
  CHECK(csv_field("-") == "'-");
  CHECK(csv_field("a=b") == "a=b");
  // Through a whole run: a plate-map value and a channel-free export name.
  vzero::test::TempDir dir;
  vzero::test::spit((dir.path / "map.csv").string(), "well,role,note\nA1,sample,=1+2\nA2,blank,-\n");
  vzero::test::spit((dir.path / "plate.csv").string(),
                    "Time [s],A1,A2\n0,0.1,0.1\n10,0.2,0.1\n20,0.3,0.1\n30,0.4,0.1\n40,0.5,0.1\n");
  auto r = vzero::test::run_vzero("rates plate.csv --layout map.csv --signal-only -q", dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  const Table t = read_table((dir.path / "rates.csv").string());
  CHECK(t.rows.at(0).at(static_cast<std::size_t>(t.column("note"))) == "'=1+2");
}
