// The rules of the EnzymeML 2.0 standard file (/work/shared/standards/enzymeml-v2.md, the
// field list of the published specification) as checks on a parsed document; each message
// names the section of the standard it comes from. Used by enzymeml_test and enzymeml_fit_test.
#pragma once

#include <nlohmann/json.hpp>

#include <set>
#include <string>
#include <vector>

namespace vzero::test {

using nlohmann::json;

inline const std::set<std::string> k_data_types{"absorbance",   "concentration", "conversion", "peakarea", "transmittance",
                                         "fluorescence", "amount",        "yield",      "turnover"};
inline const std::set<std::string> k_kinds{"mole",   "litre",         "second", "gram",  "kelvin", "celsius",
                                    "metre",  "dimensionless", "katal",  "ampere", "candela"};

inline void need(std::vector<std::string>& out, const json& j, std::initializer_list<const char*> fields,
          const std::string& section) {
  for (const char* f : fields)
    if (!j.is_object() || !j.contains(f)) out.push_back(section + ": `" + f + "` is required");
}

// "UnitDefinition": id, name, base_units of { kind, exponent } with an SBML base kind.
inline void check_unit(std::vector<std::string>& out, const json& u, const std::string& where) {
  need(out, u, {"id", "name", "base_units"}, "UnitDefinition (" + where + ")");
  if (!u.is_object() || !u.contains("base_units")) return;
  for (const auto& b : u["base_units"]) {
    need(out, b, {"kind", "exponent"}, "UnitDefinition base_units (" + where + ")");
    if (b.contains("kind") && !k_kinds.count(b["kind"].get<std::string>()))
      out.push_back("UnitDefinition: kind " + b["kind"].dump() + " is not an SI/SBML base kind (" + where + ")");
    if (b.contains("exponent") && !b["exponent"].is_number_integer())
      out.push_back("UnitDefinition: exponent must be an integer (" + where + ")");
  }
}

// "measurements" / "species_data": species_id required and known; `initial` equals the
// first value of `data`; data and time as long as each other; data_type from the list.
inline void check_species_data(std::vector<std::string>& out, const json& s, const std::set<std::string>& species) {
  need(out, s, {"species_id"}, "measurements.species_data");
  if (!species.count(s.value("species_id", ""))) out.push_back("species_data: unknown species " + s.dump());
  if (s.contains("data")) {
    if (!s.contains("initial") || s["data"].empty() || s["initial"] != s["data"][0])
      out.push_back("species_data: `initial` must equal the first value of `data`");
    if (!s.contains("time") || s["time"].size() != s["data"].size())
      out.push_back("species_data: `time` and `data` differ in length");
    check_unit(out, s.value("time_unit", json()), "time_unit");
  }
  if (s.contains("data_type") && !k_data_types.count(s["data_type"].get<std::string>()))
    out.push_back("species_data: data_type " + s["data_type"].dump() + " is not one of the standard's");
  if (s.contains("data_unit")) check_unit(out, s["data_unit"], "data_unit");
}

// Every rule of the standard file this export touches, one message per violation.
inline std::vector<std::string> standard_problems(const json& doc) {
  std::vector<std::string> out;
  need(out, doc, {"name", "version", "creators", "vessels"}, "Root object");  // Root object: required
  const std::string version = doc.value("version", "");
  if (version.size() < 3 || version.find('.') == std::string::npos ||
      version.find_first_not_of("0123456789.") != std::string::npos)
    out.push_back("Root object: `version` must be digits.digits");
  for (const auto& c : doc.value("creators", json::array())) need(out, c, {"given_name", "family_name", "mail"}, "creators");
  for (const auto& v : doc.value("vessels", json::array())) {
    need(out, v, {"id", "name", "volume", "unit", "constant"}, "vessels");
    if (v.contains("volume") && !v["volume"].is_number()) out.push_back("vessels: volume must be a number");
    if (v.contains("unit")) check_unit(out, v["unit"], "vessel unit");
  }
  std::set<std::string> species;
  for (const auto& p : doc.value("proteins", json::array())) {
    need(out, p, {"id", "name", "constant"}, "proteins");
    species.insert(p.value("id", ""));
  }
  for (const auto& m : doc.value("small_molecules", json::array())) {
    need(out, m, {"id", "name", "constant"}, "small_molecules");
    species.insert(m.value("id", ""));
  }
  for (const auto& r : doc.value("reactions", json::array())) {
    need(out, r, {"id", "name", "reversible"}, "reactions");
    for (const char* side : {"reactants", "products"})
      for (const auto& e : r.value(side, json::array())) need(out, e, {"species_id", "stoichiometry"}, "reactions");
    for (const auto& e : r.value("modifiers", json::array())) need(out, e, {"species_id", "role"}, "reactions");
  }
  for (const auto& m : doc.value("measurements", json::array())) {
    need(out, m, {"id", "name"}, "measurements");
    if (m.contains("ph") && (m["ph"] < 0 || m["ph"] > 14)) out.push_back("measurements: ph outside 0–14");
    if (m.contains("temperature") != m.contains("temperature_unit"))
      out.push_back("measurements: temperature without its unit");
    for (const auto& s : m.value("species_data", json::array())) check_species_data(out, s, species);
  }
  for (const auto& p : doc.value("parameters", json::array())) {
    need(out, p, {"id", "name", "symbol"}, "parameters");
    if (p.contains("unit")) check_unit(out, p["unit"], "parameter unit");
  }
  return out;
}

inline std::string joined(const std::vector<std::string>& v) {
  std::string s;
  for (const auto& x : v) s += x + "\n";
  return s;
}

}  // namespace vzero::test
