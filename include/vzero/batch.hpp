// Many exports through the pipeline at once: each file is read (profile given or detected),
// checked against the plate map, analysed and formatted on one thread of a fixed pool, so
// that a batch of plates uses every core and holds about one plate per thread, not the whole
// batch. Results come back in the order of the files, whatever the thread count; with one
// file its wells are spread over the threads instead.
//
// Errors: the file that fails first in the list decides (its InputError or UsageError is
// rethrown once the pool has stopped); files after it are not started.
//
// **Example**:
//   vzero::BatchOptions opt;                     // detect each file's profile, all cores
//   opt.map_columns = map.columns;
//   auto files = vzero::analyse_files({"p1.csv", "p2.csv"}, map, opt);
//   for (const auto& f : files) out += f.rates_rows;   // rates.csv without its header
#pragma once

#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "vzero/analysis.hpp"
#include "vzero/ingest.hpp"
#include "vzero/plate_map.hpp"

namespace vzero {

struct BatchOptions {
  std::string profile;                   // built-in name or .toml path for every file; "" = detect per file
  std::string sheet;                     // sheet of every .xlsx workbook; "" = its first sheet
  std::string time_unit;                 // --time-unit: "s", "min" or "h"; "" = as the header or profile says
  AnalysisOptions analysis;              // analysis.threads is the pool size (0 = all cores)
  std::vector<std::string> map_columns;  // plate-map columns, for the rates rows
  bool with_activity = false;            // rates rows with activity_U / activity_nkat
  bool with_specific = false;            // rates rows with specific_activity_U_per_mg
  ScreenColumns screen;                  // rates rows with activity_pct, inhibition_pct, hit
  // Also format the traces rows: in the pool, for a file of up to k_pool_trace_rows rows;
  // a larger file leaves them to `ready` (BatchFile::traces_from_analysis), which streams
  // them from its analysis, so that no file's whole traces text is ever held.
  bool trace_rows = false;
  // Keep every run's reads and matrices (a report draws them). Otherwise each file keeps
  // only what rates.csv, the summary and datapackage.json need once its rows are written.
  bool keep_data = false;
  // Keep each file's reads and matrices until `ready` has seen it (it draws a report from
  // them), then drop them unless keep_data.
  bool keep_data_until_ready = false;
};

// Traces rows a file may have for the pool to format them (about 100 bytes each).
inline constexpr long long k_pool_trace_rows = 1 << 18;

struct BatchFile;

struct BatchFile {
  std::string path;
  ProfileChoice choice;
  std::unique_ptr<Run> run;  // stays at one address: the analysis points into it
  RunAnalysis analysis;
  std::string rates_rows;  // rates.csv rows of this file (no header)
  std::string trace_rows;  // traces rows (no header), when asked and the file is small
  // Traces asked of a file above k_pool_trace_rows with a `ready` callback: trace_rows is
  // empty and the reads are kept for `ready` to write them (traces_csv_pieces).
  bool traces_from_analysis = false;
};

struct BatchProgress {
  int files_done = 0;
  int files_total = 0;
  long long wells_done = 0;
  double elapsed_s = 0;
};

// `progress`, when given, is called after each file, from the worker thread that finished
// it, one call at a time. `ready`, when given, is called with each file in list order as
// soon as it and every file before it are done (same threads, same one-at-a-time rule), so
// that its rows can be written out (and moved away) while later files are analysed; it must
// not throw.
std::vector<BatchFile> analyse_files(const std::vector<std::string>& paths, const PlateMap& map,
                                     const BatchOptions& options,
                                     const std::function<void(const BatchProgress&)>& progress = {},
                                     const std::function<void(BatchFile&)>& ready = {});

}  // namespace vzero
