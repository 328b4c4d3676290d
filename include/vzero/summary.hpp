// Replicate summary: wells grouped by their plate-map columns, with mean, SD, n and CV of
// the clean v0 values (flagged wells are counted, not averaged).
//
// **Example**:
//   auto groups = vzero::summarise(analyses, map_columns, {"replicate"});
#pragma once

#include <map>
#include <string>
#include <string_view>
#include <vector>

#include "vzero/analysis.hpp"

namespace vzero {

struct SummaryGroup {
  std::string source;  // export file; "" when runs pool (the default)
  std::string channel;
  std::string role;
  std::vector<std::string> key;  // values of SummaryTable::columns
  std::string v0_unit;
  int n = 0;          // clean wells averaged
  int n_flagged = 0;  // wells in the group left out because flagged
  double v0_mean = NAN, v0_sd = NAN, v0_sem = NAN, cv_pct = NAN;
  std::string wells;  // ';'-separated, all wells of the group
};

struct SummaryTable {
  bool per_source = false;           // groups kept apart per export file (a `source` column)
  std::vector<std::string> columns;  // grouping plate-map columns, in map order
  std::vector<SummaryGroup> groups;  // in order of first appearance
};

// Groups sample, blank and standard wells of every channel by all plate-map columns except
// those in `leave_out` (compared case-insensitively; "replicate" is the usual one). Runs
// from several files pool into the same groups, unless `per_source`: then each export's
// wells form groups of their own.
SummaryTable summarise(const std::vector<RunAnalysis>& runs, const std::vector<std::string>& map_columns,
                       const std::vector<std::string>& leave_out, bool per_source = false);

// The summary built one well at a time, in table order (summarise uses it; `vzero merge` feeds
// it the rows of rates.csv): the same groups and arithmetic wherever the wells come from.
class SummaryBuilder {
 public:
  SummaryBuilder(const std::vector<std::string>& map_columns, const std::vector<std::string>& leave_out,
                 bool per_source);
  // The group of a well (found, or opened at the end): `values` are all the plate-map columns,
  // in map order; `source` counts only when per_source.
  std::size_t group(const std::string& source, const std::string& channel, std::string_view role,
                    const std::vector<std::string>& values, const std::string& v0_unit);
  // A well of `group`: averaged when clean (no flag, v0 known), else counted as flagged.
  void add(std::size_t group, std::string_view well, double v0, bool clean);
  SummaryTable finish();

 private:
  SummaryTable t_;
  std::vector<std::size_t> keep_;
  std::map<std::vector<std::string>, std::size_t> index_;
  std::vector<std::vector<double>> values_;
};

}  // namespace vzero
