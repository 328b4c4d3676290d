// How each column of a plate map is read: which one is the substrate, the match values, a
// standard's concentration, with the unit its header names (include/vzero/plate_map.hpp).
#pragma once

#include <string>
#include <vector>

#include "vzero/plate_map.hpp"

namespace vzero::detail {

enum class ColumnKind { well, role, substrate, standard_conc, match, other };

struct ColumnPlan {
  std::vector<ColumnKind> kind;  // per column, in file order
  std::vector<int> decades;      // per column: value as written × 10^decades = value in the run's unit
  std::vector<ColumnUse> uses;
  std::vector<std::string> warnings;
};

// Throws InputError at file:header_line when a column named in `options` is missing or
// two columns would be read as the same thing.
ColumnPlan plan_map_columns(const std::string& file, int header_line, const std::vector<std::string>& columns,
                            const MapColumnOptions& options);

// `value` × 10^decades, exact for decimal-looking values (divides for negative decades).
double scale_by_decades(double value, int decades);

}  // namespace vzero::detail
