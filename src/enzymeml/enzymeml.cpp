#include "vzero/enzymeml.hpp"

#include <fmt/format.h>

#include <cmath>
#include <filesystem>
#include <map>
#include <set>

#include "enzymeml/enzymeml_parts.hpp"

namespace vzero {

namespace {

using detail::Json;

constexpr const char* k_substrate = "s1";
constexpr const char* k_product = "p1";    // the species whose signal rises (direction up)
constexpr const char* k_consumed = "c1";   // the species whose signal falls (direction down)

struct Doc {
  Json vessels = Json::array(), proteins = Json::array(), molecules = Json::array();
  Json measurements = Json::array(), parameters = Json::array();
  std::map<std::string, std::string> protein_ids, buffer_ids;  // name → id
  std::set<std::string> vessel_ids;
  int wells = 0, without_volume = 0, without_enzyme = 0, flagged = 0;
  int controls = 0;  // screening control wells (full-activity, no-activity): not measurements of the series
  bool up = false, down = false;
};

std::string protein_id(Doc& d, const std::string& name) {
  auto [it, added] = d.protein_ids.emplace(name, fmt::format("e{}", d.protein_ids.size() + 1));
  if (added) d.proteins.push_back({{"id", it->second}, {"name", name}, {"constant", true}});
  return it->second;
}

std::string buffer_id(Doc& d, const std::string& text) {
  auto [it, added] = d.buffer_ids.emplace(text, fmt::format("b{}", d.buffer_ids.size() + 1));
  if (added) d.molecules.push_back({{"id", it->second}, {"name", text}, {"constant", true}});
  return it->second;
}

// The mean of the channel's read temperatures (NaN when the export has none).
double mean_temperature(const Channel& ch) {
  double sum = 0;
  int n = 0;
  for (double t : ch.temperature_c)
    if (std::isfinite(t)) sum += t, ++n;
  return n ? sum / n : NAN;
}

// One time course: the reads of column `j` whose status is ok and whose value is finite.
// `value(i)` gives read i's value.
template <class Value>
Json time_course(const ChannelAnalysis& ca, int j, const char* species, const char* type, Json unit, Value value) {
  Json data = Json::array(), time = Json::array();
  for (int i = 0; i < ca.channel->reads(); ++i) {
    const double v = value(i), t = ca.channel->time_s[static_cast<std::size_t>(i)];
    if (ca.blank.status(i, j) != ReadStatus::ok || !std::isfinite(v) || !std::isfinite(t)) continue;
    data.push_back(v);
    time.push_back(t);
  }
  if (data.empty()) return Json();
  Json s;
  s["species_id"] = species;
  s["initial"] = data.front();  // the standard: initial equals the first value of data
  s["data_unit"] = std::move(unit);
  s["data"] = std::move(data);
  s["time"] = std::move(time);
  s["time_unit"] = detail::second_unit();
  s["data_type"] = type;
  s["is_simulated"] = false;
  return s;
}

// The prepared amount of a species (no time course): the map's substrate, the enzyme.
Json prepared(const std::string& species, double amount, const std::string& unit) {
  return {{"species_id", species},       {"prepared", amount},           {"initial", amount},
          {"data_unit", detail::conc_unit(unit)}, {"data_type", "concentration"}, {"is_simulated", false}};
}

struct WellPlace {
  const RunAnalysis& run;
  const ChannelAnalysis& ca;
  const RateRow& row;
  std::string export_id, vessel_id, measurement_id, label;  // label: "well A1 of plate.csv (A405)"
  double export_temperature_c;
};

// The measurement's species: substrate, enzyme, buffer, and the observed species' time
// courses (concentration when converted, then the raw signal).
Json species_data(Doc& d, const WellPlace& w, const detail::WellFacts& f, const EnzymeMLOptions& o) {
  Json list = Json::array();
  if (w.row.info && std::isfinite(w.row.info->substrate)) list.push_back(prepared(k_substrate, w.row.info->substrate, o.conc_unit));
  if (!f.enzyme.empty() || !std::isnan(f.enzyme_conc)) {
    const std::string id = protein_id(d, f.enzyme.empty() ? "enzyme (not named)" : f.enzyme);
    if (!std::isnan(f.enzyme_conc))
      list.push_back(prepared(id, f.enzyme_conc, f.enzyme_conc_unit));
    else
      list.push_back({{"species_id", id}});
  } else {
    ++d.without_enzyme;
  }
  if (!f.buffer.empty()) list.push_back({{"species_id", buffer_id(d, f.buffer)}});
  const ChannelAnalysis& ca = w.ca;
  const bool down = ca.direction_sign < 0;
  const char* observed = down ? k_consumed : k_product;
  (down ? d.down : d.up) = true;
  const int j = ca.channel->column_of(w.row.plate_index);
  if (ca.conversion.mode != ConvertMode::signal_only) {
    const double factor = ca.conversion.factor[static_cast<std::size_t>(j)];
    // The traces table's concentration (direction applied); down: the falling species itself.
    Json c = time_course(ca, j, observed, "concentration", detail::conc_unit(ca.conversion.conc_unit), [&](int i) {
      const double conc = ca.direction_sign * ca.blank.corrected(i, j) * factor;
      return down ? -conc : conc;
    });
    if (!c.is_null()) list.push_back(std::move(c));
  }
  const Quantity q = ca.channel->quantity;
  if (q == Quantity::absorbance || q == Quantity::fluorescence) {
    Json r = time_course(ca, j, observed, q == Quantity::absorbance ? "absorbance" : "fluorescence",
                         detail::signal_unit(ca.channel->unit), [&](int i) { return ca.channel->values(i, j); });
    if (!r.is_null()) list.push_back(std::move(r));
  }
  return list;
}

void add_vessel(Doc& d, const WellPlace& w, double volume_ul) {
  if (std::isnan(volume_ul)) {
    ++d.without_volume;
    return;
  }
  if (!d.vessel_ids.insert(w.vessel_id).second) return;  // a second channel of the same well
  d.vessels.push_back({{"id", w.vessel_id},
                       {"name", w.label.substr(0, w.label.rfind(" ("))},
                       {"volume", volume_ul},
                       {"unit", detail::microlitre_unit()},
                       {"constant", true}});
}

void add_well(Doc& d, const WellPlace& w, const detail::WellFacts& f, const EnzymeMLOptions& o) {
  ++d.wells;
  add_vessel(d, w, f.volume_ul);
  Json m;
  m["id"] = w.measurement_id;
  m["name"] = w.label;
  m["species_data"] = species_data(d, w, f, o);
  m["group_id"] = w.export_id;  // the export: x1, x2, … in the order given
  if (!std::isnan(f.ph)) m["ph"] = f.ph;
  const double t = std::isnan(f.temperature_c) ? w.export_temperature_c : f.temperature_c;
  if (!std::isnan(t)) {
    m["temperature"] = t;
    m["temperature_unit"] = detail::celsius_unit();
  }
  d.measurements.push_back(std::move(m));
  const RateRow& r = w.row;
  if (!r.flags.empty() || !std::isfinite(r.v0)) {
    ++d.flagged;
    return;
  }
  Json p;
  p["id"] = "v0_" + w.measurement_id;
  p["name"] = "initial rate (v0) of " + w.label;
  p["symbol"] = "v0_" + w.measurement_id;
  p["value"] = r.v0;
  p["unit"] = w.ca.conversion.mode == ConvertMode::signal_only ? detail::signal_per_min_unit(w.ca.channel->unit)
                                                                 : detail::conc_per_min_unit(w.ca.conversion.conc_unit);
  if (std::isfinite(r.v0_se)) p["stderr"] = r.v0_se;
  p["constant"] = true;
  d.parameters.push_back(std::move(p));
}

}  // namespace

namespace {

Json reaction(const Doc& d) {
  Json reactants = Json::array({{{"species_id", k_substrate}, {"stoichiometry", 1}}});
  if (d.down) reactants.push_back({{"species_id", k_consumed}, {"stoichiometry", 1}});
  Json products = Json::array();
  if (d.up) products.push_back({{"species_id", k_product}, {"stoichiometry", 1}});
  Json modifiers = Json::array();
  for (const auto& p : d.proteins) modifiers.push_back({{"species_id", p["id"]}, {"role", "biocatalyst"}});
  return {{"id", "r1"},         {"name", "the assayed reaction"}, {"reversible", false},
          {"reactants", reactants}, {"products", products},          {"modifiers", modifiers}};
}

Json small_molecules(const Doc& d) {
  Json list = Json::array({{{"id", k_substrate}, {"name", "substrate (the plate map's substrate column)"},
                            {"constant", false}}});
  if (d.up) list.push_back({{"id", k_product}, {"name", "product (the species whose signal rises)"}, {"constant", false}});
  if (d.down)
    list.push_back({{"id", k_consumed}, {"name", "the species whose signal falls (consumed)"}, {"constant", false}});
  for (const auto& b : d.molecules) list.push_back(b);
  return list;
}

// What the document leaves out and why, so that a reader never takes an absence for a value.
std::string description(const Doc& d, std::size_t exports, const EnzymeMLOptions& o) {
  std::string s = fmt::format(
      "Initial rates (v0) of {} sample well measurement{} from {} export{}, by vzero {}. Each measurement holds the "
      "blank-corrected, converted time course and the raw signal (reads that were not ok are left out); each "
      "unflagged well's v0 with its standard error is a parameter.",
      d.wells, d.wells == 1 ? "" : "s", exports, exports == 1 ? "" : "s", o.tool_version);
  if (d.controls)
    s += fmt::format(
        " {} screening control well{} (roles full-activity and no-activity) {} left out: {} the plate's "
        "reference levels, not measurements of a substrate series (their v0 are in rates.csv).",
        d.controls, d.controls == 1 ? "" : "s", d.controls == 1 ? "is" : "are", d.controls == 1 ? "it is" : "they are");
  if (d.flagged)
    s += fmt::format(" {} well{} with a flagged or missing rate ha{} no v0 parameter (rates.csv's flags say why).",
                     d.flagged, d.flagged == 1 ? "" : "s", d.flagged == 1 ? "s" : "ve");
  if (d.without_volume)
    s += fmt::format(
        " The reaction volume of {} well{} was not given, so {} no vessel (give --well-volume-ul or a plate-map "
        "column volume_ul).",
        d.without_volume, d.without_volume == 1 ? "" : "s", d.without_volume == 1 ? "it has" : "they have");
  if (d.without_enzyme)
    s += fmt::format(" The enzyme of {} well{} was not given (--enzyme, --enzyme-nm, or a plate-map column enzyme).",
                     d.without_enzyme, d.without_enzyme == 1 ? "" : "s");
  if (o.creator.empty()) s += " No creator was given (--enzymeml-creator GIVEN,FAMILY,MAIL).";
  s += " No created or modified date: vzero's outputs carry no clock time, so that a rerun gives the same bytes.";
  return s;
}

std::string export_name(const std::string& source) { return std::filesystem::path(source).filename().string(); }

}  // namespace

std::string enzymeml_json(const std::vector<RunAnalysis>& runs, const PlateMap& map, const EnzymeMLOptions& o) {
  Doc d;
  const detail::FactColumns columns = detail::fact_columns(map);
  for (std::size_t f = 0; f < runs.size(); ++f) {
    const RunAnalysis& ra = runs[f];
    const bool several = ra.channels.size() > 1;
    for (const ChannelAnalysis& ca : ra.channels) {
      const double export_t = mean_temperature(*ca.channel);
      for (const RateRow& row : ca.rows) {
        d.controls += is_control(row.role);
        if (row.role != Role::sample) continue;
        const std::string well = well_name(row.well);
        const std::string vessel = fmt::format("v{}_{}", f + 1, well);
        std::string mid = fmt::format("m{}_{}", f + 1, well);
        if (several) mid += "_" + detail::id_part(ca.channel->name);
        const WellPlace w{ra,     ca,  row, fmt::format("x{}", f + 1), vessel, mid,
                          fmt::format("well {} of {} ({})", well, export_name(ra.run->source), ca.channel->name),
                          export_t};
        add_well(d, w, detail::well_facts(map, columns, row.info, o), o);
      }
    }
  }
  Json doc;
  doc["name"] = runs.size() == 1 ? "vzero rates of " + export_name(runs.front().run->source)
                                 : fmt::format("vzero rates of {} exports", runs.size());
  doc["version"] = "2.0";
  doc["description"] = description(d, runs.size(), o);
  doc["creators"] = Json::array();
  if (o.creator.size() == 3)
    doc["creators"].push_back({{"given_name", o.creator[0]}, {"family_name", o.creator[1]}, {"mail", o.creator[2]}});
  doc["vessels"] = std::move(d.vessels);
  doc["proteins"] = d.proteins;
  doc["small_molecules"] = small_molecules(d);
  doc["reactions"] = Json::array({reaction(d)});
  doc["measurements"] = std::move(d.measurements);
  doc["parameters"] = std::move(d.parameters);
  return doc.dump(2) + "\n";
}

}  // namespace vzero
