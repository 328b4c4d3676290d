// The pieces of the EnzymeML export (src/enzymeml/enzymeml.cpp): UnitDefinitions, identifiers, and
// the STRENDA facts of one well (from the plate map's columns, else the run's options).
#pragma once

#include <nlohmann/json.hpp>

#include <string>
#include <string_view>

#include "vzero/enzymeml.hpp"

namespace vzero::detail {

using Json = nlohmann::ordered_json;

// UnitDefinitions (kinds and scales as SBML's base units): a concentration "M", "mM", "uM",
// "nM" (mole·litre⁻¹, scale on mole); that per minute (second⁻¹ with multiplier 60); the
// second; microlitre; degree Celsius; a signal unit ("AU", "RFU", …) as dimensionless named
// by it, and that per minute.
Json conc_unit(const std::string& unit);
Json conc_per_min_unit(const std::string& unit);
Json second_unit();
Json microlitre_unit();
Json celsius_unit();
Json signal_unit(const std::string& unit);
Json signal_per_min_unit(const std::string& unit);

// A fit table's unit text ("uM", "uM/min", "1", "uM/min per nM", "uM/min per nM per uM")
// as a UnitDefinition; null for a unit it does not know (left out, never guessed).
Json unit_from_text(const std::string& text);

// `text` as an identifier: letters, digits and _ kept, anything else _.
std::string id_part(std::string_view text);

// A well's facts: NaN / "" when neither its map row nor the options give them.
struct WellFacts {
  double ph = NAN, temperature_c = NAN, volume_ul = NAN, enzyme_conc = NAN;
  std::string enzyme_conc_unit;  // of enzyme_conc: the header's unit, or "nM" from the option
  std::string buffer, enzyme;
};

// Which plate-map columns hold the facts (indices into PlateMap::columns, -1 = none).
struct FactColumns {
  int ph = -1, temperature_c = -1, volume_ul = -1, enzyme_conc = -1, buffer = -1, enzyme = -1;
  std::string enzyme_conc_unit;
};

FactColumns fact_columns(const PlateMap& map);

// Throws InputError at the map line of `info` for a value that is not a number, or a pH
// outside 0–14, a negative amount or a volume not above 0.
WellFacts well_facts(const PlateMap& map, const FactColumns& columns, const WellInfo* info,
                     const EnzymeMLOptions& options);

}  // namespace vzero::detail
