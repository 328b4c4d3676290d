// The run as an EnzymeML 2.0 JSON document (the open exchange format for enzyme kinetics;
// field names are the standard's, see docs/outputs.md#enzymeml). One vessel per well, one
// measurement per sample well and channel with the converted time course (concentration,
// the traces table's `concentration` read by read) and the raw signal (absorbance or
// fluorescence), the map's substrate as the prepared amount, pH, temperature, buffer and
// enzyme (STRENDA fields) from map columns or options, each well's v0 with its standard
// error as a parameter, and units as UnitDefinitions.
//
// Nothing is invented: a fact not given is left out (a vessel without a volume is not
// written, and the description says which fact is missing and how to give it).
//
// **Example**:
//   vzero::EnzymeMLOptions o;
//   o.conc_unit = "uM";
//   o.ph = 7.5;
//   std::string doc = vzero::enzymeml_json(analyses, map, o);
#pragma once

#include <cmath>
#include <string>
#include <vector>

#include "vzero/analysis.hpp"
#include "vzero/plate_map.hpp"

namespace vzero {

// What the document says beyond the analyses. Per-well map columns (names of our own,
// matched without regard to case) win over these run-wide values:
//   `ph`, `temperature_c`, `buffer`, `enzyme` (the enzyme's name), `enzyme (nM)` /
//   `enzyme_nM` (its concentration; a unit M, mM, uM or nM in the header is required),
//   `volume_ul` (the reaction volume of the well, µL).
struct EnzymeMLOptions {
  std::vector<std::string> creator;  // given name, family name, mail; empty = none given
  std::string enzyme;                // the enzyme's name
  double enzyme_conc_nm = NAN;       // its concentration in the well, nM
  double ph = NAN;
  double temperature_c = NAN;  // NaN = the mean of the export's read temperatures, when it has them
  std::string buffer;
  double volume_ul = NAN;       // reaction volume per well, µL (NaN = not known)
  std::string conc_unit = "uM";  // of the map's substrate (the run's conc-unit)
  std::string tool_version;
};

// The document text (2-space JSON, a final newline). Throws InputError for a map value that
// is not a number where one is needed (pH, temperature, enzyme amount, volume) or a pH
// outside 0–14, at the map's line.
std::string enzymeml_json(const std::vector<RunAnalysis>& runs, const PlateMap& map, const EnzymeMLOptions& options);

struct TableFit;  // include/vzero/fit.hpp

// `document` (the text vzero rates --enzymeml wrote, read from `document_name`) with the
// fit added: each fitted group × model as a rateLaw equation, its estimates (and kcat,
// kcat/Km) as parameters with standard errors, starting values and units, and, when exactly
// one fit succeeded, as the reaction's kinetic_law. Throws InputError when `document` is
// not an EnzymeML 2 document with a reaction.
std::string enzymeml_with_fit(const std::string& document, const std::string& document_name, const TableFit& fit);

}  // namespace vzero
