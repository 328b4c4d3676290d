// Nothing lost: on simulated plates (tests/sim/plate_sim.hpp, an invented scenario with a
// known truth), written in each input shape with random overflow and missing cells, every
// well of every channel read appears exactly once in rates.csv and in the traces table, with
// either a finite v0 or a flag.
#include <fmt/format.h>

#include <map>

#include "sim/plate_sim.hpp"
#include "test_support.hpp"
#include "vzero/analysis.hpp"
#include "vzero/ingest.hpp"
#include "vzero/outputs.hpp"
#include "vzero/table.hpp"

using namespace vzero;

namespace {

std::string cell(const sim::Plate& p, std::size_t w, std::size_t r) {
  if (p.status[w][r] == ReadStatus::overflow) return "OVER";
  if (p.status[w][r] != ReadStatus::ok) return "";
  return format_number(p.signal[w][r]);
}

std::string wide_text(const sim::Plate& p) {
  std::string s = "Time [s]";
  for (int w = 0; w < p.rows * p.columns; ++w) s += "," + well_name(WellId{w / p.columns, w % p.columns});
  s += "\n";
  for (std::size_t r = 0; r < p.time_s.size(); ++r) {
    s += format_number(p.time_s[r]);
    for (std::size_t w = 0; w < p.signal.size(); ++w) s += "," + cell(p, w, r);
    s += "\n";
  }
  return s;
}

std::string long_text(const sim::Plate& p) {
  std::string s = "well,time_s,value\n";
  for (std::size_t w = 0; w < p.signal.size(); ++w)
    for (std::size_t r = 0; r < p.time_s.size(); ++r)
      s += well_name(WellId{static_cast<int>(w) / p.columns, static_cast<int>(w) % p.columns}) + "," +
           format_number(p.time_s[r]) + "," + cell(p, w, r) + "\n";
  return s;
}

std::string grid_text(const sim::Plate& p) {
  std::string s;
  for (std::size_t r = 0; r < p.time_s.size(); ++r) {
    s += fmt::format("Read {} at {}\n", r + 1, format_number(p.time_s[r]));
    for (int c = 0; c < p.columns; ++c) s += "\t" + std::to_string(c + 1);
    s += "\n";
    for (int row = 0; row < p.rows; ++row) {
      s += row_label(row);
      for (int c = 0; c < p.columns; ++c) s += "\t" + cell(p, static_cast<std::size_t>(row * p.columns + c), r);
      s += "\n";
    }
    s += "\n";
  }
  return s;
}

}  // namespace

TEST_CASE("every well read comes out exactly once, with a rate or a flag") {
  int cases = 0, wells_checked = 0;
  for (std::uint64_t seed = 1; seed <= 12; ++seed) {
    sim::PlateSpec spec;
    sim::Plate plate = sim::simulate_plate(spec, 7000 + seed);
    // Knock out some cells as missing (deterministic), on top of the simulator's overflow.
    for (std::size_t w = 0; w < plate.signal.size(); ++w)
      for (std::size_t r = 0; r < plate.time_s.size(); ++r)
        if ((w * 31 + r * 17 + seed) % 97 == 0) plate.status[w][r] = ReadStatus::missing;
    // A map naming every well; a third of the samples in wells without a substrate value.
    std::string map_text = "well,role,substrate,replicate\n";
    for (std::size_t w = 0; w < plate.truth.size(); ++w) {
      const auto& t = plate.truth[w];
      map_text += well_name(WellId{static_cast<int>(w) / plate.columns, static_cast<int>(w) % plate.columns}) +
                  (t.role == sim::Role::blank ? ",blank," : ",sample,") +
                  (w % 3 == 0 ? std::string() : format_number(t.s0_uM)) + "," + std::to_string(w % 2) + "\n";
    }
    PlateMap map = parse_plate_map("map.csv", map_text);
    const std::vector<std::pair<std::string, std::string>> shapes = {
        {"wide-generic", wide_text(plate)}, {"long-generic", long_text(plate)}, {"grid-generic", grid_text(plate)}};
    for (const auto& [profile, text] : shapes) {
      CAPTURE(seed);
      CAPTURE(profile);
      Run run = read_run_text("sim.txt", text, load_profile(profile));
      check_plate_map(map, run);
      AnalysisOptions o;
      o.convert.mode = ConvertMode::beer_lambert;
      o.convert.epsilon_per_m_cm = plate.signal_per_uM * 1e6;  // 1 cm path: AU per M
      o.convert.path_cm = 1;
      o.rates.signal_ceiling = spec.linear_limit;
      o.threads = static_cast<int>(seed % 2) + 1;
      RunAnalysis a = analyse_run(run, map, o);
      Table rates = parse_table("rates.csv", rates_csv({a}, map.columns, false));
      Table traces = parse_table("traces.csv", traces_csv({a}));
      std::map<std::string, int> in_rates, in_traces;
      const int wc = rates.column("well"), v0 = rates.column("v0"), fl = rates.column("flags");
      for (std::size_t r = 0; r < rates.rows.size(); ++r) {
        ++in_rates[rates.rows[r][static_cast<std::size_t>(wc)]];
        bool has_rate = rates.number(r, v0).has_value();
        bool has_flag = !rates.rows[r][static_cast<std::size_t>(fl)].empty();
        CHECK((has_rate || has_flag));
      }
      for (const auto& row : traces.rows) ++in_traces[row[static_cast<std::size_t>(traces.column("well"))]];
      const int n_wells = plate.rows * plate.columns;
      CHECK(static_cast<int>(in_rates.size()) == n_wells);
      CHECK(static_cast<int>(in_traces.size()) == n_wells);
      for (const auto& [w, n] : in_rates) CHECK(n == 1);
      for (const auto& [w, n] : in_traces) CHECK(n == static_cast<int>(plate.time_s.size()));
      wells_checked += n_wells;
      ++cases;
    }
  }
  MESSAGE("nothing-lost property: " << cases << " plate/shape cases, " << wells_checked << " wells");
  CHECK(cases == 36);
}
