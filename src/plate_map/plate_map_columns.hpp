// How each column of a plate map is read: which one is the substrate, the match values, a
// standard's concentration, with the unit its header names (include/vzero/plate_map.hpp).
#pragma once

#include <string>
#include <vector>

#include "vzero/plate_map.hpp"

namespace vzero::detail {

enum class ColumnKind { well, role, substrate, standard_conc, match, compound, compound_conc, other };

struct ColumnPlan {
  std::vector<ColumnKind> kind;  // per column, in file order
  std::vector<int> decades;      // per column: value as written × 10^decades = value in the run's unit
  std::vector<ColumnUse> uses;
  std::vector<std::string> warnings;
  std::vector<std::string> unread_concentrations;  // other columns whose name says concentration
  bool match_is_substrate = false;  // --match-column names the substrate column: blanks match by substrate value
};

// Throws InputError at file:header_line when a column named in `options` is missing or
// two columns would be read as the same thing.
ColumnPlan plan_map_columns(const std::string& file, int header_line, const std::vector<std::string>& columns,
                            const MapColumnOptions& options);

// In a screen's map (control wells present) without a compound concentration column: each
// column that looks like a concentration but is read as nothing is a warning naming
// --compound-conc-column (and --substrate-column); these replace the plan's own warnings.
std::vector<std::string> screen_column_warnings(const ColumnPlan& plan, const std::string& file);

// `value` × 10^decades, exact for decimal-looking values (divides for negative decades).
double scale_by_decades(double value, int decades);

}  // namespace vzero::detail
