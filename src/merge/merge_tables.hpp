// vzero merge, inside: one run's datapackage.json as read, and the tables' rows streamed from
// the runs into the merged files (rates.csv checked against its run's exports, summed into the
// replicate summary and the missing-substrate warning). The checks and datapackage.json are
// in src/merge/merge.cpp.
#pragma once

#include <cstddef>
#include <memory>
#include <set>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "vzero/error.hpp"
#include "vzero/summary.hpp"
#include "vzero/table.hpp"

namespace vzero::detail {

struct RunPackage {
  std::string dir;   // the run folder as given
  std::string path;  // its datapackage.json
  std::string text;  // as read
  nlohmann::ordered_json pkg;
  std::vector<std::string> exports;  // the export paths its inputs list, in order
  // The file of the table resource `name` ("" when the run wrote none).
  std::string table_path(const std::string& name) const;
};

// The place in the run's datapackage.json where `needle` first occurs after `after` (line 0
// when absent).
Where where_in(const RunPackage& run, const std::string& needle, const std::string& after = "");

// Copies the rows of `file` (a run's table) after its header line to `out`; the first run's
// header goes first (kept in first_header), any other run's must be the same text.
void append_table(const std::string& file, std::string& first_header, AtomicFile& out);

// rates.csv of each run in turn into the merged file, with what follows from its rows.
class RatesMerger {
 public:
  explicit RatesMerger(const RunPackage& first);
  ~RatesMerger();
  // Appends the run's rows; checks they come from its exports in order. Returns the run's own
  // missing-substrate warning ("" when none), recomputed from its rows.
  std::string add_run(const RunPackage& run, std::string& first_header, AtomicFile& out);
  std::string merged_warning() const;  // the same over every run's rows
  SummaryTable summary();
  std::size_t rows() const { return rows_; }

 private:
  struct Wells {
    std::set<std::string> names;
    std::string first;
  };
  struct RunState;
  void row(const TableRow& r, RunState& st);
  std::vector<std::string> map_columns_;
  std::string substrate_column_, map_source_;
  SummaryBuilder summary_;
  Wells all_;
  std::size_t rows_ = 0;
};

}  // namespace vzero::detail
