// `vzero merge`: the outputs of several `vzero rates` runs over parts of one campaign (one job
// per machine, core or Slurm array task) combined into the set one run over all their exports
// would have written, byte for byte: rates.csv and traces (rows of each run in turn), the
// replicate summary (recomputed from the merged rates: groups pool across runs as they pool
// across files), and datapackage.json (every export's provenance in the merged order, the
// runs' shared plate map, method, options and schema, warnings recomputed over all wells).
//
// The merged order of exports is the order of the runs as given, each run's exports in its
// own order: shards cut as consecutive pieces of one file list and given in piece order
// merge to that list's order. A shard's --files-from list is not an input of the merged set
// (each export it named is recorded with its sha256): the set equals one run given the
// exports by name. No report is merged: `vzero report OUT_FOLDER` draws it from the set.
//
// Refused (InputError naming the run's datapackage.json, the field and the fix): a folder
// without a vzero rates datapackage.json; a run whose tables are missing or not the bytes
// its datapackage.json records (an unfinished or edited run); options, tool version, plate
// map or method (path and sha256), map columns or written tables that differ from the first
// run's; an export (path or sha256) in two runs; rates.csv rows that do not follow the
// run's exports; warnings that do not follow from the run's rates.
//
// **Example**:
//   vzero::MergedSet m = vzero::merge_runs({"part1", "part2"}, "all");
//   // all/rates.csv, all/datapackage.json, ... as one run over both parts' exports
#pragma once

#include <cstddef>
#include <string>
#include <vector>

namespace vzero {

struct MergedSet {
  std::vector<std::string> files;     // published: each table in datapackage.json's order, then datapackage.json
  std::size_t exports = 0;            // exports in the merged set
  std::size_t wells = 0;              // rows of the merged rates.csv
  std::vector<std::string> warnings;  // as datapackage.json records them (for the console)
};

// Reads every run folder, checks they can merge, writes the merged set into `output_dir`
// (created when missing) and publishes it as `vzero rates` does: every file is written in full
// to a temporary file first, then all are put in place, datapackage.json last.
MergedSet merge_runs(const std::vector<std::string>& run_dirs, const std::string& output_dir);

}  // namespace vzero
